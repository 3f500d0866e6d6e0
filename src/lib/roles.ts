export type Role = 'observer' | 'curator' | 'modeler' | 'admin';
export interface Me {
  id: number;
  email: string;
  name: string;
  role: Role;
}
/** Mirrors server/auth/roles.ts: admin has every power. */
export function can(me: Me | null | undefined, roles: readonly Role[] | 'signed-in'): boolean {
  if (!me) return false;
  return me.role === 'admin' || roles === 'signed-in' || roles.includes(me.role);
}
