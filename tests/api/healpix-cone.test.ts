import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { ang2pixNest } from '../../server/science/healpix.js';
import { up as recomputeHpx15 } from '../../migrations/020_recompute_hpx15.js';

// Issue 10: @hscmap/healpix 1.4.12 put points of the north cap at RA exactly 0/90/180/270° into pixel
// NSIDE²−1, so a star at 12:00:00 +60:00:00 was missed by cone search and a re-observation at the
// identical position was tied to another star. Expected pixel from healpy 1.16:
// ang2pix(32768, 180, 60, nest=True, lonlat=True).
const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';
let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(async () => t.close());

async function upload(lines: string[], name: string) {
  const observer = await signedIn(t.app, 'observer');
  const res = await observer.post('/api/v1/batches').attach('file', Buffer.from([HEADER, ...lines].join('\n')), name);
  expect(res.status).toBe(201);
  await t.app.services.intake.idle();
  const curator = await signedIn(t.app, 'curator');
  const approve = await curator.post(`/api/v1/batches/${res.body.id}/approve`).send({ note: 'cap meridian check' });
  expect(approve.status).toBe(200);
  return res.body.id as number;
}

describe('a star at 12:00:00 +60:00:00 (north cap, RA exactly 180°)', () => {
  it('is stored in its true order-15 pixel and found by cone search', async () => {
    await upload(['cap star,,12:00:00,+60:00:00,V,0.012,0.004,0.001,0.001,2.0,0.05,61200.5,KR-HAWK'], 'cap-meridian.csv');
    const star = await t.db('stars').where({ name: 'cap star' }).first();
    expect(star.ra_deg).toBe(180);
    expect(star.dec_deg).toBe(60);
    // healpy 1.16: ang2pix(32768, 180, 60, nest=True, lonlat=True) = 2935946219; the old library gave 4^15·0 + 4^15 − 1.
    expect(Number(star.hpx15)).toBe(2935946219);
    expect(Number(star.hpx15)).not.toBe(4 ** 15 - 1);
    const modeler = await signedIn(t.app, 'modeler');
    for (const [ra, dec, r] of [[180, 60, 0.01], [180.001, 59.999, 0.01], [179.5, 60.2, 1], [180, 60, 5]]) {
      const res = await modeler.get(`/api/v1/stars?ra=${ra}&dec=${dec}&radius=${r}&limit=1000`);
      expect(res.status).toBe(200);
      expect(res.body.stars.map((s: { id: number }) => s.id)).toContain(star.id);
    }
  });

  it('a re-observation at the identical position is tied to the same star', async () => {
    await upload(['cap star again,,180.0,60.0,V,0.011,0.005,0.001,0.001,2.0,0.05,61210.5,KR-HAWK'], 'cap-meridian-2.csv');
    const star = await t.db('stars').where({ name: 'cap star' }).first();
    const rows = await t.db('measurements').where({ star_id: star.id });
    expect(rows.length).toBe(2);
    expect(await t.db('stars').where({ ra_deg: 180, dec_deg: 60 }).count({ n: '*' })).toEqual([{ n: 1 }]);
  });
});

describe('migration 020 recomputes stored pixel indices', () => {
  it('rewrites a wrong hpx15 of stars and measurements from their positions and leaves right ones alone', async () => {
    const star = await t.db('stars').where({ name: 'cap star' }).first();
    const other = await t.db('stars').whereNot({ id: star.id }).orderBy('id').first();
    const wrong = 4 ** 15 - 1; // what @hscmap/healpix 1.4.12 returned for this position
    await t.db('stars').where({ id: star.id }).update({ hpx15: wrong });
    await t.db('measurements').where({ star_id: star.id }).update({ hpx15: wrong });
    await recomputeHpx15(t.db);
    expect(Number((await t.db('stars').where({ id: star.id }).first()).hpx15)).toBe(ang2pixNest(32768, 180, 60));
    for (const m of await t.db('measurements').where({ star_id: star.id })) {
      expect(Number(m.hpx15)).toBe(ang2pixNest(32768, m.ra_deg, m.dec_deg));
    }
    expect(Number((await t.db('stars').where({ id: other.id }).first()).hpx15)).toBe(Number(other.hpx15));
  });
});
