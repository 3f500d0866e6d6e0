import type { Knex } from 'knex';
import { reply, route } from '../lib/route.js';
import { idPath, orderQuery, pageQuery, query } from '../lib/query.js';
import { BATCH_STATES } from '../lib/visibility.js';
import type { MeasurementService } from '../measurements/service.js';
import { MEASUREMENT_SORTS, type ReviewService } from './service.js';
import { assertMayReadBatch, decisionOf, linkCorrectedFile } from './queries.js';

export interface ReviewDeps {
  db: Knex;
  review: ReviewService;
  measurements: MeasurementService;
}

const CUR = ['curator'] as const;
const OBS_CUR = ['observer', 'curator'] as const;
const OWN_BATCHES = 'observers see their own batches only (another observer’s batch answers 404)';
const FLAGS = ['above_efficiency_envelope', 'above_p_ceiling', 'low_p_snr', 'inconsistent_repeats', 'low_parallax_snr', 'no_distance'];

const LARGE_DECISION =
  'A batch with more than 20,000 measurements to change is applied in short transactions on a worker thread: the answer is 202 with `settling` (progress), GET /batches/{id} shows `settling` until the state flips, and a second decision meanwhile is a 409 `decision_in_progress`.';

const DECISION_RESPONSES = {
  200: { description: 'the decision, applied', schema: 'responses/batch-decision' },
  202: { description: 'a large batch: the decision is being applied in short transactions', schema: 'responses/batch-decision-started' },
};

/** 202 while a large decision is being applied (the answer carries `settling`), else the applied decision (200). */
const decisionReply = (answer: object) => ('settling' in answer && answer.settling ? reply(202, answer) : answer);

/** `filter.<column>=` or `filter[<column>]=` query parameters → {column: value} (empty values dropped). */
function filtersOf(q: Record<string, unknown>): Record<string, string> {
  const filters: Record<string, string> = {};
  for (const [k, v] of Object.entries(q)) {
    const m = /^filter\.(\w+)$/.exec(k) ?? /^filter\[(\w+)\]$/.exec(k);
    if (m && typeof v === 'string' && v !== '') filters[m[1]] = v;
  }
  return filters;
}

