import type { Knex } from 'knex';
import type { SessionUser } from '../auth/roles.js';
import { visibleStarCount } from './service.js';
import { todoFor } from './todo.js';

/** The survey's name as the overview shows it. */
export const SURVEY_NAME = 'Kestrel Ridge Polarimetric Survey';

/** Registered instruments with their bands as a list, by code. */
export async function instrumentBands(db: Knex): Promise<{ code: string; name: string; bands: string[] }[]> {
  const rows = await db('instruments').orderBy('code').select('code', 'name', 'bands');
  return rows.map((i) => ({ ...i, bands: String(i.bands).split(',') }));
}

/** GET /overview: counts this person may see (whereStarVisible), what waits for them, the instruments. */
export async function overviewFor(db: Knex, user: SessionUser) {
  const stars = await visibleStarCount(db, user);
  const instruments = await instrumentBands(db);
  return {
    survey: SURVEY_NAME,
    counts: { stars: Number(stars), instruments: instruments.length },
    todo: await todoFor(db, user), // what waits for this person (server/catalog/todo.ts)
    instruments,
  };
}
