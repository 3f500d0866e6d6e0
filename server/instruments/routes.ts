import { route } from '../lib/route.js';
import { instrumentCodePath } from '../lib/query.js';
import type { InstrumentService } from './service.js';

export interface InstrumentDeps {
  instruments: InstrumentService;
}

const ADMIN = ['admin'] as const;

/** The instrument registry: everyone signed in reads it; admins register and change instruments. */
export const instrumentRoutes = [
  route<InstrumentDeps>({
    method: 'get', path: '/instruments', tag: 'Catalog', who: 'signed-in',
    summary: 'Registered instruments with their bands',
    description: 'Every upload names one of these codes (instrument column or batch field) and only its bands. `measurements` counts the stored measurements taken with each.',
    responses: { 200: { description: 'instruments by code', schema: 'responses/instruments' } },
    handler: async (_ctx, { instruments }) => ({ instruments: await instruments.list() }),
  }),
  route<InstrumentDeps, { code: string }>({
    method: 'get', path: '/instruments/:code', tag: 'Catalog', who: 'signed-in',
    summary: 'One registered instrument',
    params: instrumentCodePath,
    responses: { 200: { description: 'the instrument', schema: 'responses/instrument' } },
    errors: [404],
    handler: ({ params }, { instruments }) => instruments.get(params.code),
  }),
  route<InstrumentDeps>({
    method: 'post', path: '/instruments', tag: 'Admin', who: ADMIN,
    summary: 'Register an instrument',
    description: 'The code is what uploads name (letters, digits, `.`, `_`, `-`; at most 40; compared without case). Bands are Johnson–Cousins U, B, V, R, I. Audited.',
    body: { schema: 'api/instrument-create', required: true },
    responses: { 201: { description: 'registered', schema: 'responses/instrument' } },
    errors: [400, 409],
    handler: ({ user, body }, { instruments }) => instruments.create(user.id, body),
  }),
  route<InstrumentDeps, { code: string }>({
    method: 'patch', path: '/instruments/:code', tag: 'Admin', who: ADMIN,
    summary: 'Change an instrument’s name, bands or description',
    description: 'The code cannot change (uploads and stored measurements name it). New bands apply to uploads from now on; stored measurements keep theirs. Audited.',
    params: instrumentCodePath,
    body: { schema: 'api/instrument-update', required: true },
    responses: { 200: { description: 'the instrument after the change', schema: 'responses/instrument' } },
    errors: [400, 404],
    handler: ({ user, params, body }, { instruments }) => instruments.update(user.id, params.code, body),
  }),
];
