import { badRequest } from '../errors.js';
import { route } from '../lib/route.js';
import { conventionQuery, criteriaOf, criteriaQuery, formatQuery, limitQuery, query, runQuery, type CriteriaValues } from '../lib/query.js';
import { npixForNside } from '../science/healpix.js';
import { mocToAscii, mocToJson, mocSkyFraction, mocCellCount } from '../science/moc.js';
import type { StokesConvention } from '../science/convention.js';
import { runSummary, sendCells, setProvenanceHeaders, SIGHTLINE_CONVENTIONS } from '../tomography/service.js';
import { streamCsv } from '../lib/csv.js';
import { assertMaskCsvSize, maskCells, maskCsvPieces, maskFits, maskMoc, maskNside } from './mask.js';
import type { SkyService } from './service.js';

export const SKY_DEFAULT_LIMIT = 1000;
export const SKY_MAX_LIMIT = 5000;
const MASK_FORMATS = ['fits', 'moc-json', 'moc-ascii', 'csv', 'json'] as const;

export interface MaskDeps {
  sky: SkyService;
}

const provenanceHeaders = {
  'Starveil-Run': { description: 'id of the tomography run the answer came from', schema: { type: 'integer', minimum: 1, description: 'run id' } },
  'Starveil-Release': { description: 'release tag, or none', schema: { type: 'string' } },
  'Starveil-Convention': { description: 'IAU or COSMO', schema: { type: 'string', enum: ['IAU', 'COSMO'] } },
};

interface CellQuery extends CriteriaValues {
  run?: number;
  release?: string;
  convention: StokesConvention;
}

