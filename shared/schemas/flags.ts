import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * The three triage flags a scored window can carry, exactly as the engine writes them and the
 * client shows them. The order is from most to least likely to be a real source.
 */
export const flags = ['likely event', 'needs eyes', 'likely noise'] as const;

/** One triage flag. */
export type Flag = (typeof flags)[number];

/** zod schema for a triage flag. */
export const flagSchema = lazySchema(() => z.enum(flags));
