import type { Knex } from 'knex';
import bcrypt from 'bcryptjs';
import { recordAudit } from '../audit/service.js';
import { AppError, badRequest, conflict, notFound } from '../errors.js';
import { COST, DEMO_PASSWORD, hashPassword, verifyPassword } from './passwords.js';
import type { Role, SessionUser } from './roles.js';

// what other capabilities use of auth, through this file: hashing a new password, the demo password, sign-in-like rate limits
export { DEMO_PASSWORD, hashPassword } from './passwords.js';
export { attemptLimiter } from './rate-limit.js';

export interface UserRow {
  id: number;
  email: string;
  name: string;
  role: Role;
  password_hash: string;
  disabled: number | boolean;
  created_at: string;
  updated_at: string;
  last_sign_in_at: string | null;
}

export const publicUser = (u: UserRow) => ({
  id: u.id,
  email: u.email,
  name: u.name,
  role: u.role,
  disabled: Boolean(u.disabled),
  createdAt: u.created_at,
  lastSignInAt: u.last_sign_in_at,
});

export const sessionUser = (u: UserRow): SessionUser => ({ id: u.id, email: u.email, name: u.name, role: u.role });

// Compared against when the e-mail is unknown, so both refusals take as long: the same bcrypt
// cost as real accounts (a cheaper dummy made unknown e-mails answer ~20× faster).
const dummyHashes = new Map<number, string>();
const dummyHash = (cost: number) => {
  if (!dummyHashes.has(cost)) dummyHashes.set(cost, bcrypt.hashSync('not-a-real-password', cost));
  return dummyHashes.get(cost)!;
};
/** bcrypt cost of the dummy hash (tests compare it with the accounts' cost). */
export const dummyHashRounds = (cost: number = COST) => bcrypt.getRounds(dummyHash(cost));
export const normaliseEmail = (e: string) => e.trim().toLowerCase();

/**
 * End every session of an account except `keepSid` (connect-session-knex stores the session as
 * JSON with passport's `"user":<id>`), revoke all its API tokens, and spend its open password-reset
 * links. Called inside the transaction that changes the password.
 */
export async function endAccountAccess(trx: Knex | Knex.Transaction, userId: number, opts: { keepSid?: string; actorId: number | null; reason: string }) {
  const at = new Date().toISOString();
  let sessions = trx('sessions').where('sess', 'like', `%"user":${userId}}%`);
  if (opts.keepSid) sessions = sessions.whereNot('sid', opts.keepSid);
  const endedSessions = await sessions.delete();
  const tokenIds: number[] = await trx('api_tokens').where({ user_id: userId }).whereNull('revoked_at').pluck('id');
  if (tokenIds.length) await trx('api_tokens').whereIn('id', tokenIds).update({ revoked_at: at });
  const spentResets = await trx('password_resets').where({ user_id: userId }).whereNull('used_at').update({ used_at: at });
  await recordAudit(trx, tokenIds.map((id) => ({ actorId: opts.actorId, action: 'token.revoke', entityType: 'api_token', entityId: id, before: { revokedAt: null }, after: { revokedAt: at }, reason: opts.reason })));
  return { endedSessions, revokedTokens: tokenIds.length, spentResets };
}

export function authService(db: Knex, opts: { allowDemoPassword: boolean; bcryptCost?: number }) {
  const cost = opts.bcryptCost ?? COST;
  dummyHash(cost); // made now, so the first refusal of an unknown e-mail takes no longer than later ones
  return {
    /** Check credentials. Returns null for any wrong part, so callers cannot tell which was wrong. */
    async authenticate(email: string, password: string): Promise<SessionUser | null> {
      const user = (await db<UserRow>('users').where({ email: normaliseEmail(email) }).first()) ?? null;
      const ok = user ? await verifyPassword(password, user.password_hash) : await verifyPassword(password, dummyHash(cost));
      if (!user || !ok || user.disabled) return null;
      if (!opts.allowDemoPassword && password === DEMO_PASSWORD) {
        throw new AppError(401, 'demo_password_refused', 'The published demo password is refused in production; an admin must set a new password for this account.');
      }
      await db('users').where({ id: user.id }).update({ last_sign_in_at: new Date().toISOString() });
      return sessionUser(user);
    },

    async findActive(id: number): Promise<SessionUser | null> {
      const u = await db<UserRow>('users').where({ id }).first();
      return u && !u.disabled ? sessionUser(u) : null;
    },

    async list() {
      const rows = await db<UserRow>('users').orderBy('id');
      return rows.map(publicUser);
    },

    async create(actorId: number | null, input: { email: string; name: string; role: Role; password: string }, trxIn?: Knex) {
      const email = normaliseEmail(input.email);
      const run = async (trx: Knex.Transaction) => {
        if (await trx('users').where({ email }).first()) throw conflict(`An account with e-mail ${email} already exists.`);
        const now = new Date().toISOString();
        const [id] = await trx('users').insert({
          email, name: input.name, role: input.role, password_hash: await hashPassword(input.password, cost),
          disabled: false, created_at: now, updated_at: now,
        });
        const row = await trx<UserRow>('users').where({ id }).first();
        await recordAudit(trx, { actorId, action: 'user.create', entityType: 'user', entityId: id, after: { email, name: input.name, role: input.role } });
        return publicUser(row!);
      };
      return trxIn ? (trxIn as Knex).transaction(run) : db.transaction(run);
    },

    async update(actorId: number, id: number, changes: { name?: string; role?: Role; disabled?: boolean }) {
      return db.transaction(async (trx) => {
        const before = await trx<UserRow>('users').where({ id }).first();
        if (!before) throw notFound(`Account ${id}`);
        if (id === actorId && (changes.disabled === true || (changes.role && changes.role !== 'admin' && before.role === 'admin'))) {
          throw badRequest('You cannot disable your own account or take away your own admin role.', { fields: [{ field: changes.disabled ? 'disabled' : 'role', message: 'not allowed on your own account' }] });
        }
        await trx('users').where({ id }).update({ ...changes, updated_at: new Date().toISOString() });
        const after = await trx<UserRow>('users').where({ id }).first();
        await recordAudit(trx, {
          actorId, action: 'user.update', entityType: 'user', entityId: id,
          before: { name: before.name, role: before.role, disabled: Boolean(before.disabled) },
          after: { name: after!.name, role: after!.role, disabled: Boolean(after!.disabled) },
        });
        if (changes.disabled) await trx('sessions').where('sess', 'like', `%"user":${id}}%`).delete();
        return publicUser(after!);
      });
    },

    /** Change one's own password: every other session of the account ends, its API tokens are revoked and its open reset links die. */
    async changePassword(userId: number, current: string, next: string, currentSid?: string) {
      return db.transaction(async (trx) => {
        const u = await trx<UserRow>('users').where({ id: userId }).first();
        if (!u || !(await verifyPassword(current, u.password_hash))) {
          throw badRequest('The current password is not right.', { fields: [{ field: 'currentPassword', message: 'does not match' }] });
        }
        if (next === DEMO_PASSWORD) throw badRequest('Choose a password other than the published demo password.', { fields: [{ field: 'newPassword', message: 'must differ from the demo password' }] });
        await trx('users').where({ id: userId }).update({ password_hash: await hashPassword(next, cost), updated_at: new Date().toISOString() });
        const ended = await endAccountAccess(trx, userId, { keepSid: currentSid, actorId: userId, reason: 'password changed' });
        await recordAudit(trx, { actorId: userId, action: 'user.password_change', entityType: 'user', entityId: userId, after: ended });
      });
    },
  };
}
export type AuthService = ReturnType<typeof authService>;
