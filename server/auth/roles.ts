import type { RequestHandler } from 'express';
import { forbidden, unauthenticated } from '../errors.js';

export const ROLES = ['observer', 'curator', 'modeler', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export interface SessionUser {
  id: number;
  email: string;
  name: string;
  role: Role;
}

/** Roles that may do everything a curator does, etc. Admin implies every power. */
export function hasRole(user: SessionUser | undefined, allowed: readonly Role[] | 'signed-in'): boolean {
  if (!user) return false;
  if (user.role === 'admin' || allowed === 'signed-in') return true;
  return allowed.includes(user.role);
}

/**
 * The one role guard. Every route under /api/v1 except sign-in states who may call it:
 * `guard('signed-in')` or `guard(['curator'])`. Admin passes every guard.
 */
export function guard(allowed: readonly Role[] | 'signed-in'): RequestHandler {
  return (req, _res, next) => {
    const user = req.user as SessionUser | undefined;
    if (!user) return next(unauthenticated());
    if (!hasRole(user, allowed)) return next(forbidden(`This needs the role ${allowed === 'signed-in' ? 'signed-in' : allowed.join(' or ')}; you are ${user.role}.`));
    next();
  };
}

/** Routes that answer to anyone (sign-in, health). Stated explicitly so a reader sees the choice. */
export const open: RequestHandler = (_req, _res, next) => next();

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    // eslint-disable-next-line @typescript-eslint/no-empty-object-type
    interface User extends SessionUser {}
  }
}
