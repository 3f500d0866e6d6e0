import type { Knex } from 'knex';
import bcrypt from 'bcryptjs';
import { recordAudit } from '../audit/service.js';
import { AppError, badRequest, conflict, notFound } from '../errors.js';
import { DEMO_PASSWORD, hashPassword, verifyPassword } from './passwords.js';
import type { Role, SessionUser } from './roles.js';

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

// Compared against when the e-mail is unknown, so both failures take about as long.
const DUMMY_HASH = bcrypt.hashSync('not-a-real-password', 4);
const normaliseEmail = (e: string) => e.trim().toLowerCase();

export function authService(db: Knex, opts: { allowDemoPassword: boolean }) {
  return {
    /** Check credentials. Returns null for any wrong part, so callers cannot tell which was wrong. */
    async authenticate(email: string, password: string): Promise<SessionUser | null> {
      const user = (await db<UserRow>('users').where({ email: normaliseEmail(email) }).first()) ?? null;
      const ok = user ? await verifyPassword(password, user.password_hash) : await verifyPassword(password, DUMMY_HASH);
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
          email, name: input.name, role: input.role, password_hash: await hashPassword(input.password),
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

    async changePassword(userId: number, current: string, next: string) {
      return db.transaction(async (trx) => {
        const u = await trx<UserRow>('users').where({ id: userId }).first();
        if (!u || !(await verifyPassword(current, u.password_hash))) {
          throw badRequest('The current password is not right.', { fields: [{ field: 'currentPassword', message: 'does not match' }] });
        }
        if (next === DEMO_PASSWORD) throw badRequest('Choose a password other than the published demo password.', { fields: [{ field: 'newPassword', message: 'must differ from the demo password' }] });
        await trx('users').where({ id: userId }).update({ password_hash: await hashPassword(next), updated_at: new Date().toISOString() });
        await recordAudit(trx, { actorId: userId, action: 'user.password_change', entityType: 'user', entityId: userId });
      });
    },
  };
}
export type AuthService = ReturnType<typeof authService>;
