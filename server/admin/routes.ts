import type { AuthService } from '../auth/service.js';
import { route } from '../lib/route.js';
import { idPath } from '../lib/query.js';

export interface AdminDeps {
  auth: AuthService;
}

const ADMIN = ['admin'] as const;

/** Account management (admins). The mail outbox: server/mail/routes.ts. */
export const adminRoutes = [
  route<AdminDeps>({
    method: 'get', path: '/admin/users', tag: 'Admin', who: ADMIN,
    summary: 'Every account',
    responses: { 200: { description: 'accounts by id', schema: 'responses/accounts' } },
    handler: async (_ctx, { auth }) => ({ users: await auth.list() }),
  }),
  route<AdminDeps>({
    method: 'post', path: '/admin/users', tag: 'Admin', who: ADMIN,
    summary: 'Create an account',
    body: { schema: 'api/user-create', required: true },
    responses: { 201: { description: 'created', schema: 'responses/account' } },
    errors: [400, 409],
    handler: ({ user, body }, { auth }) => auth.create(user.id, body),
  }),
  route<AdminDeps, { id: number }>({
    method: 'patch', path: '/admin/users/:id', tag: 'Admin', who: ADMIN,
    summary: 'Change or disable an account',
    description: 'Disabling an account ends its sessions. You cannot disable yourself or take away your own admin role (400).',
    params: idPath('account'),
    body: { schema: 'api/user-update', required: true },
    responses: { 200: { description: 'the account after the change', schema: 'responses/account' } },
    errors: [400, 404],
    handler: ({ user, params, body }, { auth }) => auth.update(user.id, params.id, body),
  }),
];
