import type { Role, SessionUser } from './api/types';

export type { Role } from './api/types';
/** The signed-in person (GET /me). */
export type Me = SessionUser;
/** Mirrors server/auth/roles.ts: admin has every power. */
export function can(me: Me | null | undefined, roles: readonly Role[] | 'signed-in'): boolean {
  if (!me) return false;
  return me.role === 'admin' || roles === 'signed-in' || roles.includes(me.role);
}
