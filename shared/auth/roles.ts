import { z } from 'zod';

/**
 * The roles a Seisift user may hold (one or more). None implies another:
 * admin manages people, not data; supervisor includes every analyst right by policy, not by role.
 */
export const roles = ['operator', 'analyst', 'supervisor', 'admin'] as const;

/** One role name. */
export type Role = (typeof roles)[number];

/** zod schema for a role name. */
export const roleSchema = z.enum(roles);

/** Words shown to people for each role. */
export const roleLabels: Record<Role, string> = {
  operator: 'Station operator',
  analyst: 'Duty analyst',
  supervisor: 'Network supervisor',
  admin: 'Admin',
};
