import type passport from 'passport';
import { ipKeyGenerator } from 'express-rate-limit';
import { attemptLimiter } from './rate-limit.js';
import { AppError } from '../errors.js';
import { reply, route } from '../lib/route.js';
import type { SessionUser } from './roles.js';
import { normaliseEmail, type AuthService } from './service.js';
import type { Config } from '../config.js';

export interface AuthDeps {
  auth: AuthService;
  passport: passport.PassportStatic;
  config: Config;
}

/** Sign-in, sign-out, who am I, change my password. Password reset by e-mail: server/mail/routes.ts. */
export const authRoutes = [
  route<AuthDeps>({
    method: 'post', path: '/auth/login', tag: 'Sign-in and account', who: 'anyone',
    summary: 'Sign in and receive the session cookie',
    description: 'Sets the `starveil.sid` cookie (HTTP-only, 8 h, renewed on use) with a new session id. Failed sign-ins are limited per address and e-mail (`LOGIN_RATE_MAX` per `LOGIN_RATE_WINDOW_MS`); the published demo password is refused in production.',
    body: { schema: 'api/login', required: true },
    responses: { 200: { description: 'signed in', schema: 'responses/login' } },
    errors: [400, 401, 429],
    // Counts failed sign-ins per address and e-mail; successful ones are not counted. The address as
    // the service looks it up (trimmed, lowercased), so padding cannot dodge a lockout; req.ip is the
    // socket's address unless TRUST_PROXY names the proxy in front.
    middleware: ({ config }) => [
      attemptLimiter(config, {
        message: 'Too many failed sign-ins; wait a few minutes and try again.',
        skipSuccessfulRequests: true,
        key: (req) => `${ipKeyGenerator(req.ip ?? '')}|${typeof req.body?.email === 'string' ? normaliseEmail(req.body.email) : ''}`,
      }),
    ],
    handler: ({ req, res }, { passport: pp }) =>
      new Promise((resolve, reject) => {
        pp.authenticate('local', (err: unknown, user: SessionUser | false) => {
          if (err) return reject(err);
          if (!user) return reject(new AppError(401, 'bad_credentials', 'The e-mail or password is not right, or the account is disabled.'));
          // New session id at sign-in (no fixation).
          req.session.regenerate((regenErr) => {
            if (regenErr) return reject(regenErr);
            req.logIn(user, (loginErr) => (loginErr ? reject(loginErr) : resolve({ user })));
          });
        })(req, res, reject);
      }),
  }),

  route<AuthDeps>({
    method: 'post', path: '/auth/logout', tag: 'Sign-in and account', who: 'anyone',
    summary: 'End the session',
    responses: { 204: { description: 'the session is ended and the cookie cleared' } },
    handler: async ({ req, res }) => {
      await new Promise<void>((resolve, reject) => req.logout((err) => (err ? reject(err) : resolve())));
      await new Promise<void>((resolve) => req.session.destroy(() => resolve()));
      res.clearCookie('starveil.sid');
      return reply(204);
    },
  }),

  route<AuthDeps>({
    method: 'get', path: '/me', tag: 'Sign-in and account', who: 'signed-in',
    summary: 'Who am I?',
    responses: { 200: { description: 'the signed-in person', schema: 'responses/session-user' } },
    handler: ({ user }) => user,
  }),

  route<AuthDeps>({
    method: 'post', path: '/me/password', tag: 'Sign-in and account', who: 'signed-in',
    summary: 'Change your own password',
    description: 'Your other sessions end, your personal API tokens are revoked and open password-reset links stop working; this session stays signed in. Wrong current passwords are limited per account like failed sign-ins (429).',
    body: { schema: 'api/password-change', required: true },
    responses: { 204: { description: 'changed' } },
    errors: [400, 429],
    // Wrong current passwords count per account like failed sign-ins, so a borrowed session cannot
    // guess the password here without the sign-in limit.
    middleware: ({ config }) => [
      attemptLimiter(config, {
        message: 'Too many wrong current passwords; wait a few minutes and try again.',
        skipSuccessfulRequests: true,
        key: (req) => `password-change|${(req.user as SessionUser | undefined)?.id ?? ''}`,
      }),
    ],
    handler: async ({ user, body, req }, { auth }) => {
      await auth.changePassword(user.id, body.currentPassword, body.newPassword, req.sessionID);
      return reply(204);
    },
  }),
];
