import { createContext, useContext, type ReactNode } from 'react';
import type { Role } from '@shared/auth/roles';

/** The signed-in person as the client needs them. Fed later from GET /api/auth/me. */
export type SessionUser = {
  email: string;
  displayName: string;
  roles: Role[];
};

/** What the session context holds: the user, or null when nobody is signed in. */
export type SessionValue = {
  user: SessionUser | null;
  /** Server features in use (from GET /api/auth/session); left out, the navigation treats them as on. */
  features?: { mailbox: boolean };
};

const SessionContext = createContext<SessionValue>({ user: null });

/**
 * Provides the signed-in user to the shell, the navigation and every screen. It only carries the
 * value it is given; whoever knows the session (the sign-in feature) renders it with `value`.
 * Nested providers are allowed (the /design page previews the shell for a sample user).
 */
export function SessionProvider({ value, children }: { value: SessionValue; children: ReactNode }) {
  return <SessionContext.Provider value={value}>{children}</SessionContext.Provider>;
}

/** The current session value ({ user: null } when no provider is above). */
export function useSession(): SessionValue {
  return useContext(SessionContext);
}

/**
 * Whether a user holds a role. Only for hiding controls: the server decides what is allowed.
 * @param user the signed-in user or null
 * @param role the role to look for
 */
export function hasRole(user: SessionUser | null, role: Role): boolean {
  return user !== null && user.roles.includes(role);
}
