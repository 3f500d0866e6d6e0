import { Router } from 'express';
import type { Knex } from 'knex';
import { guard } from '../auth/roles.js';
import { badRequest } from '../errors.js';
import { singleValuedQuery } from '../lib/query.js';
import { catalogService, visibleStarCount } from './service.js';
import { coneCentre } from './cone.js';
import { todoFor } from './todo.js';

export function catalogRoutes(deps: { db: Knex }): Router {
  const { db } = deps;
  const r = Router();

  r.get('/overview', guard('signed-in'), async (req, res) => {
    // only the stars this person may know exist (server/catalog/service.ts whereStarVisible)
    const stars = await visibleStarCount(db, req.user!);
    const instruments = await db('instruments').orderBy('code').select('code', 'name', 'bands');
    res.json({
      survey: 'Kestrel Ridge Polarimetric Survey',
      counts: { stars: Number(stars), instruments: instruments.length },
      todo: await todoFor(db, req.user!), // what waits for this person (server/catalog/todo.ts)
      instruments: instruments.map((i) => ({ ...i, bands: String(i.bands).split(',') })),
    });
  });

  // GET /instruments: server/instruments (the registry)

  const catalog = catalogService(db);
  const num = (v: unknown, field: string) => {
    if (v === undefined || v === '') return undefined;
    const n = Number(v);
    if (!Number.isFinite(n)) throw badRequest(`${field} must be a number`, { fields: [{ field, message: 'expected a number' }] });
    return n;
  };

  r.get('/stars', guard('signed-in'), singleValuedQuery, async (req, res) => {
    const q = req.query as Record<string, string | undefined>;
    // ra/dec in degrees or sexagesimal, or Galactic l/b (server/catalog/cone.ts)
    const { ra, dec } = coneCentre(q);
    const radius = num(q.radius, 'radius');
    const given = [ra, dec, radius].filter((x) => x !== undefined).length;
    if (given > 0 && given < 3) throw badRequest('a cone search needs ra, dec and radius (degrees, ICRS)', { fields: [{ field: ra === undefined ? 'ra' : dec === undefined ? 'dec' : 'radius', message: 'required for a cone search' }] });
    const limit = num(q.limit, 'limit') ?? 50;
    const offset = num(q.offset, 'offset') ?? 0;
    if (!Number.isInteger(limit) || limit < 1 || limit > 1000) throw badRequest('limit must be an integer from 1 to 1000', { fields: [{ field: 'limit', message: 'expected 1–1000' }] });
    if (!Number.isSafeInteger(offset) || offset < 0) throw badRequest('offset must be an integer from 0 to 2^53 − 1', { fields: [{ field: 'offset', message: 'expected an integer ≥ 0' }] });
    const order = q.order === 'desc' ? 'desc' : 'asc';
    res.json(await catalog.stars(req.user!, { q: q.q?.trim() || undefined, ra, dec, radius, sort: q.sort ?? 'id', order, limit, offset, flag: q.flag || undefined }));
  });

  r.get('/stars/:id', guard('signed-in'), async (req, res) => {
    const id = Number(req.params.id);
    if (!Number.isInteger(id) || id < 1) throw badRequest('The star id in the path must be a positive integer.', { fields: [{ field: 'id', message: 'expected a positive integer' }] });
    res.json(await catalog.star(req.user!, id));
  });

  return r;
}
