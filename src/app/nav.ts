import type { Role } from '../lib/roles';

/** Navigation entries; a page appears only for the roles that may use it (admin sees all). */
export interface NavItem {
  to: string;
  label: string;
  roles: readonly Role[] | 'signed-in';
}

export const NAV: NavItem[] = [
  { to: '/', label: 'Overview', roles: 'signed-in' },
  { to: '/admin/people', label: 'People', roles: ['admin'] },
  { to: '/account', label: 'Account', roles: 'signed-in' },
];
