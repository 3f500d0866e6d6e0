import bcrypt from 'bcryptjs';
import { DEFAULT_BCRYPT_COST } from '../config.js';

/** The published demo password: refused in production unless STARVEIL_ALLOW_DEMO=1. */
export const DEMO_PASSWORD = 'kestrel-demo';
/** bcrypt cost when none is passed (server/config.ts reads it once from the environment: 10; 4 under tests). */
export const COST = DEFAULT_BCRYPT_COST;

/** Hash with the given cost (the server passes config.bcryptCost). */
export function hashPassword(plain: string, cost: number = COST): Promise<string> {
  return bcrypt.hash(plain, cost);
}

export function verifyPassword(plain: string, hash: string): Promise<boolean> {
  return bcrypt.compare(plain, hash);
}
