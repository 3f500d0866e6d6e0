import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CrossMatcher } from '../../server/intake/crossmatch.js';
import { INDEX_NSIDE } from '../../server/measurements/service.js';
import { ang2pixNest } from '../../server/science/healpix.js';
import { icrsToGalactic } from '../../server/science/frames.js';
import { makeTestApp, type TestApp } from '../helpers/app.js';

// The two ways catalog stars reach the cross-match must give the same answers: every star read
// up front without its name (preloadAll; namesOf reads the names a row shows), or the stars near
// each chunk read with their names (prefetch). Two stars 0.6″ apart with a row between them at a
// 1″ tolerance are ambiguous, both listed (common practice: never guess between candidates).
let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({}, { seed: false });
  const now = new Date().toISOString();
  for (const [name, ra, dec] of [['twin 1', 150.0, -10.0], ['twin 2', 150.0, -9.99983], ['loner', 151.0, -10.0]] as const) {
    const g = icrsToGalactic(ra, dec);
    await t.db('stars').insert({ name, source_id: null, ra_deg: ra, dec_deg: dec, glon_deg: g.lDeg, glat_deg: g.bDeg, parallax_mas: 1, parallax_err_mas: 0.05, hpx15: ang2pixNest(INDEX_NSIDE, ra, dec), created_at: now });
  }
});
afterAll(() => t.close());

describe('CrossMatcher: preloaded stars and their names', () => {
  const between = { raDeg: 150.0, decDeg: -9.99992 };
  const nearLoner = { raDeg: 151.0, decDeg: -10.0001 };

  it('preloadAll leaves names unread; namesOf reads exactly the ones asked for', async () => {
    const m = new CrossMatcher(t.db, 1);
    expect(await m.preloadAll()).toBe(3);
    const r = m.match(between);
    expect(r.kind).toBe('ambiguous');
    if (r.kind !== 'ambiguous') return;
    expect(r.candidates.map((c) => c.star.name)).toEqual([undefined, undefined]);
    const names = await m.namesOf(r.candidates.map((c) => c.star));
    expect([...names.values()].sort()).toEqual(['twin 1', 'twin 2']);
    const one = m.match(nearLoner);
    expect(one.kind).toBe('position');
    if (one.kind === 'position') expect(one.star.parallax_mas).toBe(1);
  });

  it('prefetch reads names with the stars and gives the same matches', async () => {
    const m = new CrossMatcher(t.db, 1);
    await m.prefetch([between, nearLoner]);
    const r = m.match(between);
    expect(r.kind).toBe('ambiguous');
    if (r.kind === 'ambiguous') expect(r.candidates.map((c) => c.star.name).sort()).toEqual(['twin 1', 'twin 2']);
    expect((await m.namesOf(r.kind === 'ambiguous' ? r.candidates.map((c) => c.star) : [])).size).toBe(0);
    expect(m.match(nearLoner).kind).toBe('position');
  });
});
