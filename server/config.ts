import path from 'node:path';
import crypto from 'node:crypto';

/** Every setting Starveil reads from the environment, parsed and checked once at start. */
export interface Config {
  env: 'development' | 'production' | 'test';
  port: number;
  dbFile: string;
  dataDir: string;
  sessionSecret: string;
  /** Allow the published demo password to sign in (refused in production unless STARVEIL_ALLOW_DEMO=1). */
  allowDemoPassword: boolean;
  /** bcrypt cost of password hashes: 10 (about 60–150 ms a check on a small server); 4 under tests (NODE_ENV=test or VITEST). */
  bcryptCost: number;
  loginRateLimit: { windowMs: number; max: number };
  /** Requests allowed per personal API token per window (TOKEN_RATE_MAX per TOKEN_RATE_WINDOW_MS). */
  tokenRateLimit: { windowMs: number; max: number };
  uploadMaxBytes: number;
  mail: { transport: 'outbox' | 'smtp'; from: string; smtpUrl?: string };
  /** How long an e-mailed password-reset link works. */
  passwordResetMinutes: number;
  publicUrl: string;
  /** Extra origins whose pages may write with the session cookie (ALLOWED_ORIGINS, comma-separated). */
  allowedOrigins: string[];
  /**
   * Express `trust proxy` (TRUST_PROXY): false unless set. Only then are X-Forwarded-For/-Proto believed,
   * so sign-in limits key on the real client address and nobody can pick their own.
   */
  trustProxy: boolean | number | string;
  distDir: string;
  seedDemo: boolean;
  /** timingFile: STARVEIL_INTAKE_TIMING, where the check appends where its time went (profiling; null: off) */
  intake: { crossmatchArcsec: number; mjdToleranceDays: number; syncBytes: number; timingFile?: string | null };
}

export class ConfigError extends Error {}

function intVar(env: NodeJS.ProcessEnv, name: string, fallback: number, min = 0): number {
  const raw = env[name];
  if (raw === undefined || raw === '') return fallback;
  const n = Number(raw);
  if (!Number.isInteger(n) || n < min) throw new ConfigError(`${name} must be an integer ≥ ${min}, got "${raw}"`);
  return n;
}

/** TRUST_PROXY: unset/""/false/0 → false; a hop count; or addresses/subnets/names such as "loopback" or "10.0.0.0/8,uniquelocal". */
function trustProxyVar(raw: string | undefined): boolean | number | string {
  if (raw === undefined) return false;
  const v = raw.trim();
  if (v === '' || v === 'false' || v === '0') return false;
  if (/^[1-9]\d{0,1}$/.test(v)) return Number(v);
  if (v === 'true') throw new ConfigError('TRUST_PROXY=true would believe X-Forwarded-For from anyone; give the hop count or the proxy addresses (e.g. "loopback" or "1")');
  if (!/^[\w.:/,\s-]+$/.test(v)) throw new ConfigError(`TRUST_PROXY must be a hop count or comma-separated addresses, subnets or names (loopback, linklocal, uniquelocal), got "${raw}"`);
  return v;
}

/** ALLOWED_ORIGINS: comma-separated http(s) origins such as https://console.example.org. */
function originsVar(raw: string | undefined): string[] {
  const out: string[] = [];
  for (const o of (raw ?? '').split(',').map((x) => x.trim()).filter(Boolean)) {
    let u: URL | null = null;
    try {
      u = new URL(o);
    } catch {
      u = null;
    }
    if (!u || (u.protocol !== 'http:' && u.protocol !== 'https:') || u.origin !== o.replace(/\/$/, '')) {
      throw new ConfigError(`ALLOWED_ORIGINS must list origins like https://console.example.org (scheme, host, optional port; no path), got "${o}"`);
    }
    out.push(u.origin);
  }
  return out;
}

/** bcrypt cost: 10 in use; 4 under tests, where hashing speed matters and strength does not. */
export const bcryptCostFor = (env: NodeJS.ProcessEnv) => (env.NODE_ENV === 'test' || env.VITEST ? 4 : 10);

/**
 * The cost for code that hashes without a loaded Config (the demo seed, benchmarks), read once
 * here from this process's environment; the server passes config.bcryptCost instead.
 */
export const DEFAULT_BCRYPT_COST = bcryptCostFor(process.env);

export function loadConfig(env: NodeJS.ProcessEnv = process.env, overrides: Partial<Config> = {}): Config {
  const nodeEnv = env.NODE_ENV === 'production' ? 'production' : env.NODE_ENV === 'test' ? 'test' : 'development';
  const dataDir = path.resolve(env.STARVEIL_DATA_DIR ?? 'data');
  const port = intVar(env, 'PORT', 3000);
  const secret = env.SESSION_SECRET ?? (nodeEnv === 'production' ? '' : 'starveil-development-secret');
  if (!secret) throw new ConfigError('SESSION_SECRET must be set when NODE_ENV=production');
  const transport = (env.MAIL_TRANSPORT ?? 'outbox') as Config['mail']['transport'];
  if (transport !== 'outbox' && transport !== 'smtp') throw new ConfigError(`MAIL_TRANSPORT must be "outbox" or "smtp", got "${transport}"`);
  if (transport === 'smtp' && !env.SMTP_URL) throw new ConfigError('SMTP_URL must be set when MAIL_TRANSPORT=smtp');
  const config: Config = {
    env: nodeEnv,
    port,
    dbFile: path.resolve(env.STARVEIL_DB ?? path.join(dataDir, 'starveil.sqlite')),
    dataDir,
    sessionSecret: secret,
    allowDemoPassword: nodeEnv !== 'production' || env.STARVEIL_ALLOW_DEMO === '1',
    bcryptCost: bcryptCostFor(env),
    loginRateLimit: {
      windowMs: intVar(env, 'LOGIN_RATE_WINDOW_MS', 15 * 60 * 1000, 1),
      max: intVar(env, 'LOGIN_RATE_MAX', 10, 1),
    },
    tokenRateLimit: {
      windowMs: intVar(env, 'TOKEN_RATE_WINDOW_MS', 60 * 1000, 1),
      max: intVar(env, 'TOKEN_RATE_MAX', 600, 1),
    },
    uploadMaxBytes: intVar(env, 'UPLOAD_MAX_BYTES', 100 * 1024 * 1024, 1),
    mail: { transport, from: env.MAIL_FROM ?? 'Starveil <no-reply@starveil.example>', smtpUrl: env.SMTP_URL },
    passwordResetMinutes: intVar(env, 'PASSWORD_RESET_MINUTES', 60, 1),
    publicUrl: env.PUBLIC_URL ?? `http://localhost:${port}`,
    allowedOrigins: originsVar(env.ALLOWED_ORIGINS),
    trustProxy: trustProxyVar(env.TRUST_PROXY),
    distDir: path.resolve(env.STARVEIL_DIST ?? 'dist'),
    seedDemo: env.STARVEIL_SEED !== '0',
    intake: {
      crossmatchArcsec: Number(env.CROSSMATCH_ARCSEC ?? 1),
      mjdToleranceDays: Number(env.MJD_TOLERANCE_DAYS ?? 0.001),
      syncBytes: intVar(env, 'INTAKE_SYNC_BYTES', 2 * 1024 * 1024),
      timingFile: env.STARVEIL_INTAKE_TIMING || null,
    },
    ...overrides,
  };
  return config;
}

/** A random secret, for tests. */
export function randomSecret(): string {
  return crypto.randomBytes(24).toString('hex');
}
