import { route } from '../lib/route.js';
import type { ReleaseService } from './service.js';

export interface ReleaseDeps {
  releases: ReleaseService;
}

// tags are made with the pattern of schemas/api/release-create.json; any other text simply names no release (404)
const tagPath = { tag: { description: 'release tag (letters, digits, dot, dash, underscore; at most 60); a tag that names no release answers 404', schema: { type: 'string', examples: ['DR1', 'DRIFT-1'] } } };

/** Frozen releases: a pinned run and copies of the approved catalog. */
export const releaseRoutes = [
  route<ReleaseDeps>({
    method: 'post', path: '/releases', tag: 'Releases', who: ['curator'],
    summary: 'Freeze a release: a run and copies of the approved catalog',
    description: 'A release never changes afterwards; a tag in use answers 409, as does a run that is not finished.',
    body: { schema: 'api/release-create', required: true },
    responses: { 201: { description: 'frozen', schema: 'responses/release' } },
    errors: [400, 404, 409],
    handler: ({ user, body }, { releases }) => releases.freeze(user.id, body),
  }),
  route<ReleaseDeps>({
    method: 'get', path: '/releases', tag: 'Releases', who: 'signed-in',
    summary: 'Releases, newest first',
    responses: { 200: { description: 'the releases', schema: 'responses/releases' } },
    handler: async (_ctx, { releases }) => ({ releases: await releases.list() }),
  }),
  route<ReleaseDeps, { tag: string }>({
    method: 'get', path: '/releases/:tag', tag: 'Releases', who: 'signed-in',
    summary: 'One release with its counts',
    params: tagPath,
    responses: { 200: { description: 'the release', schema: 'responses/release' } },
    errors: [404],
    handler: ({ params }, { releases }) => releases.get(params.tag),
  }),
];
