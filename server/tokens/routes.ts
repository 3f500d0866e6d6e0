import { reply, route } from '../lib/route.js';
import { idPath } from '../lib/query.js';
import type { TokenService } from './service.js';

export interface TokenDeps {
  tokens: TokenService;
}

/** Personal API tokens: each person makes, lists and revokes their own. */
export const tokenRoutes = [
  route<TokenDeps>({
    method: 'post', path: '/tokens', tag: 'Tokens', who: 'signed-in',
    summary: 'Create a personal API token (its secret is shown once)',
    description: 'Needs the session cookie: a token cannot make tokens. At most 25 active tokens per person (409).',
    body: { schema: 'api/token-create', required: true },
    responses: { 201: { description: 'created; keep the secret now', schema: 'responses/token-created' } },
    errors: [400, 409],
    handler: ({ user, body }, { tokens }) => tokens.create(user.id, body.name),
  }),
  route<TokenDeps>({
    method: 'get', path: '/tokens', tag: 'Tokens', who: 'signed-in', whoNote: 'each person sees their own tokens',
    summary: 'Your tokens, newest first (without secrets)',
    responses: { 200: { description: 'your tokens', schema: 'responses/tokens' } },
    handler: async ({ user }, { tokens }) => ({ tokens: await tokens.list(user.id) }),
  }),
  route<TokenDeps, { id: number }>({
    method: 'delete', path: '/tokens/:id', tag: 'Tokens', who: 'signed-in', whoNote: 'your own tokens only (another person’s answers 404)',
    summary: 'Revoke one of your tokens (again: no change)',
    params: idPath('token'),
    responses: { 204: { description: 'revoked' } },
    errors: [400, 404],
    handler: async ({ user, params }, { tokens }) => {
      await tokens.revoke(user.id, params.id);
      return reply(204);
    },
  }),
];
