import type { Knex } from 'knex';
import { ipKeyGenerator } from 'express-rate-limit';
import { attemptLimiter } from '../auth/service.js';
import { reply, route } from '../lib/route.js';
import { pageQuery } from '../lib/query.js';
import type { Config } from '../config.js';
import { listOutbox } from './queries.js';
import type { PasswordResetService } from './passwordReset.js';

export interface MailDeps {
  db: Knex;
  resets: PasswordResetService;
  config: Config;
}

/** Per address and e-mail, with the sign-in window and limit. */
const resetKey = (req: { ip?: string; body?: { email?: unknown } }) => `${ipKeyGenerator(req.ip ?? '')}|${String(req.body?.email ?? '').trim().toLowerCase()}`;

/** Password reset by a one-time e-mailed link, and the outbox of every e-mail written (admins). */
export const mailRoutes = [
  route<MailDeps>({
    method: 'post', path: '/auth/password-reset/request', tag: 'Sign-in and account', who: 'anyone',
    summary: 'Ask for a password-reset link by e-mail',
    description: 'Always answers 202 with the same message, whether or not the address has an account; an enabled account gets a one-time link `PUBLIC_URL/reset-password?token=…`. Every request counts towards the sign-in limit.',
    body: { schema: 'api/password-reset-request', required: true },
    responses: { 202: { description: 'accepted', schema: 'responses/message' } },
    errors: [400, 429],
    // every request counts (all answer 202)
    middleware: ({ config }) => [attemptLimiter(config, { message: 'Too many password-reset requests; wait a few minutes and try again.', skipSuccessfulRequests: false, key: resetKey })],
    handler: async ({ body }, { resets, config }) => {
      await resets.request(body.email);
      return {
        message: `If an enabled account uses that e-mail address, a link to choose a new password is on its way. The link works once, for ${config.passwordResetMinutes} minutes.`,
      };
    },
  }),
  route<MailDeps>({
    method: 'post', path: '/auth/password-reset/confirm', tag: 'Sign-in and account', who: 'anyone',
    summary: 'Set a new password with the e-mailed token',
    description: 'Ends every session of the account and revokes its API tokens. An unknown, expired or used token is a 400; failed attempts are limited.',
    body: { schema: 'api/password-reset-confirm', required: true },
    responses: { 204: { description: 'the new password is set' } },
    errors: [400, 429],
    // only failed confirmations count
    middleware: ({ config }) => [attemptLimiter(config, { message: 'Too many invalid password-reset attempts; wait a few minutes and try again.', skipSuccessfulRequests: true, key: resetKey })],
    handler: async ({ body }, { resets }) => {
      await resets.confirm(body.token, body.newPassword);
      return reply(204);
    },
  }),
  route<MailDeps, object, { limit: number; offset: number }>({
    method: 'get', path: '/admin/outbox', tag: 'Admin', who: ['admin'],
    summary: 'Every e-mail Starveil wrote, newest first',
    query: pageQuery(50, 500, 'messages'),
    responses: { 200: { description: 'one page of the outbox', schema: 'responses/outbox' } },
    errors: [400],
    handler: ({ query }, { db }) => listOutbox(db, query),
  }),
];
