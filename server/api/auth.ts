import type { Request, Response } from 'express';
import {
  acceptInvitationBodySchema,
  forgotPasswordBodySchema,
  loginBodySchema,
  resetPasswordBodySchema,
} from '../../shared/schemas/auth';
import type { ServerContext } from '../auth/context';
import { Authenticator, route } from '../http/routes';
import * as accounts from '../services/accounts';

/** The refresh token's cookie: HttpOnly (no script reads it), SameSite=Strict, sent only to /api/auth. */
export const REFRESH_COOKIE = 'hm_refresh';
const COOKIE_PATH = '/api/auth';

function readCookie(req: Request, name: string): string | undefined {
  for (const part of (req.get('cookie') ?? '').split(';')) {
    const i = part.indexOf('=');
    if (i > 0 && part.slice(0, i).trim() === name) return decodeURIComponent(part.slice(i + 1).trim());
  }
  return undefined;
}

function sendSession(app: ServerContext, res: Response, s: accounts.IssuedSession) {
  res.cookie(REFRESH_COOKIE, s.refreshToken, {
    httpOnly: true,
    sameSite: 'strict',
    secure: app.secureCookies,
    path: COOKIE_PATH,
    expires: s.refreshExpiresAt,
  });
  return s.body;
}

const meta = (req: Request) => ({ ip: req.ip ?? 'unknown', userAgent: req.get('user-agent') });

export const authRoutes = [
  route({
    method: 'post',
    path: '/auth/login',
    access: 'public',
    body: loginBodySchema,
    summary: 'Sign in with e-mail and password; answers an access token and sets the refresh cookie.',
    handler: async ({ app, req, res, body }) => sendSession(app, res, await accounts.login(app, body, meta(req))),
  }),
  route({
    method: 'post',
    path: '/auth/refresh',
    access: 'public',
    summary: 'Rotate the refresh cookie and get a new access token.',
    handler: async ({ app, req, res }) => {
      try {
        return sendSession(app, res, await accounts.refresh(app, readCookie(req, REFRESH_COOKIE)));
      } catch (err) {
        res.clearCookie(REFRESH_COOKIE, { path: COOKIE_PATH });
        throw err;
      }
    },
  }),
  route({
    method: 'post',
    path: '/auth/logout',
    access: 'public',
    status: 204,
    summary: 'End the session of the refresh cookie (and of the access token, if sent).',
    handler: async ({ app, req, res }) => {
      // Signing out must work with an expired access token too; the cookie alone identifies the session.
      const caller = await new Authenticator(app).caller(req).catch(() => null);
      await accounts.logout(app, readCookie(req, REFRESH_COOKIE), caller);
      res.clearCookie(REFRESH_COOKIE, { path: COOKIE_PATH });
    },
  }),
  route({
    method: 'get',
    path: '/auth/me',
    access: 'signedIn',
    summary: 'The signed-in user and their labs with roles.',
    handler: ({ caller }) => accounts.meFromCaller(caller!),
  }),
  route({
    method: 'post',
    path: '/auth/password/forgot',
    access: 'public',
    status: 202,
    body: forgotPasswordBodySchema,
    summary: 'E-mail a reset link if the address has an account (same answer either way).',
    handler: async ({ app, req, body }) => {
      await accounts.forgotPassword(app, body.email, meta(req).ip);
      return { message: 'If that address has an account, a reset link is on its way.' };
    },
  }),
  route({
    method: 'post',
    path: '/auth/password/reset',
    access: 'public',
    body: resetPasswordBodySchema,
    summary: 'Set a new password with the link from the e-mail; ends all other sessions and signs in.',
    handler: async ({ app, req, res, body }) => sendSession(app, res, await accounts.resetPassword(app, body, meta(req))),
  }),
  route({
    method: 'get',
    path: '/auth/invitations/:token',
    access: 'public',
    summary: 'What an invitation link offers (lab, role, address).',
    handler: ({ app, params }) => accounts.previewInvitation(app, params.token),
  }),
  route({
    method: 'post',
    path: '/auth/invitations/:token/accept',
    access: 'public',
    body: acceptInvitationBodySchema,
    summary: 'Accept an invitation: create the account (or confirm the existing one), join the lab, sign in.',
    handler: async ({ app, req, res, params, body }) =>
      sendSession(app, res, await accounts.acceptInvitation(app, params.token, body, meta(req))),
  }),
];
