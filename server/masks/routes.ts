import { Router } from 'express';
import { guard } from '../auth/roles.js';
import { badRequest } from '../errors.js';
import { npixForNside } from '../science/healpix.js';
import { mocToAscii, mocToJson, mocSkyFraction, mocCellCount } from '../science/moc.js';
import { SIGHTLINE_CONVENTIONS } from '../tomography/routes.js';
import { choiceParam, conventionParam, criteriaParams, MASK_DEFAULTS, NO_CRITERIA, numberParam, runParams, runSummary, sendCells, setProvenanceHeaders, streamCsv } from './format.js';
import { assertMaskCsvSize, maskCells, maskCsvPieces, maskFits, maskMoc, maskNside } from './mask.js';
import type { SkyService } from './service.js';

export const SKY_DEFAULT_LIMIT = 1000;
export const SKY_MAX_LIMIT = 5000;
const MASK_FORMATS = ['fits', 'moc-json', 'moc-ascii', 'csv', 'json'] as const;

export function maskRoutes(deps: { sky: SkyService }): Router {
  const { sky } = deps;
  const r = Router();
  const readers = guard('signed-in');

  // Every cell of a run in pixel order, page by page, with layers and jumps.
  r.get('/sky', readers, async (req, res) => {
    const q = req.query as Record<string, unknown>;
    const criteria = criteriaParams(q, NO_CRITERIA);
    const format = choiceParam(q, 'format', ['json', 'csv'] as const);
    const convention = conventionParam(q);
    const limit = numberParam(q, 'limit', { min: 1, max: SKY_MAX_LIMIT, integer: true }) ?? SKY_DEFAULT_LIMIT;
    const rawCursor = q.cursor;
    if (rawCursor !== undefined && (typeof rawCursor !== 'string' || !/^\d{1,16}$/.test(rawCursor))) {
      throw badRequest('cursor must be the "next" value of a previous page, unchanged', { fields: [{ field: 'cursor', message: 'expected the next value of a previous page' }] });
    }
    const { runId, releaseTag } = runParams(q);
    const run = await sky.resolveRun(runId, releaseTag);
    const cursor = rawCursor === undefined ? 0 : Number(rawCursor);
    if (cursor >= npixForNside(run.params.nside)) {
      throw badRequest(`cursor ${cursor} is not a pixel of run ${run.id} (NSIDE ${run.params.nside}); pass the "next" value of a previous page of this run`, { fields: [{ field: 'cursor', message: 'not from this run' }] });
    }
    const page = await sky.page(run, { cursor, limit, criteria });
    const next = page.next === null ? null : String(page.next);
    if (next !== null) res.setHeader('Starveil-Next-Cursor', next);
    sendCells(res, {
      what: 'sky listing: cells in HEALPix NESTED order',
      run, convention, format, criteria,
      cells: page.cells,
      conventions: SIGHTLINE_CONVENTIONS,
      extra: { limit, next },
      csvExtra: [`page: up to ${limit} cells; next cursor: ${next ?? 'none (last page)'}`],
    });
  });

  // Masks of the cells that meet every criterion: HEALPix FITS, MOC (JSON or ASCII), CSV, or a JSON summary.
  r.get('/masks', readers, async (req, res) => {
    const q = req.query as Record<string, unknown>;
    const criteria = criteriaParams(q, MASK_DEFAULTS);
    const format = choiceParam(q, 'format', MASK_FORMATS);
    const convention = conventionParam(q);
    const requestedNside = numberParam(q, 'nside', { min: 1, integer: true });
    const { runId, releaseTag } = runParams(q);
    const run = await sky.resolveRun(runId, releaseTag);
    const nside = maskNside(run, requestedNside);
    const cells = maskCells(await sky.allCells(run), criteria);
    const name = `starveil-mask-run${run.id}${run.release ? `-${run.release}` : ''}-nside${nside}`;
    setProvenanceHeaders(res, run, convention);
    res.setHeader('Starveil-Flagged-Cells', String(cells.filter((c) => c.flagged).length));
    if (format === 'fits') {
      const bytes = maskFits(run, cells, nside, criteria, convention);
      res.attachment(`${name}.fits`).type('application/fits').send(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength));
      return;
    }
    if (format === 'csv') {
      // streamed in pieces: a fine mask is hundreds of thousands of rows
      const rows = assertMaskCsvSize(run, cells, nside);
      res.setHeader('Starveil-Rows', String(rows));
      res.attachment(`${name}.csv`).type('text/csv; charset=utf-8');
      await streamCsv(res, maskCsvPieces(run, cells, nside, criteria, convention));
      return;
    }
    const { moc, order } = maskMoc(run, cells, nside);
    res.setHeader('Starveil-Moc-Order', String(order));
    if (format === 'moc-json') {
      res.attachment(`${name}.moc.json`).type('application/json').send(JSON.stringify(mocToJson(moc)));
      return;
    }
    if (format === 'moc-ascii') {
      res.attachment(`${name}.moc.txt`).type('text/plain; charset=utf-8').send(`${mocToAscii(moc)}\n`);
      return;
    }
    res.json({
      run: runSummary(run),
      release: run.release,
      convention,
      criteria,
      nside,
      frame: run.params.coordsys,
      counts: { cells: cells.length, flagged: cells.filter((c) => c.flagged).length },
      moc: { order, frame: 'ICRS', cells: mocCellCount(moc), skyFraction: mocSkyFraction(moc) },
      cells,
    });
  });

  return r;
}
