import type { RequestHandler } from 'express';
import { badRequest } from '../errors.js';
import { reply, route } from '../lib/route.js';
import { coneQuery, conventionQuery, criteriaOf, criteriaQuery, formatQuery, idPath, query, releaseQuery, type CriteriaValues } from '../lib/query.js';
import { npixForNside } from '../science/healpix.js';
import type { StokesConvention } from '../science/convention.js';
import { filterCells, sendCells, SIGHTLINE_CONVENTIONS, type CellForOutput, type TomographyService } from './service.js';

export interface TomographyDeps {
  tomography: TomographyService;
}

const CUR = ['curator'] as const;

// no body at all (no JSON content type, or empty) is a 400 naming it; {} asks for the defaults
const jsonObjectBody: RequestHandler = (req, _res, next) => {
  if (req.body === undefined || req.body === null || typeof req.body !== 'object' || Array.isArray(req.body)) {
    next(badRequest('Send the run parameters as a JSON object (Content-Type: application/json); {} starts a run with the defaults.', { fields: [{ field: 'body', message: 'expected a JSON object' }] }));
    return;
  }
  next();
};

const provenanceHeaders = {
  'Starveil-Run': { description: 'id of the tomography run the answer came from', schema: { type: 'integer', minimum: 1, description: 'run id' } },
  'Starveil-Release': { description: 'release tag, or none', schema: { type: 'string' } },
  'Starveil-Convention': { description: 'IAU or COSMO', schema: { type: 'string', enum: ['IAU', 'COSMO'] } },
};

interface SightlineQuery extends CriteriaValues {
  nside?: number;
  ipix?: number;
  ra?: number;
  dec?: number;
  radius?: number;
  run?: number;
  release?: string;
  include?: string;
  convention: StokesConvention;
  format: 'json' | 'csv';
}

