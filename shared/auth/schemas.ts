import { z } from 'zod';
import { lazySchema } from '../schemas/lazy-schema';
import { roleSchema } from './roles';

/**
 * Request and response shapes of the accounts API (sign-in, account, admin, audit), shared by the
 * server (parseInput) and the client forms (react-hook-form + zod).
 */

/** Shortest password accepted (characters); the server's argon2 module uses the same figure. */
export const passwordMinLength = 12;
/** Longest password accepted (characters), so hashing cost stays bounded. */
export const passwordMaxLength = 256;

/** An e-mail address, trimmed and lower-cased. */
export const emailSchema = lazySchema(() =>
  z
    .string({ error: 'must be an e-mail address' })
    .trim()
    .toLowerCase()
    .max(254, 'must be at most 254 characters')
    .pipe(z.email({ error: 'must be an e-mail address' })),
);

/** A new password: 12 to 256 characters. */
export const newPasswordSchema = lazySchema(() =>
  z
    .string({ error: 'must be text' })
    .min(passwordMinLength, `must be at least ${passwordMinLength} characters`)
    .max(passwordMaxLength, `must be at most ${passwordMaxLength} characters`),
);

/** A one-time token from an e-mail link (43 base64url characters: 32 random bytes). */
export const oneTimeTokenSchema = lazySchema(() => z.string({ error: 'is missing' }).regex(/^[A-Za-z0-9_-]{43}$/, 'is not a valid link token'));

/** A person's name as shown in the app. */
export const displayNameSchema = lazySchema(() => z.string({ error: 'must be text' }).trim().min(1, 'must not be empty').max(120, 'must be at most 120 characters'));

/** POST /api/auth/sign-in */
export const signInSchema = lazySchema(() => z.object({ email: emailSchema, password: z.string({ error: 'is missing' }).min(1, 'is missing').max(passwordMaxLength) }));
/** POST /api/auth/forgot-password */
export const forgotPasswordSchema = lazySchema(() => z.object({ email: emailSchema }));
/** POST /api/auth/reset-password/check and /api/auth/invitations/check */
export const tokenCheckSchema = lazySchema(() => z.object({ token: oneTimeTokenSchema }));
/** POST /api/auth/reset-password */
export const resetPasswordSchema = lazySchema(() => z.object({ token: oneTimeTokenSchema, password: newPasswordSchema }));
/** POST /api/auth/invitations/accept */
export const acceptInvitationSchema = lazySchema(() => z.object({ token: oneTimeTokenSchema, password: newPasswordSchema, displayName: displayNameSchema.optional() }));
/** PUT /api/account/password */
export const changePasswordSchema = lazySchema(() => z.object({ currentPassword: z.string({ error: 'is missing' }).min(1, 'is missing').max(passwordMaxLength), newPassword: newPasswordSchema }));

/** POST /api/admin/invitations */
export const createInvitationSchema = lazySchema(() =>
  z
    .object({
      email: emailSchema,
      displayName: displayNameSchema,
      roles: z.array(roleSchema).min(1, 'choose at least one role').max(4),
      stationIds: z.array(z.number().int().positive()).max(500).default([]),
    })
    .refine((v) => v.stationIds.length === 0 || v.roles.includes('operator'), { path: ['stationIds'], message: 'stations can be assigned only to an operator' })
    .refine((v) => new Set(v.roles).size === v.roles.length, { path: ['roles'], message: 'each role only once' }),
);
/** PUT /api/admin/users/:id/roles */
export const setRolesSchema = lazySchema(() => z.object({ roles: z.array(roleSchema).max(4).refine((r) => new Set(r).size === r.length, 'each role only once') }));
/** PUT /api/admin/users/:id/stations */
export const setStationsSchema = lazySchema(() => z.object({ stationIds: z.array(z.number().int().positive()).max(500) }));

