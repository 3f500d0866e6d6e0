import fs from 'node:fs';
import path from 'node:path';
import { Router, type RequestHandler } from 'express';
import multer from 'multer';
import { guard } from '../auth/roles.js';
import type { Config } from '../config.js';
import { AppError, badRequest } from '../errors.js';
import { validateBody } from '../lib/validate.js';
import { COLUMNS } from '../measurements/columns.js';
import type { IntakeService } from './service.js';

const ROW_STATES = ['accepted', 'rejected', 'duplicate', 'conflict', 'ambiguous'];
const BATCH_STATES = ['received', 'needs_mapping', 'checking', 'awaiting_review', 'failed', 'approved', 'returned'];

function page(q: Record<string, unknown>, maxLimit = 5000) {
  const limit = q.limit === undefined ? 100 : Number(q.limit);
  const offset = q.offset === undefined ? 0 : Number(q.offset);
  if (!Number.isInteger(limit) || limit < 1 || limit > maxLimit) throw badRequest(`limit must be an integer from 1 to ${maxLimit}`, { fields: [{ field: 'limit', message: `expected 1–${maxLimit}` }] });
  if (!Number.isInteger(offset) || offset < 0) throw badRequest('offset must be an integer ≥ 0', { fields: [{ field: 'offset', message: 'expected ≥ 0' }] });
  return { limit, offset };
}

function idParam(v: unknown): number {
  const id = Number(v);
  if (!Number.isInteger(id) || id < 1) throw badRequest('The batch id in the path must be a positive integer.', { fields: [{ field: 'id', message: 'expected a positive integer' }] });
  return id;
}

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

export function intakeRoutes(deps: { intake: IntakeService; config: Config }): Router {
  const { intake, config } = deps;
  const r = Router();
  const tmpDir = path.join(config.dataDir, 'uploads', 'tmp');
  fs.mkdirSync(tmpDir, { recursive: true });
  // file names arrive as UTF-8 bytes (browsers, curl): decode them as such, not as latin1
  const upload = multer({ dest: tmpDir, limits: { fileSize: config.uploadMaxBytes, files: 1, fields: 10 }, defParamCharset: 'utf8' } as multer.Options);
  const uploadOne: RequestHandler = (req, res, next) => {
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
  const uploaders = guard(['observer', 'curator']);
  const readers = guard(['observer', 'curator']);

  r.post('/batches', uploaders, uploadOne, async (req, res) => {
    if (!req.file) throw badRequest('No file: send the CSV in the multipart form field "file".', { fields: [{ field: 'file', message: 'required' }] });
    const problem = uploadFieldProblem(req.body, req.file.originalname);
    if (problem) {
      fs.rmSync(req.file.path, { force: true });
      throw badRequest(problem.message, { fields: [problem] });
    }
    const { created, batch } = await intake.upload(req.user!, req.file, { instrument: req.body?.instrument, mapping: req.body?.mapping });
    res.status(created ? 201 : 200).json(batch);
  });

  r.get('/batches', readers, async (req, res) => {
    const state = req.query.state as string | undefined;
    if (state && !BATCH_STATES.includes(state)) throw badRequest(`state must be one of ${BATCH_STATES.join(', ')}`, { fields: [{ field: 'state', message: 'unknown state' }] });
    res.json(await intake.list(req.user!, { state, ...page(req.query, 500) }));
  });

  r.get('/batches/:id', readers, async (req, res) => {
    res.json(await intake.get(req.user!, idParam(req.params.id)));
  });

  r.post('/batches/:id/mapping', uploaders, validateBody('api/batch-mapping'), async (req, res) => {
    res.json(await intake.confirmMapping(req.user!, idParam(req.params.id), req.body.mapping, Boolean(req.body.saveForInstrument)));
  });

  r.get('/batches/:id/rows', readers, async (req, res) => {
    const state = req.query.state as string | undefined;
    if (state && !ROW_STATES.includes(state)) throw badRequest(`state must be one of ${ROW_STATES.join(', ')}`, { fields: [{ field: 'state', message: 'unknown row state' }] });
    res.json(await intake.rows(req.user!, idParam(req.params.id), { state, ...page(req.query, 5000) }));
  });

  r.get('/batches/:id/errors.csv', readers, async (req, res) => {
    const id = idParam(req.params.id);
    const csv = await intake.errorsCsv(req.user!, id);
    res.type('text/csv; charset=utf-8').attachment(`batch-${id}-errors.csv`).send(csv);
  });

  r.get('/batches/:id/raw', readers, async (req, res) => {
    const { path: p, filename } = await intake.raw(req.user!, idParam(req.params.id));
    res.type('text/csv').attachment(filename);
    res.sendFile(p);
  });

  r.get('/intake/columns', guard('signed-in'), (_req, res) => {
    res.json({
      columns: COLUMNS.map((c) => ({ name: c.name, unit: c.unit, required: c.required, description: c.description, synonyms: c.synonyms })),
      conventions: {
        fractions: 'q, u, p and their errors are fractions; the columns ending in _pct carry percent',
        angles: 'degrees, IAU convention: from north through east, wrapped into [0, 180)',
        angleFrame: 'angle_frame = equatorial (default) or galactic: the reference direction of q, u and theta',
        positions: 'ICRS; ra_deg and dec_deg accept decimal degrees or sexagesimal text (05:34:31.9, +22 00 52)',
        sourceId: 'source_id is text end to end (64-bit identifiers are never rounded)',
        parallax: 'parallax as published; Starveil adds the +0.017 mas global zero point (Lindegren et al. 2021)',
      },
    });
  });

  r.get('/intake/template.csv', guard('signed-in'), (_req, res) => {
    const header = COLUMNS.filter((c) => !c.percentOf).map((c) => c.name);
    const example: Record<string, string> = {
      name: 'KRS J053431.9+220052', source_id: '4295806720123456789', ra_deg: '05:34:31.9', dec_deg: '+22 00 52', band: 'V',
      q: '0.0123', u: '-0.0045', q_err: '0.0008', u_err: '0.0008', angle_frame: 'equatorial', parallax_mas: '1.9', parallax_err_mas: '0.05',
      mjd: '61005.2431', instrument: 'KR-HAWK', ebv: '0.21',
    };
    const csv = `${header.join(',')}\r\n${header.map((h) => example[h] ?? '').join(',')}\r\n`;
    res.type('text/csv; charset=utf-8').attachment('starveil-template.csv').send(csv);
  });

  return r;
}
