import fs from 'node:fs';
import path from 'node:path';
import type { RequestHandler } from 'express';
import multer from 'multer';
import { stringify } from 'csv-stringify/sync';
import type { Config } from '../config.js';
import { AppError, badRequest } from '../errors.js';
import { reply, route } from '../lib/route.js';
import { idPath, pageQuery, query } from '../lib/query.js';
import { BATCH_STATES } from '../lib/visibility.js';
import { COLUMNS } from '../measurements/service.js';
import type { IntakeService } from './service.js';

const ROW_STATES = ['accepted', 'rejected', 'duplicate', 'conflict', 'ambiguous'];

/** A repeated text field or an unusable file name in an upload (multer turns a repeated field into an array). */
function uploadFieldProblem(body: Record<string, unknown> | undefined, filename: string): { field: string; message: string } | null {
  for (const field of ['instrument', 'mapping']) {
    const v = body?.[field];
    if (v !== undefined && typeof v !== 'string') return { field, message: `The multipart field "${field}" was sent ${Array.isArray(v) ? v.length : 'more than one'} times; send it once.` };
  }
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u001f\u007f]/.test(filename)) return { field: 'file', message: 'The file name contains a control character (such as a NUL byte); rename the file and upload again.' };
  return null;
}

export interface IntakeDeps {
  intake: IntakeService;
  config: Config;
}

/** multer for one file in the field "file", its refusals as AppErrors naming the field. */
function uploadOne(config: Config): RequestHandler {
  const tmpDir = path.join(config.dataDir, 'uploads', 'tmp');
  fs.mkdirSync(tmpDir, { recursive: true });
  // file names arrive as UTF-8 bytes (browsers, curl): decode them as such, not as latin1
  const upload = multer({ dest: tmpDir, limits: { fileSize: config.uploadMaxBytes, files: 1, fields: 10 }, defParamCharset: 'utf8' } as multer.Options);
  return (req, res, next) => {
    upload.single('file')(req, res, (err: unknown) => {
      if (!err) return next();
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') return next(new AppError(413, 'too_large', `The file is larger than the limit of ${(config.uploadMaxBytes / 1048576).toFixed(0)} MB.`, { fields: [{ field: 'file', message: `over ${config.uploadMaxBytes} bytes` }] }));
        return next(badRequest(`Upload problem: ${err.message}${err.field ? ` (field ${err.field})` : ''}. Send one file in the multipart field "file".`, { fields: [{ field: err.field ?? 'file', message: err.message }] }));
      }
      // busboy refuses a part header it cannot read (e.g. a NUL byte in the file name) or a cut-off form
      if (err instanceof Error && !('status' in err) && /malformed|unexpected end of form|multipart/i.test(err.message)) {
        return next(badRequest(`The upload form cannot be read (${err.message}): a part header holds a control character such as a NUL byte in the file name, or the form is cut off. Rename the file and send it again in the multipart field "file".`, { fields: [{ field: 'file', message: err.message }] }));
      }
      next(err);
    });
  };
}

const OBS_CUR = ['observer', 'curator'] as const;
const OWN_BATCHES = 'observers see their own batches only (another observer’s batch answers 404)';
const csvBody = { 'text/csv': { type: 'string' } };

