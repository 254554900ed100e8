import { z } from 'zod';
import { roleSchema } from './roles';

/**
 * Request and response bodies of the accounts API, shared by the client forms and the server.
 * Passwords follow NIST SP 800-63B §3.1.1.2: at least 8 characters, long ones allowed, no composition rules;
 * the server also refuses a list of the most common passwords (server/auth/common-passwords.txt).
 */
export const PASSWORD_MIN = 8;
export const PASSWORD_MAX = 256;

export const emailSchema = z
  .string()
  .trim()
  .toLowerCase()
  .max(254, 'An e-mail address is at most 254 characters.')
  .pipe(z.email('Enter an e-mail address like name@example.org.'));

export const newPasswordSchema = z
  .string()
  .min(PASSWORD_MIN, `Use at least ${PASSWORD_MIN} characters.`)
  .max(PASSWORD_MAX, `Use at most ${PASSWORD_MAX} characters.`);

export const displayNameSchema = z.string().trim().min(1, 'Enter your name.').max(120, 'Use at most 120 characters.');

export const loginBodySchema = z.object({
  email: emailSchema,
  // Not the new-password rules: an old password that predates them must still be able to sign in.
  password: z.string().min(1, 'Enter your password.').max(PASSWORD_MAX),
});
export type LoginBody = z.infer<typeof loginBodySchema>;

export const forgotPasswordBodySchema = z.object({ email: emailSchema });
export type ForgotPasswordBody = z.infer<typeof forgotPasswordBodySchema>;

export const resetPasswordBodySchema = z.object({ token: z.string().min(16).max(200), password: newPasswordSchema });
export type ResetPasswordBody = z.infer<typeof resetPasswordBodySchema>;

/** For an address that already has an account only its password is needed; a new account checks newAccountSchema. */
export const acceptInvitationBodySchema = z.object({
  displayName: z.string().max(200).optional(),
  password: z.string().min(1, 'Enter a password.').max(PASSWORD_MAX),
});
export const newAccountSchema = z.object({ displayName: displayNameSchema, password: newPasswordSchema });
export type AcceptInvitationBody = z.infer<typeof acceptInvitationBodySchema>;

export const inviteBodySchema = z.object({ email: emailSchema, role: roleSchema });
export type InviteBody = z.infer<typeof inviteBodySchema>;

export const changeRoleBodySchema = z.object({ role: roleSchema });
export type ChangeRoleBody = z.infer<typeof changeRoleBodySchema>;

export const sessionUserSchema = z.object({
  id: z.string(),
  email: z.string(),
  displayName: z.string(),
});
export type SessionUser = z.infer<typeof sessionUserSchema>;

export const labMembershipSchema = z.object({
  labId: z.string(),
  labName: z.string(),
  isDemo: z.boolean(),
  role: roleSchema,
});
export type LabMembership = z.infer<typeof labMembershipSchema>;

export const meSchema = z.object({ user: sessionUserSchema, labs: z.array(labMembershipSchema) });
export type Me = z.infer<typeof meSchema>;

/** What sign-in, refresh, reset and accepting an invitation answer with; the refresh token travels in a cookie. */
export const sessionResponseSchema = meSchema.extend({
  accessToken: z.string(),
  /** ISO time the access token stops working; the client refreshes a little before. */
  accessTokenExpiresAt: z.string(),
});
export type SessionResponse = z.infer<typeof sessionResponseSchema>;

export const invitationPreviewSchema = z.object({
  labName: z.string(),
  email: z.string(),
  role: roleSchema,
  invitedBy: z.string().nullable(),
  expiresAt: z.string(),
  /** The address already has an account: accepting asks for that account's password instead of a new one. */
  existingAccount: z.boolean(),
});
export type InvitationPreview = z.infer<typeof invitationPreviewSchema>;

export const memberSchema = z.object({
  userId: z.string(),
  email: z.string(),
  displayName: z.string(),
  role: roleSchema,
  disabled: z.boolean(),
  joinedAt: z.string(),
});
export type Member = z.infer<typeof memberSchema>;

export const pendingInvitationSchema = z.object({
  id: z.string(),
  email: z.string(),
  role: roleSchema,
  invitedBy: z.string().nullable(),
  createdAt: z.string(),
  expiresAt: z.string(),
});
export type PendingInvitation = z.infer<typeof pendingInvitationSchema>;

export const auditEntrySchema = z.object({
  id: z.string(),
  at: z.string(),
  actorId: z.string().nullable(),
  actorName: z.string().nullable(),
  action: z.string(),
  entity: z.string(),
  entityId: z.string().nullable(),
  before: z.unknown(),
  after: z.unknown(),
});
export type AuditEntry = z.infer<typeof auditEntrySchema>;

/** `nextBefore`: the cursor for the next page (pass it as `?before=`), null on the last page. */
export const auditPageSchema = z.object({ entries: z.array(auditEntrySchema), nextBefore: z.string().nullable() });
export type AuditPage = z.infer<typeof auditPageSchema>;
