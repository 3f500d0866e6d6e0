import { createElement, type ReactNode } from 'react';
import type { Role } from '../lib/roles';
import { BatchesNavLabel } from '../features/intake/components/BatchesNavLabel';

/** Navigation entries; a page appears only for the roles that may use it (admin sees all). */
export interface NavItem {
  to: string;
  /** text, or a small component when the label depends on the signed-in role */
  label: ReactNode;
  roles: readonly Role[] | 'signed-in';
}

export const NAV: NavItem[] = [
  { to: '/', label: 'Overview', roles: 'signed-in' },
  { to: '/upload', label: 'Upload', roles: ['observer', 'curator'] },
  { to: '/batches', label: createElement(BatchesNavLabel), roles: ['observer', 'curator'] },
  { to: '/review', label: 'Review', roles: ['curator'] },
  { to: '/catalog', label: 'Catalog', roles: 'signed-in' },
  { to: '/instruments', label: 'Instruments', roles: 'signed-in' },
  { to: '/sky', label: 'Sky', roles: 'signed-in' },
  { to: '/runs', label: 'Runs', roles: 'signed-in' },
  { to: '/masks', label: 'Masks', roles: 'signed-in' },
  { to: '/tokens', label: 'Tokens', roles: 'signed-in' },
  { to: '/reference', label: 'API', roles: 'signed-in' },
  { to: '/admin/people', label: 'People', roles: ['admin'] },
  { to: '/admin/outbox', label: 'Outbox', roles: ['admin'] },
  { to: '/account', label: 'Account', roles: 'signed-in' },
];
