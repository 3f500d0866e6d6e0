import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import { AppError, badRequest } from '../errors.js';
import { DEMO_PASSWORD, endAccountAccess, hashPassword } from '../auth/service.js';
import type { Mailer } from './transport.js';

/** sha256 (hex) of a reset token: what the database keeps instead of the token. */
export const tokenHash = (token: string) => crypto.createHash('sha256').update(token, 'utf8').digest('hex');

/** 32 random bytes, base64url (43 characters): the secret in the e-mailed link. */
export const newResetToken = () => crypto.randomBytes(32).toString('base64url');

const tokenProblem = (code: string, message: string) => new AppError(400, code, message, { fields: [{ field: 'token', message }] });

export function passwordResetService(db: Knex, mailer: Mailer, opts: { passwordResetMinutes: number; bcryptCost?: number }) {
  return {
    /**
     * Start a reset for `email`. Does nothing visible when there is no such enabled account, so the
     * caller answers the same either way. The e-mail is sent in the background (see mailer.idle()),
     * so the answer does not take longer for a real account.
     */
    async request(email: string): Promise<void> {
      const user = await db('users').where({ email: email.trim().toLowerCase() }).first('id', 'email', 'name', 'disabled');
      if (!user || user.disabled) return;
      const token = newResetToken();
      const now = new Date();
      const expires = new Date(now.getTime() + opts.passwordResetMinutes * 60_000);
      await db.transaction(async (trx) => {
        const [id] = await trx('password_resets').insert({ user_id: user.id, token_hash: tokenHash(token), created_at: now.toISOString(), expires_at: expires.toISOString(), used_at: null });
        await recordAudit(trx, { actorId: null, action: 'user.password_reset_request', entityType: 'user', entityId: user.id, after: { resetId: id, expiresAt: expires.toISOString() } });
      });
      const link = mailer.link(`/reset-password?token=${encodeURIComponent(token)}`);
      void mailer.send({
        to: user.email,
        subject: 'Reset your Starveil password',
        text:
          `Hello ${user.name},\n\n` +
          `Someone asked to reset the password of the Starveil account ${user.email}. ` +
          `If that was you, open this link within ${opts.passwordResetMinutes} minutes and choose a new password:\n\n` +
          `${link}\n\n` +
          `The link works once. If you did not ask for this, ignore this message: your password stays as it is.\n\n` +
          `-- \nStarveil · sent automatically, replies are not read.`,
        redact: [token, encodeURIComponent(token)],
      });
    },

    /** Set a new password with a token from the e-mail; the token is spent and every session of that person ends. */
    async confirm(token: string, newPassword: string): Promise<void> {
      if (newPassword === DEMO_PASSWORD) {
        throw badRequest('Choose a password other than the published demo password.', { fields: [{ field: 'newPassword', message: 'must differ from the demo password' }] });
      }
      const userId = await db.transaction(async (trx) => {
        const reset = await trx('password_resets').where({ token_hash: tokenHash(token) }).first();
        if (!reset) throw tokenProblem('reset_token_unknown', 'This password-reset link is not valid (perhaps it was copied only in part). Ask for a new one.');
        if (reset.used_at) throw tokenProblem('reset_token_used', 'This password-reset link has already been used. Ask for a new one if you need to reset again.');
        const now = new Date();
        if (new Date(reset.expires_at).getTime() <= now.getTime()) {
          throw tokenProblem('reset_token_expired', `This password-reset link has expired (links work for ${opts.passwordResetMinutes} minutes). Ask for a new one.`);
        }
        const user = await trx('users').where({ id: reset.user_id }).first('id', 'disabled');
        if (!user || user.disabled) throw tokenProblem('reset_token_unknown', 'The account this link belongs to is disabled; ask an admin.');

        // Spend this token and every other open one of the same person (older links die too).
        const spent = await trx('password_resets').where({ id: reset.id }).whereNull('used_at').update({ used_at: now.toISOString() });
        if (spent !== 1) throw tokenProblem('reset_token_used', 'This password-reset link has already been used. Ask for a new one if you need to reset again.');
        await trx('password_resets').where({ user_id: user.id }).whereNull('used_at').update({ used_at: now.toISOString() });

        await trx('users').where({ id: user.id }).update({ password_hash: await hashPassword(newPassword, opts.bcryptCost), updated_at: now.toISOString() });
        // every session ends and every API token of the account is revoked
        const ended = await endAccountAccess(trx, user.id, { actorId: user.id, reason: 'password reset by e-mailed link' });
        await recordAudit(trx, { actorId: user.id, action: 'user.password_reset', entityType: 'user', entityId: user.id, after: { resetId: reset.id, ...ended } });
        return user.id as number;
      });

      const user = await db('users').where({ id: userId }).first('email', 'name');
      void mailer.send({
        to: user.email,
        subject: 'Your Starveil password was changed',
        text:
          `Hello ${user.name},\n\n` +
          `The password of the Starveil account ${user.email} was just changed with an e-mailed reset link; ` +
          `every signed-in session of the account was ended and its API tokens were revoked.\n\n` +
          `If you did not do this, ask an admin to disable the account at once.\n\n` +
          `-- \nStarveil · sent automatically, replies are not read.`,
      });
    },
  };
}
export type PasswordResetService = ReturnType<typeof passwordResetService>;
