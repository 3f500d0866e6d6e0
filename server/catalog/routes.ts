import { Router } from 'express';
import type { Knex } from 'knex';
import { guard } from '../auth/roles.js';

export function catalogRoutes(deps: { db: Knex }): Router {
  const { db } = deps;
  const r = Router();

  r.get('/overview', guard('signed-in'), async (_req, res) => {
    const [{ n: stars }] = await db('stars').count({ n: '*' });
    const instruments = await db('instruments').orderBy('code').select('code', 'name', 'bands');
    res.json({
      survey: 'Kestrel Ridge Polarimetric Survey',
      counts: { stars: Number(stars), instruments: instruments.length },
      instruments: instruments.map((i) => ({ ...i, bands: String(i.bands).split(',') })),
    });
  });

  r.get('/instruments', guard('signed-in'), async (_req, res) => {
    const rows = await db('instruments').orderBy('code');
    res.json({ instruments: rows.map((i) => ({ id: i.id, code: i.code, name: i.name, bands: String(i.bands).split(','), description: i.description })) });
  });

  return r;
}