/** The review queue and table, measurement edits and decisions, whole-batch approve/return, the decision as the uploader reads it. */
export const reviewRoutes = [
  route<ReviewDeps, object, { state: string; sort: string; order: string }>({
    method: 'get', path: '/review/queue', tag: 'Review', who: CUR,
    summary: 'Batches awaiting review (or in another state)',
    query: {
      state: query('batches in this state (default awaiting_review)', { type: 'string', enum: [...BATCH_STATES], default: 'awaiting_review' }),
      sort: query('age, rows or uploader (default age; any other value also sorts by age)', { type: 'string', examples: ['age', 'rows', 'uploader'], default: 'age' }),
      ...orderQuery('desc'),
    },
    responses: { 200: { description: 'the queue', schema: 'responses/review-queue' } },
    errors: [400],
    handler: ({ query: q }, { review }) => {
      const sort = (['age', 'rows', 'uploader'].includes(q.sort) ? q.sort : 'age') as 'age' | 'rows' | 'uploader';
      return review.queue({ state: q.state, sort, order: q.order === 'asc' ? 'asc' : 'desc' });
    },
  }),

  // the review table: observers may read their own batch's measurements, curators every batch's
  route<ReviewDeps, { id: number }, { limit: number; offset: number; sort: string; order: string; search?: string }>({
    method: 'get', path: '/batches/:id/measurements', tag: 'Review', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'The review table of a batch, paged, sorted and filtered on the server',
    description: 'Filters are `filter.<column>=value` (also written `filter[<column>]=value`); an empty filter is ignored.',
    params: idPath('batch'),
    query: {
      ...pageQuery(500, 5000, 'measurements'),
      sort: query('column to sort by (default line)', { type: 'string', enum: [...MEASUREMENT_SORTS], default: 'line' }),
      ...orderQuery('asc'),
      'filter.state': query('only measurements in this state', { type: 'string', enum: ['pending', 'conflict', 'ambiguous', 'approved', 'rejected', 'withdrawn'] }),
      'filter.band': query('only this band', { type: 'string', enum: ['U', 'B', 'V', 'R', 'I'] }),
      'filter.instrument': query('only this instrument code', { type: 'string' }),
      'filter.distance_method': query('only this distance method', { type: 'string', enum: ['inverse_parallax', 'edsd_mode', 'given'] }),
      'filter.flag': query('only measurements carrying this quality or plausibility flag (GET /plausibility)', { type: 'string', enum: FLAGS }),
      search: query('text: part of the star name, or an exact source_id', { type: 'string' }),
    },
    responses: { 200: { description: 'one page of the table', schema: 'responses/batch-measurements' } },
    errors: [400, 404],
    handler: async ({ user, params, query: q, req }, { db, review }) => {
      await assertMayReadBatch(db, user, params.id, 'Batch');
      const filters = filtersOf(req.query as Record<string, unknown>);
      return review.measurements(params.id, { sort: q.sort, order: q.order === 'desc' ? 'desc' : 'asc', limit: q.limit, offset: q.offset, filters, search: q.search || undefined }, user);
    },
  }),

  route<ReviewDeps, { id: number }>({
    method: 'patch', path: '/measurements/:id', tag: 'Review', who: CUR,
    summary: 'Edit a measurement',
    description: 'The merged row is validated with the upload schema (schemas/measurement-row.json) and re-derived; the edit is audited. A stale `version` answers 409 with `details.current`, the row as it is now.',
    params: idPath('measurement'),
    body: { schema: 'api/measurement-patch', required: true },
    responses: { 200: { description: 'the measurement after the edit', schema: 'responses/measurement-edit' } },
    errors: [400, 404, 409],
    handler: async ({ user, params, body }, { measurements }) => {
      const { measurement, warnings } = await measurements.edit(user.id, params.id, body.changes, body.version, body.reason ?? null);
      return { measurement, warnings };
    },
  }),

  route<ReviewDeps, { id: number }>({
    method: 'get', path: '/measurements/:id/history', tag: 'Review', who: OBS_CUR, whoNote: 'observers see the history of their own batches’ measurements only',
    summary: 'Audit trail of a measurement: who, when, before, after, reason',
    params: idPath('measurement'),
    responses: { 200: { description: 'the trail, oldest first', schema: 'responses/measurement-history' } },
    errors: [400, 404],
    handler: async ({ user, params }, { db, review, measurements }) => {
      const m = await measurements.load(params.id);
      await assertMayReadBatch(db, user, m.batch_id, 'Measurement');
      return { history: await review.history('measurement', params.id, user) };
    },
  }),

  route<ReviewDeps>({
    method: 'post', path: '/measurements/approve', tag: 'Review', who: CUR,
    summary: 'Approve selected measurements',
    description: 'A held measurement (conflict or ambiguous) answers 409 with `details.ids`; an unknown id 404. Nothing changes on an error.',
    body: { schema: 'api/measurement-ids', required: true },
    responses: { 200: { description: 'done', schema: 'responses/measurement-state-change' } },
    errors: [400, 404, 409],
    handler: ({ user, body }, { measurements }) => measurements.setState(user.id, body.ids, 'approved', body.reason ?? null, { from: ['pending', 'approved', 'rejected', 'withdrawn'] }),
  }),

  route<ReviewDeps>({
    method: 'post', path: '/measurements/reject', tag: 'Review', who: CUR,
    summary: 'Reject selected measurements',
    body: { schema: 'api/measurement-ids', required: true },
    responses: { 200: { description: 'done', schema: 'responses/measurement-state-change' } },
    errors: [400, 404],
    handler: ({ user, body }, { measurements }) => measurements.setState(user.id, body.ids, 'rejected', body.reason ?? null, { from: ['pending', 'approved', 'rejected', 'withdrawn', 'conflict', 'ambiguous'] }),
  }),

  route<ReviewDeps, { id: number }>({
    method: 'post', path: '/measurements/:id/resolve', tag: 'Review', who: CUR,
    summary: 'Settle a conflict or an ambiguous match',
    description: '`{keep: "this"|"other"}` settles a conflict (the other measurement is rejected); `{starId}` or `{newStar: true, name?}` attaches an ambiguous match. The wrong kind of measurement answers 409.',
    params: idPath('measurement'),
    body: { schema: 'api/measurement-resolve', required: true },
    responses: { 200: { description: 'settled', schema: 'responses/measurement-resolve' } },
    errors: [400, 404, 409],
    handler: ({ user, params, body }, { measurements }) => {
      const reason = body.reason ?? null;
      if ('keep' in body) return measurements.resolveConflict(user.id, params.id, body.keep, reason);
      if ('starId' in body) return measurements.attach(user.id, params.id, { starId: body.starId }, reason);
      return measurements.attach(user.id, params.id, { newStar: true, name: body.name }, reason);
    },
  }),

  route<ReviewDeps, { id: number }>({
    method: 'post', path: '/audit/:id/revert', tag: 'Review', who: CUR,
    summary: 'Undo one recorded edit (itself audited as a revert)',
    params: idPath('audit entry'),
    body: { required: false, inline: { contentType: 'application/json', schema: { type: 'object', properties: { reason: { type: 'string', description: 'why (default "revert of change N"); any other value is ignored' } } } } },
    responses: { 200: { description: 'the measurement after the revert', schema: 'responses/measurement-edit' } },
    errors: [400, 404],
    handler: async ({ user, params, body }, { measurements }) => {
      const { measurement } = await measurements.revert(user.id, params.id, typeof body?.reason === 'string' ? body.reason : null);
      return { measurement };
    },
  }),

  route<ReviewDeps, { id: number }>({
    method: 'post', path: '/batches/:id/approve', tag: 'Review', who: CUR,
    summary: 'Approve every pending measurement of a batch',
    description: `Held rows (conflicts, ambiguous matches) stay held and are counted. Only a checked batch (awaiting_review, approved or returned) can be decided (else 409), and not while its calibration is being applied or reverted (409 \`calibration_in_progress\`). ${LARGE_DECISION} The uploader is told by e-mail (for a large batch, when it flips).`,
    params: idPath('batch'),
    body: { schema: 'api/batch-decision', required: false },
    responses: DECISION_RESPONSES,
    errors: [400, 404, 409],
    handler: async ({ user, params, body }, { review }) => decisionReply(await review.decide(user.id, params.id, 'approved', body?.note ?? null)),
  }),

  route<ReviewDeps, { id: number }>({
    method: 'post', path: '/batches/:id/reject', tag: 'Review', who: CUR,
    summary: 'Return a batch: every pending measurement is rejected',
    description: `Approved measurements of the batch are withdrawn from the approved catalog (state withdrawn, counts.withdrawn; audited) until the batch is approved again, which restores them (counts.restored). Refused like an approve (409). ${LARGE_DECISION}`,
    params: idPath('batch'),
    body: { schema: 'api/batch-decision', required: false },
    responses: DECISION_RESPONSES,
    errors: [400, 404, 409],
    handler: async ({ user, params, body }, { review }) => decisionReply(await review.decide(user.id, params.id, 'returned', body?.note ?? null)),
  }),

  route<ReviewDeps, { id: number }>({
    method: 'get', path: '/batches/:id/decision', tag: 'Review', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'The curator’s decision and note on a batch, as its uploader reads it',
    description: 'The note a curator wrote when approving or returning the batch, who decided and when, the measurements by state after the decision, and the corrected files linked to it.',
    params: idPath('batch'),
    responses: { 200: { description: 'the decision', schema: 'responses/calibration-decision' } },
    errors: [400, 404],
    handler: ({ user, params }, { db }) => decisionOf(db, user, params.id),
  }),

  // the uploader sends a corrected file (a new upload) for a returned batch, and links it here
  route<ReviewDeps, { id: number }>({
    method: 'post', path: '/batches/:id/replaces', tag: 'Review', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Link this upload as the corrected file of a returned batch',
    description: 'Send the corrected file with POST /batches first, then link it here to the returned batch it replaces (`batchId`). 409 when that batch is not returned (`not_returned`) or this one already replaces another (`already_linked`). Audited.',
    params: idPath('batch'),
    body: { schema: 'api/calibration-replaces', required: true },
    responses: { 200: { description: 'the new batch’s decision record, naming the batch it replaces', schema: 'responses/calibration-decision' } },
    errors: [400, 404, 409],
    handler: async ({ user, params, body }, { db }) => {
      await linkCorrectedFile(db, user, params.id, body.batchId);
      return decisionOf(db, user, params.id);
    },
  }),
];
