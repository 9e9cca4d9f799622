import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * An array of finite numbers, checked in one plain loop: a trace's samples and times, spectrogram
 * levels. `z.array(z.number())` runs zod's per-element machinery for each of the tens of thousands
 * of numbers of a traces answer (about six times the time of this loop); the check itself is the
 * same: an array, and every element a finite number (no string, null, hole, NaN or ±Infinity).
 * The first bad element is reported with its index as the issue's path. In the OpenAPI document
 * it reads as an array of numbers.
 */
export const finiteNumberArraySchema = lazySchema(() =>
  z
    .custom<number[]>((v) => Array.isArray(v), { error: 'must be an array of numbers' })
    .superRefine((v, ctx) => {
      for (let i = 0; i < v.length; i++) {
        const x: unknown = v[i];
        if (typeof x !== 'number' || !Number.isFinite(x)) {
          const got = typeof x === 'number' ? String(x) : x === undefined ? 'nothing' : (JSON.stringify(x) ?? typeof x);
          ctx.addIssue({ code: 'custom', message: `element ${i} must be a finite number, got ${got}`, path: [i] });
          return;
        }
      }
    })
    .meta({ type: 'array', items: { type: 'number' } }),
);