/** Upload a batch (multer), confirm its mapping, read it back: batches, rows, error report, the raw file; the column contract and template. */
export const intakeRoutes = [
  route<IntakeDeps>({
    method: 'post', path: '/batches', tag: 'Intake', who: OBS_CUR,
    summary: 'Upload a CSV batch',
    description: 'Multipart form. Identical bytes again answer 200 with the existing batch (idempotent re-upload). Small files are checked before the answer; larger ones continue in the background (poll GET /batches/{id}). A batch whose headers are ambiguous or incomplete waits in `needs_mapping`. A repeated `instrument` or `mapping` field, or a control character in the file name, is a 400 naming it.',
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
    middleware: ({ config }) => [uploadOne(config)],
    handler: async ({ req, user }, { intake }) => {
      if (!req.file) throw badRequest('No file: send the CSV in the multipart form field "file".', { fields: [{ field: 'file', message: 'required' }] });
      const problem = uploadFieldProblem(req.body, req.file.originalname);
      if (problem) {
        fs.rmSync(req.file.path, { force: true });
        throw badRequest(problem.message, { fields: [problem] });
      }
      const { created, batch } = await intake.upload(user, req.file, { instrument: req.body?.instrument, mapping: req.body?.mapping });
      return reply(created ? 201 : 200, batch);
    },
  }),

  route<IntakeDeps, object, { state?: string; limit: number; offset: number }>({
    method: 'get', path: '/batches', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Batches, newest first',
    query: { state: query('only batches in this state', { type: 'string', enum: [...BATCH_STATES] }), ...pageQuery(100, 500, 'batches') },
    responses: { 200: { description: 'one page of batches', schema: 'responses/batches' } },
    errors: [400],
    handler: ({ user, query: q }, { intake }) => intake.list(user, q),
  }),

  route<IntakeDeps, { id: number }>({
    method: 'get', path: '/batches/:id', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'One batch: state, counts, progress, mapping',
    params: idPath('batch'),
    responses: { 200: { description: 'the batch', schema: 'responses/batch' } },
    errors: [400, 404],
    handler: ({ user, params }, { intake }) => intake.get(user, params.id),
  }),

  route<IntakeDeps, { id: number }>({
    method: 'post', path: '/batches/:id/mapping', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Confirm the column mapping; checking starts',
    description: 'Only while the batch is `needs_mapping` (else 409). Every header must exist in the file and the required columns must be covered (else 400, naming each).',
    params: idPath('batch'),
    body: { schema: 'api/batch-mapping', required: true },
    responses: { 200: { description: 'the batch, checking or checked', schema: 'responses/batch' } },
    errors: [400, 404, 409],
    handler: ({ user, params, body }, { intake }) => intake.confirmMapping(user, params.id, body.mapping, Boolean(body.saveForInstrument)),
  }),

  route<IntakeDeps, { id: number }, { state?: string; limit: number; offset: number }>({
    method: 'get', path: '/batches/:id/rows', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Every row of a batch with errors, warnings and derived values',
    params: idPath('batch'),
    query: { state: query('only rows in this state', { type: 'string', enum: ROW_STATES }), ...pageQuery(100, 5000, 'rows') },
    responses: { 200: { description: 'one page of rows, by line', schema: 'responses/batch-rows' } },
    errors: [400, 404],
    handler: ({ user, params, query: q }, { intake }) => intake.rows(user, params.id, q),
  }),

  route<IntakeDeps, { id: number }>({
    method: 'get', path: '/batches/:id/errors.csv', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'Error report: one line per problem',
    description: 'CSV with the header `line,state,column,field,value,message`.',
    params: idPath('batch'),
    responses: { 200: { description: 'the error report', content: csvBody } },
    errors: [400, 404],
    handler: async ({ user, params, res }, { intake }) => {
      const csv = await intake.errorsCsv(user, params.id);
      res.type('text/csv; charset=utf-8').attachment(`batch-${params.id}-errors.csv`).send(csv);
      return undefined;
    },
  }),

  route<IntakeDeps, { id: number }>({
    method: 'get', path: '/batches/:id/raw', tag: 'Intake', who: OBS_CUR, whoNote: OWN_BATCHES,
    summary: 'The file exactly as received',
    params: idPath('batch'),
    responses: { 200: { description: 'the raw upload', content: csvBody } },
    errors: [400, 404],
    handler: async ({ user, params, res }, { intake }) => {
      const { path: p, filename } = await intake.raw(user, params.id);
      res.type('text/csv').attachment(filename);
      await new Promise<void>((resolve, reject) => res.sendFile(p, (err) => (err ? reject(err) : resolve())));
      return undefined;
    },
  }),

  route<IntakeDeps>({
    method: 'get', path: '/intake/columns', tag: 'Intake', who: 'signed-in',
    summary: 'The upload column contract: units, rules, synonyms',
    responses: { 200: { description: 'every canonical column and the conventions', schema: 'responses/intake-columns' } },
    handler: () => ({
      columns: COLUMNS.map((c) => ({ name: c.name, unit: c.unit, required: c.required, description: c.description, synonyms: c.synonyms })),
      conventions: {
        fractions: 'q, u, p and their errors are fractions; the columns ending in _pct carry percent',
        angles: 'degrees, IAU convention: from north through east, wrapped into [0, 180)',
        angleFrame: 'angle_frame = equatorial (default) or galactic: the reference direction of q, u and theta',
        positions: 'ICRS; ra_deg and dec_deg accept decimal degrees or sexagesimal text (05:34:31.9, +22 00 52)',
        sourceId: 'source_id is text end to end (64-bit identifiers are never rounded)',
        parallax: 'parallax as published; Starveil adds the +0.017 mas global zero point (Lindegren et al. 2021)',
      },
    }),
  }),

  route<IntakeDeps>({
    method: 'get', path: '/intake/template.csv', tag: 'Intake', who: 'signed-in',
    summary: 'A template CSV with every column and one example row',
    responses: { 200: { description: 'the template', content: csvBody } },
    handler: ({ res }) => {
      const header = COLUMNS.filter((c) => !c.percentOf).map((c) => c.name);
      const example: Record<string, string> = {
        name: 'KRS J053431.9+220052', source_id: '4295806720123456789', ra_deg: '05:34:31.9', dec_deg: '+22 00 52', band: 'V',
        q: '0.0123', u: '-0.0045', q_err: '0.0008', u_err: '0.0008', angle_frame: 'equatorial', parallax_mas: '1.9', parallax_err_mas: '0.05',
        mjd: '61005.2431', instrument: 'KR-HAWK', ebv: '0.21',
      };
      // our own fixed text (no formula neutralising: the example values must upload as they are)
      const csv = stringify([header, header.map((h) => example[h] ?? '')], { record_delimiter: 'windows' });
      res.type('text/csv; charset=utf-8').attachment('starveil-template.csv').send(csv);
      return undefined;
    },
  }),
];
