import { MEASUREMENT_SORTS } from '../review/service.js';
import { coneQuery, conventionQuery, criteriaQuery, formatQuery, idPath, limitQuery, offsetQuery, orderQuery, query, runChoiceQuery } from './params.js';
import type { Operation } from './types.js';

/**
 * Every route under /api/v1, described once. document.ts turns this list into the OpenAPI
 * document; tests/api/openapi.test.ts checks it against the Express router (same methods and
 * paths), against the guards (x-roles) and against live answers (response schemas).
 */

const OBS_CUR = ['observer', 'curator'] as const;
const CUR = ['curator'] as const;
const ADMIN = ['admin'] as const;
const OWN_BATCHES = 'observers see their own batches only (another observer’s batch answers 404)';

const BATCH_STATES = ['received', 'needs_mapping', 'checking', 'awaiting_review', 'failed', 'approved', 'returned'];
const ROW_STATES = ['accepted', 'rejected', 'duplicate', 'conflict', 'ambiguous'];
const STAR_SORTS = ['id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'parallax_mas', 'n_measurements'];
const csvBody = { 'text/csv': { type: 'string' } };

const tagParam = { name: 'tag', in: 'path' as const, required: true, description: 'release tag (letters, digits, dot, dash, underscore)', schema: { type: 'string', pattern: '^[A-Za-z0-9][A-Za-z0-9._-]{0,59}$' } };

const provenanceHeaders = {
  'Starveil-Run': { description: 'id of the tomography run the answer came from', schema: { type: 'integer' } },
  'Starveil-Release': { description: 'release tag, or none', schema: { type: 'string' } },
  'Starveil-Convention': { description: 'IAU or COSMO', schema: { enum: ['IAU', 'COSMO'] } },
};

export const OPERATIONS: Operation[] = [
  // ---- service
  {
    method: 'get', path: '/health', tag: 'Service', who: 'anyone',
    summary: 'Is the API up?',
    responses: { 200: { description: 'the API answers', schema: 'responses/health' } },
  },
  {
    method: 'get', path: '/openapi.json', tag: 'Service', who: 'anyone',
    summary: 'This OpenAPI 3.1 document',
    description: 'Rendered for people at /api/docs.',
    responses: { 200: { description: 'the document', schema: 'responses/openapi' } },
  },

  // ---- sign-in and account
  {
    method: 'post', path: '/auth/login', tag: 'Sign-in and account', who: 'anyone',
    summary: 'Sign in and receive the session cookie',
    description: 'Sets the `starveil.sid` cookie (HTTP-only, 8 h, renewed on use) with a new session id. Failed sign-ins are limited per address and e-mail (`LOGIN_RATE_MAX` per `LOGIN_RATE_WINDOW_MS`); the published demo password is refused in production.',
    body: { schema: 'api/login', required: true },
    responses: { 200: { description: 'signed in', schema: 'responses/login' } },
    errors: [400, 401, 429],
  },
  {
    method: 'post', path: '/auth/logout', tag: 'Sign-in and account', who: 'anyone',
    summary: 'End the session',
    responses: { 204: { description: 'the session is ended and the cookie cleared' } },
  },
  {
    method: 'get', path: '/me', tag: 'Sign-in and account', who: 'signed-in',
    summary: 'Who am I?',
    responses: { 200: { description: 'the signed-in person', schema: 'responses/session-user' } },
  },
  {
    method: 'post', path: '/me/password', tag: 'Sign-in and account', who: 'signed-in',
    summary: 'Change your own password',
    description: 'Your other sessions end, your personal API tokens are revoked and open password-reset links stop working; this session stays signed in.',
    body: { schema: 'api/password-change', required: true },
    responses: { 204: { description: 'changed' } },
    errors: [400],
  },
  {
    method: 'post', path: '/auth/password-reset/request', tag: 'Sign-in and account', who: 'anyone',
    summary: 'Ask for a password-reset link by e-mail',
    description: 'Always answers 202 with the same message, whether or not the address has an account; an enabled account gets a one-time link `PUBLIC_URL/reset-password?token=…`. Every request counts towards the sign-in limit.',
    body: { schema: 'api/password-reset-request', required: true },
    responses: { 202: { description: 'accepted', schema: 'responses/message' } },
    errors: [400, 429],
  },
  {
    method: 'post', path: '/auth/password-reset/confirm', tag: 'Sign-in and account', who: 'anyone',
    summary: 'Set a new password with the e-mailed token',
    description: 'Ends every session of the account and revokes its API tokens. An unknown, expired or used token is a 400; failed attempts are limited.',
    body: { schema: 'api/password-reset-confirm', required: true },
    responses: { 204: { description: 'the new password is set' } },
    errors: [400, 429],
  },

  // ---- admin
  {
    method: 'get', path: '/admin/users', tag: 'Admin', who: ADMIN,
    summary: 'Every account',
    responses: { 200: { description: 'accounts by id', schema: 'responses/accounts' } },
  },
  {
    method: 'post', path: '/admin/users', tag: 'Admin', who: ADMIN,
    summary: 'Create an account',
    body: { schema: 'api/user-create', required: true },
    responses: { 201: { description: 'created', schema: 'responses/account' } },
    errors: [400, 409],
  },
  {
    method: 'patch', path: '/admin/users/:id', tag: 'Admin', who: ADMIN,
    summary: 'Change or disable an account',
    description: 'Disabling an account ends its sessions. You cannot disable yourself or take away your own admin role (400).',
    params: [idPath('account')],
    body: { schema: 'api/user-update', required: true },
    responses: { 200: { description: 'the account after the change', schema: 'responses/account' } },
    errors: [400, 404],
  },
  {
    method: 'get', path: '/admin/outbox', tag: 'Admin', who: ADMIN,
    summary: 'Every e-mail Starveil wrote, newest first',
    params: [limitQuery(50, 500, 'messages'), offsetQuery('messages')],
    responses: { 200: { description: 'one page of the outbox', schema: 'responses/outbox' } },
    errors: [400],
  },

  // ---- catalog
  {
    method: 'get', path: '/overview', tag: 'Catalog', who: 'signed-in',
    summary: 'Survey name, star and instrument counts',
    responses: { 200: { description: 'the overview', schema: 'responses/overview' } },
  },
  {
    method: 'get', path: '/instruments', tag: 'Catalog', who: 'signed-in',
    summary: 'Registered instruments with their bands',
    description: 'Every upload names one of these codes (instrument column or batch field) and only its bands. `measurements` counts the stored measurements taken with each.',
    responses: { 200: { description: 'instruments by code', schema: 'responses/instruments' } },
  },
  {
    method: 'get', path: '/instruments/:code', tag: 'Catalog', who: 'signed-in',
    summary: 'One registered instrument',
    params: [{ name: 'code', in: 'path', required: true, description: 'instrument code (case ignored)', schema: { type: 'string' } }],
    responses: { 200: { description: 'the instrument', schema: 'responses/instrument' } },
    errors: [404],
  },
  {
    method: 'post', path: '/instruments', tag: 'Admin', who: ADMIN,
    summary: 'Register an instrument',
    description: 'The code is what uploads name (letters, digits, `.`, `_`, `-`; at most 40; compared without case). Bands are Johnson–Cousins U, B, V, R, I. Audited.',
    body: { schema: 'api/instrument-create', required: true },
    responses: { 201: { description: 'registered', schema: 'responses/instrument' } },
    errors: [400, 409],
  },
  {
    method: 'patch', path: '/instruments/:code', tag: 'Admin', who: ADMIN,
    summary: 'Change an instrument’s name, bands or description',
    description: 'The code cannot change (uploads and stored measurements name it). New bands apply to uploads from now on; stored measurements keep theirs. Audited.',
    params: [{ name: 'code', in: 'path', required: true, description: 'instrument code (case ignored)', schema: { type: 'string' } }],
    body: { schema: 'api/instrument-update', required: true },
    responses: { 200: { description: 'the instrument after the change', schema: 'responses/instrument' } },
    errors: [400, 404],
  },
  {
    method: 'get', path: '/stars', tag: 'Catalog', who: 'signed-in',
    summary: 'Catalog stars: search by name or source id, or a cone search',
    description: 'A cone search needs a centre and radius together and answers nearest first with `separation_deg`. The centre is ra and dec (ICRS; decimal degrees or sexagesimal as in uploads: RA in hours `14:29:42.6`, Dec `-18:18:24`) or Galactic l and b (degrees). `flag` keeps stars with a visible measurement carrying that flag (GET /plausibility). Stars known only from batches you may not see are hidden.',
    params: [
      query('q', 'text: part of a star name, or an exact source_id', { type: 'string' }),
      query('ra', 'ICRS right ascension of the cone centre: deg in [0, 360), or sexagesimal hours (14:29:42.6, 14h29m42.6s); with dec and radius', { type: ['number', 'string'], minimum: 0, exclusiveMaximum: 360 }),
      query('dec', 'ICRS declination of the cone centre: deg in [−90, 90], or sexagesimal degrees (-18:18:24); with ra and radius', { type: ['number', 'string'], minimum: -90, maximum: 90 }),
      query('l', 'deg, Galactic longitude of the cone centre, [0, 360); with b and radius, instead of ra and dec', { type: 'number', minimum: 0, exclusiveMaximum: 360 }),
      query('b', 'deg, Galactic latitude of the cone centre, [−90, 90]; with l and radius', { type: 'number', minimum: -90, maximum: 90 }),
      query('radius', 'deg, cone radius, (0, 30]; with a centre', { type: 'number', exclusiveMinimum: 0, maximum: 30 }),
      query('flag', 'only stars with a measurement carrying this flag', { enum: ['above_efficiency_envelope', 'above_p_ceiling', 'low_p_snr', 'inconsistent_repeats', 'low_parallax_snr', 'no_distance'] }),
      query('sort', 'column to sort by (default id; a cone search without sort is nearest first)', { enum: STAR_SORTS, default: 'id' }),
      orderQuery('asc'),
      limitQuery(50, 1000, 'stars'),
      offsetQuery('stars'),
    ],
    responses: { 200: { description: 'one page of stars', schema: 'responses/stars' } },
    errors: [400],
  },
  {
    method: 'get', path: '/stars/:id', tag: 'Catalog', who: 'signed-in',
    summary: 'A star, every measurement you may see, and combined values',
    description: 'Combined per band and instrument from approved measurements: inverse-variance weighted q, u with the χ² consistency flag. A star none of whose measurements you may see answers 404 (curators and admins see every star).',
    params: [idPath('star')],
    responses: { 200: { description: 'the star', schema: 'responses/star-detail' } },
    errors: [400, 404],
  },

  // ---- intake
  {
    method: 'post', path: '/batches', tag: 'Intake', who: OBS_CUR,
    summary: 'Upload a CSV batch',
    description: 'Multipart form. Identical bytes again answer 200 with the existing batch (idempotent re-upload). Small files are checked before the answer; larger ones continue in the background (poll GET /batches/{id}). A batch whose headers are ambiguous or incomplete waits in `needs_mapping`.',
    body: {
      required: true,
      inline: {
        contentType: 'multipart/form-data',
        schema: {
          type: 'object',
          required: ['file'],
          properties: {
            file: { type: 'string', contentMediaType: 'text/csv', description: 'the CSV, header line first (columns: GET /intake/columns)' },
            instrument: { type: 'string', description: 'registered instrument code, for rows without an instrument column' },
            mapping: { type: 'string', description: 'JSON object canonical column → header of the file, e.g. {"ra_deg":"RAJ2000"}' },
          },
        },
      },
    },
    responses: {
      201: { description: 'a new batch', schema: 'responses/batch' },
      200: { description: 'these bytes were uploaded before: the existing batch', schema: 'responses/batch' },
    },
    errors: [400, 404, 413, 415],
  },
  {
    method: 'get', path: '/batches', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Batches, newest first',
    params: [query('state', 'only batches in this state', { enum: BATCH_STATES }), limitQuery(100, 500, 'batches'), offsetQuery('batches')],
    responses: { 200: { description: 'one page of batches', schema: 'responses/batches' } },
    errors: [400],
  },
  {
    method: 'get', path: '/batches/:id', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'One batch: state, counts, progress, mapping',
    params: [idPath('batch')],
    responses: { 200: { description: 'the batch', schema: 'responses/batch' } },
    errors: [400, 404],
  },
  {
    method: 'post', path: '/batches/:id/mapping', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Confirm the column mapping; checking starts',
    description: 'Only while the batch is `needs_mapping` (else 409). Every header must exist in the file and the required columns must be covered (else 400, naming each).',
    params: [idPath('batch')],
    body: { schema: 'api/batch-mapping', required: true },
    responses: { 200: { description: 'the batch, checking or checked', schema: 'responses/batch' } },
    errors: [400, 404, 409],
  },
  {
    method: 'get', path: '/batches/:id/rows', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Every row of a batch with errors, warnings and derived values',
    params: [idPath('batch'), query('state', 'only rows in this state', { enum: ROW_STATES }), limitQuery(100, 5000, 'rows'), offsetQuery('rows')],
    responses: { 200: { description: 'one page of rows, by line', schema: 'responses/batch-rows' } },
    errors: [400, 404],
  },
  {
    method: 'get', path: '/batches/:id/errors.csv', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Error report: one line per problem',
    description: 'CSV with the header `line,state,column,field,value,message`.',
    params: [idPath('batch')],
    responses: { 200: { description: 'the error report', content: csvBody } },
    errors: [400, 404],
  },
  {
    method: 'get', path: '/batches/:id/raw', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'The file exactly as received',
    params: [idPath('batch')],
    responses: { 200: { description: 'the raw upload', content: csvBody } },
    errors: [400, 404],
  },
  {
    method: 'get', path: '/intake/columns', tag: 'Intake', who: 'signed-in',
    summary: 'The upload column contract: units, rules, synonyms',
    responses: { 200: { description: 'every canonical column and the conventions', schema: 'responses/intake-columns' } },
  },
  {
    method: 'get', path: '/intake/template.csv', tag: 'Intake', who: 'signed-in',
    summary: 'A template CSV with every column and one example row',
    responses: { 200: { description: 'the template', content: csvBody } },
  },

  // ---- review
  {
    method: 'get', path: '/review/queue', tag: 'Review', who: CUR,
    summary: 'Batches awaiting review (or in another state)',
    params: [
      query('state', 'batches in this state (default awaiting_review)', { enum: ['awaiting_review', 'approved', 'returned', 'needs_mapping', 'checking', 'failed'], default: 'awaiting_review' }),
      query('sort', 'age, rows or uploader (default age; another value also sorts by age)', { enum: ['age', 'rows', 'uploader'], default: 'age' }),
      orderQuery('desc', '; any value but asc is desc'),
    ],
    responses: { 200: { description: 'the queue', schema: 'responses/review-queue' } },
    errors: [400],
  },
  {
    method: 'get', path: '/batches/:id/measurements', tag: 'Review', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'The review table of a batch, paged, sorted and filtered on the server',
    params: [
      idPath('batch'),
      limitQuery(500, 5000, 'measurements'),
      offsetQuery('measurements'),
      query('sort', 'column to sort by (default line)', { enum: [...MEASUREMENT_SORTS], default: 'line' }),
      orderQuery('asc', '; any value but desc is asc'),
      query('filter.state', 'only measurements in this state', { enum: ['pending', 'conflict', 'ambiguous', 'approved', 'rejected', 'withdrawn'] }),
      query('filter.band', 'only this band', { enum: ['U', 'B', 'V', 'R', 'I'] }),
      query('filter.instrument', 'only this instrument code', { type: 'string' }),
      query('filter.distance_method', 'only this distance method', { enum: ['inverse_parallax', 'edsd_mode', 'given'] }),
      query('filter.flag', 'only measurements carrying this quality or plausibility flag (GET /plausibility)', { enum: ['above_efficiency_envelope', 'above_p_ceiling', 'low_p_snr', 'inconsistent_repeats', 'low_parallax_snr', 'no_distance'] }),
      query('search', 'text: part of the star name, or an exact source_id', { type: 'string' }),
    ],
    responses: { 200: { description: 'one page of the table', schema: 'responses/batch-measurements' } },
    errors: [400, 404],
  },
  {
    method: 'patch', path: '/measurements/:id', tag: 'Review', who: CUR,
    summary: 'Edit a measurement',
    description: 'The merged row is validated with the upload schema (schemas/measurement-row.json) and re-derived; the edit is audited. A stale `version` answers 409 with `details.current`, the row as it is now.',
    params: [idPath('measurement')],
    body: { schema: 'api/measurement-patch', required: true },
    responses: { 200: { description: 'the measurement after the edit', schema: 'responses/measurement-edit' } },
    errors: [400, 404, 409],
  },
  {
    method: 'get', path: '/measurements/:id/history', tag: 'Review', who: OBS_CUR, whoNote: 'observers see the history of their own batches’ measurements only',
    summary: 'Audit trail of a measurement: who, when, before, after, reason',
    params: [idPath('measurement')],
    responses: { 200: { description: 'the trail, oldest first', schema: 'responses/measurement-history' } },
    errors: [400, 404],
  },
  {
    method: 'post', path: '/measurements/approve', tag: 'Review', who: CUR,
    summary: 'Approve selected measurements',
    description: 'A held measurement (conflict or ambiguous) answers 409 with `details.ids`; an unknown id 404. Nothing changes on an error.',
    body: { schema: 'api/measurement-ids', required: true },
    responses: { 200: { description: 'done', schema: 'responses/measurement-state-change' } },
    errors: [400, 404, 409],
  },
  {
    method: 'post', path: '/measurements/reject', tag: 'Review', who: CUR,
    summary: 'Reject selected measurements',
    body: { schema: 'api/measurement-ids', required: true },
    responses: { 200: { description: 'done', schema: 'responses/measurement-state-change' } },
    errors: [400, 404],
  },
  {
    method: 'post', path: '/measurements/:id/resolve', tag: 'Review', who: CUR,
    summary: 'Settle a conflict or an ambiguous match',
    description: '`{keep: "this"|"other"}` settles a conflict (the other measurement is rejected); `{starId}` or `{newStar: true, name?}` attaches an ambiguous match. The wrong kind of measurement answers 409.',
    params: [idPath('measurement')],
    body: { schema: 'api/measurement-resolve', required: true },
    responses: { 200: { description: 'settled', schema: 'responses/measurement-resolve' } },
    errors: [400, 404, 409],
  },
  {
    method: 'post', path: '/audit/:id/revert', tag: 'Review', who: CUR,
    summary: 'Undo one recorded edit (itself audited as a revert)',
    params: [idPath('audit entry')],
    body: { required: false, inline: { contentType: 'application/json', schema: { type: 'object', properties: { reason: { type: 'string', description: 'why (default "revert of change N")' } } } } },
    responses: { 200: { description: 'the measurement after the revert', schema: 'responses/measurement-edit' } },
    errors: [400, 404],
  },
  {
    method: 'post', path: '/batches/:id/approve', tag: 'Review', who: CUR,
    summary: 'Approve every pending measurement of a batch',
    description: 'Held rows (conflicts, ambiguous matches) stay held and are counted. Only a checked batch (awaiting_review, approved or returned) can be decided (else 409), and not while its calibration is being applied or reverted (409 `calibration_in_progress`). The uploader is told by e-mail.',
    params: [idPath('batch')],
    body: { schema: 'api/batch-decision', required: false },
    responses: { 200: { description: 'the decision', schema: 'responses/batch-decision' } },
    errors: [400, 404, 409],
  },
  {
    method: 'post', path: '/batches/:id/reject', tag: 'Review', who: CUR,
    summary: 'Return a batch: every pending measurement is rejected',
    description: 'Approved measurements of the batch are withdrawn from the approved catalog (state withdrawn, counts.withdrawn; audited) until the batch is approved again, which restores them (counts.restored).',
    params: [idPath('batch')],
    body: { schema: 'api/batch-decision', required: false },
    responses: { 200: { description: 'the decision', schema: 'responses/batch-decision' } },
    errors: [400, 404, 409],
  },

  // ---- tomography
  {
    method: 'post', path: '/tomography/runs', tag: 'Tomography', who: CUR,
    summary: 'Start a tomography run',
    description: 'Queued, then fitted on worker threads off the request path; poll GET /tomography/runs/{id}. Send a JSON object: parameters left out take their defaults (`{}` = all defaults); no body is a 400 naming `body`. Limits: at most 2 runs queued or running per person (429), and at most 2,000,000 Monte Carlo draws × cells per run, cells counted as at most (approved stars in the band and region ÷ minStars) (400 naming `draws`). A run the server was fitting when it stopped is `interrupted` on the next start (its reason in `error`, no cells kept); a queued one is queued again.',
    body: { schema: 'api/tomography-run', required: true },
    responses: { 202: { description: 'queued', schema: 'responses/tomography-run' } },
    errors: [400, 429],
  },
  {
    method: 'get', path: '/tomography/runs', tag: 'Tomography', who: 'signed-in',
    summary: 'Runs, newest first (at most 100)',
    responses: { 200: { description: 'the runs', schema: 'responses/tomography-runs' } },
  },
  {
    method: 'get', path: '/tomography/runs/:id', tag: 'Tomography', who: 'signed-in',
    summary: 'One run: state, progress, parameters, fingerprint',
    params: [idPath('run')],
    responses: { 200: { description: 'the run', schema: 'responses/tomography-run' } },
    errors: [400, 404],
  },
  {
    method: 'post', path: '/tomography/runs/:id/cancel', tag: 'Tomography', who: CUR,
    summary: 'End a queued or running run (also one left open by a restart); nothing of it is stored',
    params: [idPath('run')],
    responses: { 200: { description: 'the run, cancelled (or stopping)', schema: 'responses/tomography-run' } },
    errors: [400, 404, 409],
  },
  {
    method: 'get', path: '/tomography/runs/:id/cells', tag: 'Tomography', who: 'signed-in',
    summary: 'Every cell of a finished run, compact (for a sky map)',
    description: 'A run that is not finished answers 409. (Today an id that is not a positive integer, e.g. `abc` or `0`, answers with the latest finished run instead of a 400.)',
    params: [idPath('run')],
    responses: { 200: { description: 'the cells', schema: 'responses/tomography-cells' } },
    errors: [404, 409],
  },
  {
    method: 'get', path: '/sightlines', tag: 'Tomography', who: 'signed-in',
    summary: 'Dust layers per cell: by pixel or in a cone',
    description: 'Give either `nside` and `ipix` (nested, in the run’s coordinate system) or `ra`, `dec` and `radius` (ICRS). A cone returns every cell of the run that overlaps it — the cell containing the point always among them, even when its centre is outside the cone — each with `separationDeg` (cone centre to cell centre), nearest first; the cells are found through the HEALPix index (an inclusive disc query gives candidate pixel ranges; each candidate is then tested exactly, refined to 1/64 of a cell at the cone’s edge), never by reading the whole run. Per cell: star count, number of layers and its support, layers (distance, Stokes, angle), jumps between successive layers and the run it came from; criteria parameters keep only the cells that meet them. Starlight polarization is parallel to the plane-of-sky magnetic field; dust emission is polarized perpendicular to it, so add 90° to a layer angle before comparing it with an emission map.',
    params: [
      query('nside', 'HEALPix NSIDE; must be the run’s NSIDE (with ipix)', { type: 'integer', enum: [16, 32, 64, 128, 256] }),
      query('ipix', 'HEALPix pixel index, nested ordering, 0 to 12·nside² − 1 (with nside)', { type: 'integer', minimum: 0 }),
      ...coneQuery(30, '; instead of nside and ipix'),
      ...runChoiceQuery,
      query('include', 'stars: also the stars of each cell as the run used them; only for cones of radius ≤ 5° touching at most 50 cells (else 400 naming include)', { enum: ['stars'] }),
      ...criteriaQuery(0),
      conventionQuery,
      formatQuery(['json', 'csv'], 'json (default) or csv: one row per layer with a units header'),
    ],
    responses: { 200: { description: 'the cells', schema: 'responses/sightlines', content: { 'text/csv': { type: 'string', description: 'format=csv: one row per layer' } }, headers: provenanceHeaders } },
    errors: [400, 404, 409],
  },

  // ---- releases
  {
    method: 'post', path: '/releases', tag: 'Releases', who: CUR,
    summary: 'Freeze a release: a run and copies of the approved catalog',
    description: 'A release never changes afterwards; a tag in use answers 409, as does a run that is not finished.',
    body: { schema: 'api/release-create', required: true },
    responses: { 201: { description: 'frozen', schema: 'responses/release' } },
    errors: [400, 404, 409],
  },
  {
    method: 'get', path: '/releases', tag: 'Releases', who: 'signed-in',
    summary: 'Releases, newest first',
    responses: { 200: { description: 'the releases', schema: 'responses/releases' } },
  },
  {
    method: 'get', path: '/releases/:tag', tag: 'Releases', who: 'signed-in',
    summary: 'One release with its counts',
    params: [tagParam],
    responses: { 200: { description: 'the release', schema: 'responses/release' } },
    errors: [404],
  },

  // ---- tokens
  {
    method: 'post', path: '/tokens', tag: 'Tokens', who: 'signed-in',
    summary: 'Create a personal API token (its secret is shown once)',
    description: 'Needs the session cookie: a token cannot make tokens. At most 25 active tokens per person (409).',
    body: { schema: 'api/token-create', required: true },
    responses: { 201: { description: 'created; keep the secret now', schema: 'responses/token-created' } },
    errors: [400, 409],
  },
  {
    method: 'get', path: '/tokens', tag: 'Tokens', who: 'signed-in', whoNote: 'each person sees their own tokens',
    summary: 'Your tokens, newest first (without secrets)',
    responses: { 200: { description: 'your tokens', schema: 'responses/tokens' } },
  },
  {
    method: 'delete', path: '/tokens/:id', tag: 'Tokens', who: 'signed-in', whoNote: 'your own tokens only (another person’s answers 404)',
    summary: 'Revoke one of your tokens (again: no change)',
    params: [idPath('token')],
    responses: { 204: { description: 'revoked' } },
    errors: [400, 404],
  },

  // ---- sky and masks
  {
    method: 'get', path: '/sky', tag: 'Sky and masks', who: 'signed-in',
    summary: 'Every cell of a run in pixel order, page by page, with layers and jumps',
    description: 'Pages follow the HEALPix nested pixel order of the run: pass the answer’s `next` (also in the Starveil-Next-Cursor header) as `cursor` until it is null. Criteria keep only the cells that meet them.',
    params: [
      limitQuery(1000, 5000, 'cells'),
      query('cursor', 'the `next` value of the previous page, unchanged (a nested pixel index of this run); absent for the first page', { type: 'string', pattern: '^[0-9]{1,16}$' }),
      ...runChoiceQuery,
      ...criteriaQuery(0),
      conventionQuery,
      formatQuery(['json', 'csv'], 'json (default) or csv: one row per layer with a units header'),
    ],
    responses: {
      200: {
        description: 'one page of cells',
        schema: 'responses/sky',
        content: { 'text/csv': { type: 'string' } },
        headers: { ...provenanceHeaders, 'Starveil-Next-Cursor': { description: 'cursor of the next page; absent on the last page', schema: { type: 'string' } } },
      },
    },
    errors: [400, 404, 409],
  },
  {
    method: 'get', path: '/masks', tag: 'Sky and masks', who: 'signed-in',
    summary: 'Sky mask of the cells that meet every criterion (by default: more than one cloud)',
    description: 'Where two clouds with differently oriented fields overlap, a single-layer dust model fails; the mask flags those sightlines. Formats: fits (default) — a full-sky HEALPix map in the run’s frame, nested ordering, readable by the standard HEALPix libraries (columns MASK, MAX_JUMP in deg, N_LAYERS); moc-json and moc-ascii — an IVOA MOC of the flagged cells, always ICRS; csv — the flagged pixels with a units header, streamed, at most 1,000,000 rows (else 400 naming format and the limit; header Starveil-Rows gives the count), text cells formula-safe; json — a summary with every cell.',
    params: [
      formatQuery(['fits', 'moc-json', 'moc-ascii', 'csv', 'json'], 'fits (default), moc-json, moc-ascii, csv or json'),
      query('nside', 'HEALPix NSIDE of the mask: a power of two from the run’s NSIDE up to 512 (default the run’s)', { type: 'integer', minimum: 1, maximum: 512 }),
      ...runChoiceQuery,
      ...criteriaQuery(2),
      conventionQuery,
    ],
    responses: {
      200: {
        description: 'the mask in the format asked for',
        schema: 'responses/masks',
        content: {
          'application/fits': { type: 'string', contentMediaType: 'application/fits', description: 'binary table HEALPix map (format=fits)' },
          'text/plain': { type: 'string', description: 'MOC in the IVOA ASCII serialisation (format=moc-ascii)' },
          'text/csv': { type: 'string', description: 'flagged pixels (format=csv)' },
        },
        headers: {
          ...provenanceHeaders,
          'Starveil-Flagged-Cells': { description: 'count of cells meeting every criterion', schema: { type: 'integer' } },
          'Starveil-Moc-Order': { description: 'HEALPix order of the MOC (moc formats)', schema: { type: 'integer' } },
        },
      },
    },
    errors: [400, 404, 409],
  },

  // ---- calibration from standard stars, plausibility (server/calibration)
  {
    method: 'get', path: '/standard-stars', tag: 'Catalog', who: 'signed-in',
    summary: 'Standard stars: reference p and θ per band, each with its source',
    description: 'Seeded with the standards of Schmidt, Elston & Lupie 1992 (AJ 104, 1563), values from memory (`fromMemory: true`). A batch row is a standard when its name matches (case and spacing ignored: `HD 204827` = `HD204827`) or it lies within 5″ of a recorded position. Angles IAU (north through east), equatorial; p as a fraction.',
    responses: { 200: { description: 'by name, then band', schema: 'responses/calibration-standard-stars' } },
  },
  {
    method: 'post', path: '/standard-stars', tag: 'Catalog', who: CUR,
    summary: 'Add a standard star’s reference in one band, with its source',
    description: 'Without `thetaDeg` the star is an unpolarized standard (its p an upper value). One entry per star and band (409 for a second). Audited.',
    body: { schema: 'api/calibration-standard-star', required: true },
    responses: { 201: { description: 'the new entry', schema: 'responses/calibration-standard-star' } },
    errors: [400, 409],
  },
  {
    method: 'get', path: '/batches/:id/calibration', tag: 'Review', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'The batch’s calibration from its standard-star rows, per instrument, band and night',
    description: 'Instrumental (q, u): inverse-variance weighted mean over unpolarized standards. Angle zero-point: axial weighted mean of θ_obs − θ_ref over polarized standards after the instrumental (q, u) is subtracted (doubled angles; Mardia & Jupp 2000). Residuals per standard. Nights run from UTC noon to noon. Once applied, the stored calibration is shown (`applied: true`).',
    params: [idPath('batch')],
    responses: { 200: { description: 'derived or applied calibrations', schema: 'responses/calibration' } },
    errors: [400, 404],
  },
  {
    method: 'post', path: '/batches/:id/calibration/apply', tag: 'Review', who: CUR,
    summary: 'Apply the batch’s calibration once',
    description: 'For every row of each instrument, band and night with standards: subtract the instrumental (q, u), rotate by −zero-point (q′ = q cos2ψ + u sin2ψ, u′ = −q sin2ψ + u cos2ψ, so θ′ = θ − ψ), propagate the errors (including those of the terms) and re-derive p, θ, debiased p and the Galactic-frame values. The uploaded file is kept as received; every row is audited with before and after. The rows are written in short transactions; meanwhile the calibration is `applying` (GET …/calibration answers `applied: false` with that state) and another apply or a revert is a 409 (`calibration_in_progress`); an apply interrupted part-way (server stopped) is rolled back from the stored values at start-up and shows as `failed` in the instrument history. A second apply is a 409 (`already_calibrated`); a batch without usable standards is a 409 (`no_standards`); an approved batch is a 409 (`batch_approved`): return it first, calibrate, approve again, so the approved catalog only changes all at once.',
    params: [idPath('batch')],
    body: { schema: 'api/calibration-action' },
    responses: { 200: { description: 'applied', schema: 'responses/calibration-apply' } },
    errors: [400, 404, 409],
  },
  {
    method: 'post', path: '/batches/:id/calibration/revert', tag: 'Review', who: CUR,
    summary: 'Revert the batch’s applied calibration',
    description: 'Restores each calibrated row to its values before the calibration (audited). 409 when nothing is applied (`not_calibrated`), a calibration is being applied or reverted now (`calibration_in_progress`) or a calibrated row was edited since (`edited_since`, also when a row is edited while the revert is under way: the rows restored so far are put back). Written in short transactions (`reverting` meanwhile). An approved batch is a 409 (`batch_approved`).',
    params: [idPath('batch')],
    body: { schema: 'api/calibration-action' },
    responses: { 200: { description: 'reverted', schema: 'responses/calibration-revert' } },
    errors: [400, 404, 409],
  },
  {
    method: 'get', path: '/instruments/:code/calibrations', tag: 'Catalog', who: 'signed-in',
    summary: 'An instrument’s history of calibrations, newest first',
    params: [{ name: 'code', in: 'path', required: true, description: 'instrument code (case ignored)', schema: { type: 'string' } }],
    responses: { 200: { description: 'applied and reverted calibrations', schema: 'responses/calibration-history' } },
    errors: [404],
  },
  {
    method: 'get', path: '/plausibility', tag: 'Catalog', who: 'signed-in',
    summary: 'Plausibility flags and their thresholds',
    description: 'Flags mark a value for attention, nothing is dropped: `above_efficiency_envelope` (p/E(B−V) > 9 %/mag, Serkowski et al. 1975), `above_p_ceiling`, `low_p_snr` (p/σp < 5: the angle is not Gaussian, Naghizadeh-Khouei & Clarke 1993), `inconsistent_repeats` (χ² tail probability < 0.001 among a star’s repeats in one band and instrument). Filter the review table with `filter.flag=` and the catalog with `flag=`.',
    responses: { 200: { description: 'thresholds and flag descriptions', schema: 'responses/calibration-plausibility' } },
  },
  {
    method: 'patch', path: '/plausibility', tag: 'Catalog', who: CUR,
    summary: 'Change the ceiling on p',
    body: { schema: 'api/calibration-plausibility', required: true },
    responses: { 200: { description: 'the settings after the change', schema: 'responses/calibration-plausibility' } },
    errors: [400],
  },
  {
    method: 'get', path: '/batches/:id/decision', tag: 'Review', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'The curator’s decision and note on a batch, as its uploader reads it',
    description: 'The note a curator wrote when approving or returning the batch, who decided and when, the measurements by state after the decision, and the corrected files linked to it.',
    params: [idPath('batch')],
    responses: { 200: { description: 'the decision', schema: 'responses/calibration-decision' } },
    errors: [400, 404],
  },
  {
    method: 'post', path: '/batches/:id/replaces', tag: 'Review', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Link this upload as the corrected file of a returned batch',
    description: 'Send the corrected file with POST /batches first, then link it here to the returned batch it replaces (`batchId`). 409 when that batch is not returned (`not_returned`) or this one already replaces another (`already_linked`). Audited.',
    params: [idPath('batch')],
    body: { schema: 'api/calibration-replaces', required: true },
    responses: { 200: { description: 'the new batch’s decision record, naming the batch it replaces', schema: 'responses/calibration-decision' } },
    errors: [400, 404, 409],
  },
];