/** Runs (start, list, progress, cancel), a run's cells for the sky map, sightlines by pixel or cone. */
export const tomographyRoutes = [
  route<TomographyDeps>({
    method: 'post', path: '/tomography/runs', tag: 'Tomography', who: CUR,
    summary: 'Start a tomography run',
    description: 'Queued, then fitted on worker threads off the request path; poll GET /tomography/runs/{id}. Send a JSON object: parameters left out take their defaults (`{}` = all defaults); no body is a 400 naming `body`. Limits: at most 2 runs queued or running per person (429), and at most 2,000,000 Monte Carlo draws × cells per run, cells counted as at most (approved stars in the band and region ÷ minStars) (400 naming `draws`). A run the server was fitting when it stopped is `interrupted` on the next start (its reason in `error`, no cells kept); a queued one is queued again.',
    body: { schema: 'api/tomography-run', required: true },
    responses: { 202: { description: 'queued', schema: 'responses/tomography-run' } },
    errors: [400, 429],
    middleware: () => [jsonObjectBody],
    handler: async ({ user, body }, { tomography }) => {
      const { id } = await tomography.start(user.id, body);
      return reply(202, await tomography.get(id));
    },
  }),
  route<TomographyDeps>({
    method: 'get', path: '/tomography/runs', tag: 'Tomography', who: 'signed-in',
    summary: 'Runs, newest first (at most 100)',
    responses: { 200: { description: 'the runs', schema: 'responses/tomography-runs' } },
    handler: async (_ctx, { tomography }) => ({ runs: await tomography.list() }),
  }),
  route<TomographyDeps, { id: number }>({
    method: 'get', path: '/tomography/runs/:id', tag: 'Tomography', who: 'signed-in',
    summary: 'One run: state, progress, parameters, fingerprint',
    params: idPath('run'),
    responses: { 200: { description: 'the run', schema: 'responses/tomography-run' } },
    errors: [400, 404],
    handler: ({ params }, { tomography }) => tomography.get(params.id),
  }),
  route<TomographyDeps, { id: number }>({
    method: 'post', path: '/tomography/runs/:id/cancel', tag: 'Tomography', who: CUR,
    summary: 'End a queued or running run (also one left open by a restart); nothing of it is stored',
    params: idPath('run'),
    responses: { 200: { description: 'the run, cancelled (or stopping)', schema: 'responses/tomography-run' } },
    errors: [400, 404, 409],
    handler: ({ user, params }, { tomography }) => tomography.cancel(user.id, params.id),
  }),
  route<TomographyDeps, { id: number }>({
    method: 'get', path: '/tomography/runs/:id/cells', tag: 'Tomography', who: 'signed-in',
    summary: 'Every cell of a finished run, compact (for a sky map)',
    description: 'A run that is not finished answers 409. The id must be a positive integer: `abc` or `0` is a 400 naming `id` (there is no "latest" shorthand here; GET /tomography/runs lists the runs).',
    params: idPath('run'),
    responses: { 200: { description: 'the cells', schema: 'responses/tomography-cells' } },
    errors: [400, 404, 409],
    handler: async ({ params }, { tomography }) => {
      const run = await tomography.resolveRun(params.id);
      return { run, cells: await tomography.cells(run.id), conventions: SIGHTLINE_CONVENTIONS };
    },
  }),
  route<TomographyDeps, object, SightlineQuery>({
    method: 'get', path: '/sightlines', tag: 'Tomography', who: 'signed-in',
    summary: 'Dust layers per cell: by pixel or in a cone',
    description: 'Give either `nside` and `ipix` (nested, in the run’s coordinate system) or `ra`, `dec` and `radius` (ICRS). A cone returns every cell of the run that overlaps it — the cell containing the point always among them, even when its centre is outside the cone — each with `separationDeg` (cone centre to cell centre), nearest first; the cells are found through the HEALPix index (an inclusive disc query gives candidate pixel ranges; each candidate is then tested exactly, refined to 1/64 of a cell at the cone’s edge), never by reading the whole run. Per cell: star count, number of layers and its support, layers (distance, Stokes, angle), jumps between successive layers and the run it came from; criteria parameters keep only the cells that meet them. Starlight polarization is parallel to the plane-of-sky magnetic field; dust emission is polarized perpendicular to it, so add 90° to a layer angle before comparing it with an emission map. Unlike GET /sky and /masks, `run=0` here means the latest finished run, as no `run` does.',
    query: {
      nside: query('HEALPix NSIDE; must be the run’s NSIDE (with ipix)', { type: 'integer', enum: [16, 32, 64, 128, 256] }),
      ipix: query('HEALPix pixel index, nested ordering, 0 to 12·nside² − 1 (with nside)', { type: 'integer', minimum: 0 }),
      ...coneQuery(30, '; instead of nside and ipix'),
      run: query('tomography run id; 0 or absent: the latest finished run', { type: 'integer', minimum: 0 }),
      ...releaseQuery,
      include: query('stars: also the stars of each cell as the run used them; only for cones of radius ≤ 5° touching at most 50 cells (else 400 naming include); any other value is ignored', { type: 'string', examples: ['stars'] }),
      ...criteriaQuery(0),
      ...conventionQuery,
      ...formatQuery(['json', 'csv'], 'json (default) or csv: one row per layer with a units header'),
    },
    responses: { 200: { description: 'the cells', schema: 'responses/sightlines', content: { 'text/csv': { type: 'string', description: 'format=csv: one row per layer' } }, headers: provenanceHeaders } },
    errors: [400, 404, 409],
    handler: async ({ query: q, res }, { tomography }) => {
      const criteria = criteriaOf(q);
      const run = await tomography.resolveRun(q.run || undefined, q.release);
      const includeStars = q.include === 'stars';
      const { nside, ipix, ra, dec, radius } = q;
      let cells;
      if (nside !== undefined || ipix !== undefined) {
        if (nside === undefined || ipix === undefined) throw badRequest('a pixel query needs both nside and ipix (nested)', { fields: [{ field: nside === undefined ? 'nside' : 'ipix', message: 'required with the other' }] });
        if (nside !== run.params.nside) throw badRequest(`run ${run.id} has cells at NSIDE ${run.params.nside}, not ${nside}`, { fields: [{ field: 'nside', message: `expected ${run.params.nside} for this run` }] });
        if (ipix >= npixForNside(nside)) throw badRequest(`ipix must be an integer from 0 to ${npixForNside(nside) - 1} at NSIDE ${nside}`, { fields: [{ field: 'ipix', message: 'out of range' }] });
        cells = await tomography.sightlines(run, { ipix: [ipix] }, includeStars);
      } else if (ra !== undefined && dec !== undefined && radius !== undefined) {
        cells = await tomography.sightlines(run, { ra, dec, radius }, includeStars);
      } else {
        throw badRequest('give either ra, dec and radius (degrees, ICRS) or nside and ipix (nested)', { fields: [{ field: 'ra', message: 'or nside+ipix' }] });
      }
      await sendCells(res, { what: 'sightlines', run, criteria, convention: q.convention, format: q.format, cells: filterCells(cells as unknown as CellForOutput[], criteria), conventions: SIGHTLINE_CONVENTIONS });
      return undefined;
    },
  }),
];
