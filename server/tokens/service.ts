import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import { conflict, notFound } from '../errors.js';
import type { Role, SessionUser } from '../auth/roles.js';

/** Every secret starts with this, so a leaked one is easy to recognise in logs and scanners. */
export const TOKEN_PREFIX = 'sv_';
/** sv_ + 32 random bytes in base64url (43 characters). */
export const TOKEN_PATTERN = /^sv_[A-Za-z0-9_-]{43}$/;
/** last_used_at is written at most this often per token, so busy scripts do not write on every call. */
export const LAST_USED_RESOLUTION_MS = 60_000;
/** Active (not revoked) tokens one person may hold. */
export const MAX_ACTIVE_TOKENS = 25;

export function newTokenSecret(): string {
  return TOKEN_PREFIX + crypto.randomBytes(32).toString('base64url');
}

/** The stored form of a secret: hex sha256. The secret has 256 random bits, so no salt or slow hash is needed. */
export function hashToken(secret: string): string {
  return crypto.createHash('sha256').update(secret, 'utf8').digest('hex');
}

/** Whether a use at `nowMs` should be written, given the recorded last use. */
export function shouldRecordUse(lastUsedAt: string | null, nowMs: number): boolean {
  if (!lastUsedAt) return true;
  const last = Date.parse(lastUsedAt);
  return !Number.isFinite(last) || nowMs - last >= LAST_USED_RESOLUTION_MS;
}

interface TokenRow {
  id: number;
  user_id: number;
  name: string;
  token_hash: string;
  created_at: string;
  last_used_at: string | null;
  revoked_at: string | null;
}

const present = (t: TokenRow) => ({ id: t.id, name: t.name, createdAt: t.created_at, lastUsedAt: t.last_used_at, revokedAt: t.revoked_at });
export type ApiToken = ReturnType<typeof present>;

/** Personal API tokens: create (secret shown once), list, revoke, and authenticate a bearer secret. */
export function tokenService(db: Knex, readDb: Knex = db, opts: { now?: () => Date } = {}) {
  const now = opts.now ?? (() => new Date());
  return {
    async create(userId: number, name: string): Promise<ApiToken & { token: string }> {
      const secret = newTokenSecret();
      return db.transaction(async (trx) => {
        const [{ n }] = await trx('api_tokens').where({ user_id: userId }).whereNull('revoked_at').count({ n: '*' });
        if (Number(n) >= MAX_ACTIVE_TOKENS) throw conflict(`You already have ${MAX_ACTIVE_TOKENS} active tokens; revoke one you no longer use first.`);
        const [id] = await trx('api_tokens').insert({ user_id: userId, name: name.trim(), token_hash: hashToken(secret), created_at: now().toISOString() });
        const row = await trx<TokenRow>('api_tokens').where({ id }).first();
        // the audit names the token, never its secret or hash
        await recordAudit(trx, { actorId: userId, action: 'token.create', entityType: 'api_token', entityId: id, after: { name: row!.name } });
        return { ...present(row!), token: secret };
      });
    },

    async list(userId: number): Promise<ApiToken[]> {
      return (await readDb<TokenRow>('api_tokens').where({ user_id: userId }).orderBy('id', 'desc')).map(present);
    },

    /** Revoke one of your own tokens; revoking it again changes nothing. Someone else's token is "not found". */
    async revoke(userId: number, id: number): Promise<void> {
      await db.transaction(async (trx) => {
        const row = await trx<TokenRow>('api_tokens').where({ id, user_id: userId }).first();
        if (!row) throw notFound(`Token ${id}`);
        if (row.revoked_at) return;
        const at = now().toISOString();
        await trx('api_tokens').where({ id }).update({ revoked_at: at });
        await recordAudit(trx, { actorId: userId, action: 'token.revoke', entityType: 'api_token', entityId: id, before: { name: row.name, revokedAt: null }, after: { name: row.name, revokedAt: at } });
      });
    },

    /** The person a bearer secret stands for, or null when it is unknown, revoked, or its account is disabled. */
    async authenticate(secret: string): Promise<{ tokenId: number; user: SessionUser } | null> {
      if (!TOKEN_PATTERN.test(secret)) return null;
      const row = await readDb('api_tokens')
        .join('users', 'users.id', 'api_tokens.user_id')
        .where('api_tokens.token_hash', hashToken(secret))
        .first('api_tokens.id as token_id', 'api_tokens.revoked_at', 'api_tokens.last_used_at', 'users.id', 'users.email', 'users.name', 'users.role', 'users.disabled');
      if (!row || row.revoked_at || row.disabled) return null;
      const nowMs = now().getTime();
      if (shouldRecordUse(row.last_used_at, nowMs)) {
        await db('api_tokens').where({ id: row.token_id }).update({ last_used_at: new Date(nowMs).toISOString() });
      }
      return { tokenId: row.token_id, user: { id: row.id, email: row.email, name: row.name, role: row.role as Role } };
    },
  };
}
export type TokenService = ReturnType<typeof tokenService>;
