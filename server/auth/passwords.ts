import bcrypt from 'bcryptjs';

/** The published demo password: refused in production unless STARVEIL_ALLOW_DEMO=1. */
export const DEMO_PASSWORD = 'kestrel-demo';
/** bcrypt cost: 10 (about 60–150 ms a check on a small server); 4 under tests. */
export const COST = process.env.NODE_ENV === 'test' || process.env.VITEST ? 4 : 10;

export function hashPassword(plain: string): Promise<string> {
  return bcrypt.hash(plain, COST);
}

export function verifyPassword(plain: string, hash: string): Promise<boolean> {
  return bcrypt.compare(plain, hash);
}