/** The sky listing of a run page by page, and sky masks (FITS, MOC, CSV, JSON) of the cells that meet criteria. */
export const maskRoutes = [
  // Every cell of a run in pixel order, page by page, with layers and jumps.
  route<MaskDeps, object, CellQuery & { limit: number; cursor?: string; format: 'json' | 'csv' }>({
    method: 'get', path: '/sky', tag: 'Sky and masks', who: 'signed-in',
    summary: 'Every cell of a run in pixel order, page by page, with layers and jumps',
    description: 'Pages follow the HEALPix nested pixel order of the run: pass the answer’s `next` (also in the Starveil-Next-Cursor header) as `cursor` until it is null. Criteria keep only the cells that meet them. `run=0` is a 400 (unlike GET /sightlines, where it means the latest run).',
    query: {
      ...limitQuery(SKY_DEFAULT_LIMIT, SKY_MAX_LIMIT, 'cells'),
      cursor: query('the `next` value of the previous page, unchanged (a nested pixel index of this run); absent for the first page', { type: 'string', pattern: '^[0-9]{1,16}$' }),
      ...runQuery,
      ...criteriaQuery(0),
      ...conventionQuery,
      ...formatQuery(['json', 'csv'], 'json (default) or csv: one row per layer with a units header'),
    },
    responses: {
      200: {
        description: 'one page of cells',
        schema: 'responses/sky',
        content: { 'text/csv': { type: 'string' } },
        headers: { ...provenanceHeaders, 'Starveil-Next-Cursor': { description: 'cursor of the next page; absent on the last page', schema: { type: 'string' } } },
      },
    },
    errors: [400, 404, 409],
    handler: async ({ query: q, res }, { sky }) => {
      const criteria = criteriaOf(q);
      const run = await sky.resolveRun(q.run, q.release);
      const cursor = q.cursor === undefined ? 0 : Number(q.cursor);
      if (cursor >= npixForNside(run.params.nside)) {
        throw badRequest(`cursor ${cursor} is not a pixel of run ${run.id} (NSIDE ${run.params.nside}); pass the "next" value of a previous page of this run`, { fields: [{ field: 'cursor', message: 'not from this run' }] });
      }
      const page = await sky.page(run, { cursor, limit: q.limit, criteria });
      const next = page.next === null ? null : String(page.next);
      if (next !== null) res.setHeader('Starveil-Next-Cursor', next);
      await sendCells(res, {
        what: 'sky listing: cells in HEALPix NESTED order',
        run, convention: q.convention, format: q.format, criteria,
        cells: page.cells,
        conventions: SIGHTLINE_CONVENTIONS,
        extra: { limit: q.limit, next },
        csvExtra: [`page: up to ${q.limit} cells; next cursor: ${next ?? 'none (last page)'}`],
      });
      return undefined;
    },
  }),

  // Masks of the cells that meet every criterion: HEALPix FITS, MOC (JSON or ASCII), CSV, or a JSON summary.
  route<MaskDeps, object, CellQuery & { nside?: number; format: (typeof MASK_FORMATS)[number] }>({
    method: 'get', path: '/masks', tag: 'Sky and masks', who: 'signed-in',
    summary: 'Sky mask of the cells that meet every criterion (by default: more than one cloud)',
    description: 'Where two clouds with differently oriented fields overlap, a single-layer dust model fails; the mask flags those sightlines. Formats: fits (default) — a full-sky HEALPix map in the run’s frame, nested ordering, readable by the standard HEALPix libraries (columns MASK, MAX_JUMP in deg, N_LAYERS); moc-json and moc-ascii — an IVOA MOC of the flagged cells, always ICRS; csv — the flagged pixels with a units header, streamed, at most 1,000,000 rows (else 400 naming format and the limit; header Starveil-Rows gives the count), text cells formula-safe; json — a summary with every cell.',
    query: {
      ...formatQuery(MASK_FORMATS, 'fits (default), moc-json, moc-ascii, csv or json'),
      nside: query('HEALPix NSIDE of the mask: a power of two from the run’s NSIDE up to 512 (default the run’s)', { type: 'integer', minimum: 1, maximum: 512 }),
      ...runQuery,
      ...criteriaQuery(2),
      ...conventionQuery,
    },
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
          'Starveil-Flagged-Cells': { description: 'count of cells meeting every criterion', schema: { type: 'integer', minimum: 0, description: 'count' } },
          'Starveil-Moc-Order': { description: 'HEALPix order of the MOC (moc formats)', schema: { type: 'integer', minimum: 0, description: 'HEALPix order' } },
          'Starveil-Rows': { description: 'rows of the CSV (format=csv)', schema: { type: 'integer', minimum: 0, description: 'count' } },
        },
      },
    },
    errors: [400, 404, 409],
    handler: async ({ query: q, res }, { sky }) => {
      const criteria = criteriaOf(q);
      const { format, convention } = q;
      const run = await sky.resolveRun(q.run, q.release);
      const nside = maskNside(run, q.nside);
      const cells = maskCells(await sky.allCells(run), criteria);
      const name = `starveil-mask-run${run.id}${run.release ? `-${run.release}` : ''}-nside${nside}`;
      setProvenanceHeaders(res, run, convention);
      res.setHeader('Starveil-Flagged-Cells', String(cells.filter((c) => c.flagged).length));
      if (format === 'fits') {
        const bytes = maskFits(run, cells, nside, criteria, convention);
        res.attachment(`${name}.fits`).type('application/fits').send(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength));
        return undefined;
      }
      if (format === 'csv') {
        // streamed in pieces: a fine mask is hundreds of thousands of rows
        const rows = assertMaskCsvSize(run, cells, nside);
        res.setHeader('Starveil-Rows', String(rows));
        res.attachment(`${name}.csv`).type('text/csv; charset=utf-8');
        await streamCsv(res, maskCsvPieces(run, cells, nside, criteria, convention));
        return undefined;
      }
      const { moc, order } = maskMoc(run, cells, nside);
      res.setHeader('Starveil-Moc-Order', String(order));
      if (format === 'moc-json') {
        res.attachment(`${name}.moc.json`).type('application/json').send(JSON.stringify(mocToJson(moc)));
        return undefined;
      }
      if (format === 'moc-ascii') {
        res.attachment(`${name}.moc.txt`).type('text/plain; charset=utf-8').send(`${mocToAscii(moc)}\n`);
        return undefined;
      }
      return {
        run: runSummary(run),
        release: run.release,
        convention,
        criteria,
        nside,
        frame: run.params.coordsys,
        counts: { cells: cells.length, flagged: cells.filter((c) => c.flagged).length },
        moc: { order, frame: 'ICRS', cells: mocCellCount(moc), skyFraction: mocSkyFraction(moc) },
        cells,
      };
    },
  }),
];