/** GET /api/audit query. */
export const auditQuerySchema = lazySchema(() =>
  z.object({
    limit: z.coerce.number().int().min(1).max(200).default(50),
    offset: z.coerce.number().int().min(0).max(1_000_000).default(0),
    /** Exact action or a prefix ending in "." (e.g. `auth.`). */
    action: z.string().trim().max(64).regex(/^[a-z_.]*$/, 'letters, "_" and "." only').optional(),
    /** Part of the actor's e-mail or label. */
    actor: z.string().trim().max(254).optional(),
    targetType: z.string().trim().max(40).optional(),
    targetId: z.string().trim().max(255).optional(),
    from: z.iso.datetime({ offset: true }).optional(),
    to: z.iso.datetime({ offset: true }).optional(),
  }),
);

/** The signed-in user as GET /api/auth/me returns it. */
export const meSchema = lazySchema(() =>
  z.object({
    user: z.object({ id: z.string(), email: z.string(), displayName: z.string(), roles: z.array(roleSchema), stationIds: z.array(z.number()) }),
    /** Whether the local fake mail server (and so the mailbox page) is in use. */
    mailbox: z.boolean(),
  }),
);
/** Body of GET /api/auth/me. */
export type Me = z.infer<typeof meSchema>;

/** One session as GET /api/account/sessions lists it. */
export const sessionRowSchema = lazySchema(() =>
  z.object({
    id: z.string(),
    current: z.boolean(),
    createdAt: z.string(),
    expiresAt: z.string(),
    ipAddress: z.string().nullable(),
    userAgent: z.string().nullable(),
  }),
);
/** One session row. */
export type SessionRow = z.infer<typeof sessionRowSchema>;

/** One user as GET /api/admin/users lists them. */
export const adminUserSchema = lazySchema(() =>
  z.object({
    id: z.string(),
    email: z.string(),
    displayName: z.string(),
    roles: z.array(roleSchema),
    stationIds: z.array(z.number()),
    active: z.boolean(),
    hasPassword: z.boolean(),
    sessions: z.number(),
    createdAt: z.string(),
  }),
);
/** One admin user row. */
export type AdminUser = z.infer<typeof adminUserSchema>;

/** One invitation as GET /api/admin/invitations lists it. */
export const invitationRowSchema = lazySchema(() =>
  z.object({
    id: z.number(),
    email: z.string(),
    displayName: z.string(),
    roles: z.array(roleSchema),
    stationIds: z.array(z.number()),
    status: z.enum(['pending', 'accepted', 'expired', 'revoked']),
    invitedBy: z.string().nullable(),
    createdAt: z.string(),
    expiresAt: z.string(),
  }),
);
/** One invitation row. */
export type InvitationRow = z.infer<typeof invitationRowSchema>;

/** A station as the assignment controls need it. */
export const stationOptionSchema = lazySchema(() => z.object({ id: z.number(), network: z.string(), code: z.string(), name: z.string() }));
/** One station option. */
export type StationOption = z.infer<typeof stationOptionSchema>;

/** One audit row as GET /api/audit returns it. */
export const auditRowSchema = lazySchema(() =>
  z.object({
    id: z.number(),
    createdAt: z.string(),
    actorUserId: z.string().nullable(),
    actorLabel: z.string().nullable(),
    action: z.string(),
    targetType: z.string().nullable(),
    targetId: z.string().nullable(),
    details: z.unknown(),
    ipAddress: z.string().nullable(),
  }),
);
/** One audit row. */
export type AuditRow = z.infer<typeof auditRowSchema>;

/** One received message in the local mailbox list. */
export const mailSummarySchema = lazySchema(() =>
  z.object({
    id: z.number(),
    receivedAt: z.string(),
    from: z.string().nullable(),
    to: z.array(z.string()),
    subject: z.string(),
  }),
);
/** One mailbox list row. */
export type MailSummary = z.infer<typeof mailSummarySchema>;

/** One received message in full. */
export const mailMessageSchema = lazySchema(() => mailSummarySchema.extend({ text: z.string().nullable(), html: z.string().nullable() }));
/** One received message. */
export type MailMessage = z.infer<typeof mailMessageSchema>;
