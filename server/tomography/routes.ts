import { Router, type RequestHandler } from 'express';
import { guard } from '../auth/roles.js';
import { badRequest } from '../errors.js';
import { validateBody } from '../lib/validate.js';
import { npixForNside } from '../science/healpix.js';
import { cellView, filterCells, sendCells, type CellForOutput } from '../masks/format.js';
import type { TomographyService } from './service.js';

/** Conventions stated in every sightline answer, so a script never has to guess. */
export const SIGHTLINE_CONVENTIONS = {
  stokes: 'q, u are fractions (Q/I, U/I); deltaQ/deltaU are a layer’s own contribution',
  angles: 'degrees, IAU convention (from the frame’s north through east), in [0, 180); jumps wrapped to (−90, 90]',
  frame: 'angles and Stokes refer to the run’s coordinate system: G = Galactic, C = equatorial ICRS',
  pixels: 'HEALPix nested ordering in the run’s coordinate system',
  distances: 'parsec; a layer’s distance is the median of its near edge over Monte Carlo draws, with the 16th–84th percentile range',
  magneticField: 'starlight polarization is parallel to the plane-of-sky magnetic field; thermal dust emission is polarized perpendicular to it (field angle = emission angle + 90°)',
};

const num = (v: unknown, field: string) => {
  if (v === undefined || v === '') return undefined;
  const n = Number(v);
  if (!Number.isFinite(n)) throw badRequest(`${field} must be a number`, { fields: [{ field, message: 'expected a number' }] });
  return n;
};

export function tomographyRoutes(deps: { tomography: TomographyService }): Router {
  const { tomography } = deps;
  const r = Router();
  const curator = guard(['curator']);
  const readers = guard('signed-in');

  // no body at all (no JSON content type, or empty) is a 400 naming it; {} asks for the defaults
  const jsonObjectBody: RequestHandler = (req, _res, next) => {
    if (req.body === undefined || req.body === null || typeof req.body !== 'object' || Array.isArray(req.body)) {
      next(badRequest('Send the run parameters as a JSON object (Content-Type: application/json); {} starts a run with the defaults.', { fields: [{ field: 'body', message: 'expected a JSON object' }] }));
      return;
    }
    next();
  };

  r.post('/tomography/runs', curator, jsonObjectBody, validateBody('api/tomography-run'), async (req, res) => {
    const { id } = await tomography.start(req.user!.id, req.body);
    res.status(202).json(await tomography.get(id));
  });

  r.get('/tomography/runs', readers, async (_req, res) => {
    res.json({ runs: await tomography.list() });
  });

  r.get('/tomography/runs/:id', readers, async (req, res) => {
    const id = num(req.params.id, 'id');
    if (!Number.isInteger(id) || id! < 1) throw badRequest('The run id must be a positive integer.', { fields: [{ field: 'id', message: 'expected a positive integer' }] });
    res.json(await tomography.get(id!));
  });

  r.post('/tomography/runs/:id/cancel', curator, async (req, res) => {
    const id = Number(req.params.id);
    if (!Number.isInteger(id) || id < 1) throw badRequest('The run id must be a positive integer.', { fields: [{ field: 'id', message: 'expected a positive integer' }] });
    res.json(await tomography.cancel(req.user!.id, id));
  });

  r.get('/tomography/runs/:id/cells', readers, async (req, res) => {
    const id = Number(req.params.id);
    if (!Number.isInteger(id) || id < 1) throw badRequest('The run id must be a positive integer.', { fields: [{ field: 'id', message: 'expected a positive integer' }] });
    const run = await tomography.resolveRun(id);
    res.json({ run, cells: await tomography.cells(run.id), conventions: SIGHTLINE_CONVENTIONS });
  });

  r.get('/sightlines', readers, async (req, res) => {
    const q = req.query as Record<string, string | undefined>;
    const view = cellView(q); // criteria, convention, format (server/masks/format.ts)
    const run = await tomography.resolveRun(num(q.run, 'run'), q.release);
    const includeStars = q.include === 'stars';
    const nside = num(q.nside, 'nside');
    const ipix = num(q.ipix, 'ipix');
    const ra = num(q.ra, 'ra');
    const dec = num(q.dec, 'dec');
    const radius = num(q.radius, 'radius');
    let cells;
    if (nside !== undefined || ipix !== undefined) {
      if (nside === undefined || ipix === undefined) throw badRequest('a pixel query needs both nside and ipix (nested)', { fields: [{ field: nside === undefined ? 'nside' : 'ipix', message: 'required with the other' }] });
      if (nside !== run.params.nside) throw badRequest(`run ${run.id} has cells at NSIDE ${run.params.nside}, not ${nside}`, { fields: [{ field: 'nside', message: `expected ${run.params.nside} for this run` }] });
      if (!Number.isInteger(ipix) || ipix < 0 || ipix >= npixForNside(nside)) throw badRequest(`ipix must be an integer from 0 to ${npixForNside(nside) - 1} at NSIDE ${nside}`, { fields: [{ field: 'ipix', message: 'out of range' }] });
      cells = await tomography.sightlines(run, { ipix: [ipix] }, includeStars);
    } else if (ra !== undefined && dec !== undefined && radius !== undefined) {
      if (!(ra >= 0 && ra < 360)) throw badRequest('ra must be in degrees, 0 ≤ ra < 360 (ICRS)', { fields: [{ field: 'ra', message: 'expected 0 ≤ ra < 360' }] });
      if (!(dec >= -90 && dec <= 90)) throw badRequest('dec must be in degrees, −90 ≤ dec ≤ 90 (ICRS)', { fields: [{ field: 'dec', message: 'expected −90 ≤ dec ≤ 90' }] });
      if (!(radius > 0 && radius <= 30)) throw badRequest('radius must be in degrees, > 0 and ≤ 30', { fields: [{ field: 'radius', message: 'expected 0 < radius ≤ 30' }] });
      cells = await tomography.sightlines(run, { ra, dec, radius }, includeStars);
    } else {
      throw badRequest('give either ra, dec and radius (degrees, ICRS) or nside and ipix (nested)', { fields: [{ field: 'ra', message: 'or nside+ipix' }] });
    }
    sendCells(res, { what: 'sightlines', run, ...view, cells: filterCells(cells as unknown as CellForOutput[], view.criteria), conventions: SIGHTLINE_CONVENTIONS });
  });

  return r;
}
