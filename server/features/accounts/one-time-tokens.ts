import { AppError } from '@server/errors';

/** 404 for a link token that matches nothing (mistyped or never issued). */
export const tokenUnknown = (what: string) => new AppError(404, 'token_unknown', `This ${what} link is not known; ask for a new one`);
/** 410 for a link that was already used. */
export const tokenUsed = (what: string) => new AppError(410, 'token_used', `This ${what} link has already been used; each link works once`);
/** 410 for a link past its expiry. */
export const tokenExpired = (what: string, at: Date) => new AppError(410, 'token_expired', `This ${what} link expired at ${at.toISOString()}; ask for a new one`);
/** 410 for an invitation an admin withdrew. */
export const tokenRevoked = (what: string) => new AppError(410, 'token_revoked', `This ${what} was withdrawn by an admin`);
