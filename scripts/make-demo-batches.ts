// Writes the demo CSV batches in seeds/demo-batches/ from the deterministic demo sky
// (seeds/demo-sky.ts). Re-run after changing the sky: `npx tsx scripts/make-demo-batches.ts`.
import fs from 'node:fs';
import path from 'node:path';
import { buildDemoSky, demoStokesForStar } from '../seeds/demo-sky.js';
import { mulberry32, gaussian } from '../server/science/random.js';

const out = path.resolve('seeds/demo-batches');
fs.mkdirSync(out, { recursive: true });
const { fields, stars } = buildDemoSky();
const fieldByKey = new Map(fields.map((f) => [f.key, f]));
const rng = mulberry32(7001);
const f6 = (x: number) => x.toFixed(6);

// 1. A clean night in R with KR-HAWK: every demo star, canonical headers, fractions.
{
  const lines = ['name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument'];
  for (const s of stars) {
    const st = demoStokesForStar(fieldByKey.get(s.field)!, s, 'R', rng);
    lines.push([s.name, s.sourceId, s.raDeg.toFixed(6), s.decDeg.toFixed(6), 'R', f6(st.q), f6(st.u), f6(st.qErr), f6(st.uErr), s.parallaxMas.toFixed(4), s.parallaxErrMas.toFixed(4), (61000 + rng() * 30).toFixed(5), 'KR-HAWK'].join(','));
  }
  fs.writeFileSync(path.join(out, 'kestrel-night-hawk-R.csv'), lines.join('\n') + '\n');
}

// 2. A messy night in V with KR-OWL: other headers, percent, sexagesimal, CRLF, a BOM,
//    duplicates, a conflicting repeat, a bad row, an angle outside [0, 180), a new star.
{
  const sex = (deg: number, hours: boolean) => {
    const sign = deg < 0 ? '-' : '+';
    let v = Math.abs(hours ? deg / 15 : deg);
    const a = Math.floor(v);
    v = (v - a) * 60;
    const b = Math.floor(v);
    const c = (v - b) * 60;
    const body = `${String(a).padStart(2, '0')}:${String(b).padStart(2, '0')}:${c.toFixed(hours ? 3 : 2).padStart(hours ? 6 : 5, '0')}`;
    return hours ? body : `${sign}${body}`;
  };
  const header = 'Star,RAJ2000,DEJ2000,RA,Filter,P%,e_P%,PA,e_PA,plx,e_plx,MJD,Instrument';
  const rows: string[] = [];
  const chosen = stars.filter((s) => ['F001', 'F002', 'F003'].includes(s.field));
  for (const s of chosen) {
    const st = demoStokesForStar(fieldByKey.get(s.field)!, s, 'V', rng);
    const p = Math.hypot(st.q, st.u);
    const pa = ((0.5 * Math.atan2(st.u, st.q) * 180) / Math.PI + 180) % 180;
    const pErr = st.qErr;
    const paErr = (28.65 * pErr) / Math.max(p, 1e-6);
    rows.push([s.name, sex(s.raDeg, true), sex(s.decDeg, false), s.raDeg.toFixed(5), 'V', (p * 100).toFixed(3), (pErr * 100).toFixed(3), pa.toFixed(2), Math.min(paErr, 60).toFixed(2), s.parallaxMas.toFixed(4), s.parallaxErrMas.toFixed(4), (61040 + rng() * 5).toFixed(5), 'KR-OWL'].join(','));
  }
  rows.push(rows[0], rows[5]); // exact repeats: duplicates
  const conflict = rows[7].split(',');
  conflict[5] = (Number(conflict[5]) + 0.4).toFixed(3); // same star and epoch, different p: a conflict
  rows.push(conflict.join(','));
  const wrapped = rows[9].split(',');
  wrapped[7] = (Number(wrapped[7]) - 180).toFixed(2); // negative angle: wrapped with a warning
  wrapped[11] = (Number(wrapped[11]) + 3).toFixed(5);
  rows.push(wrapped.join(','));
  rows.push('KRS J999999.9+999999,25:61:00,+91:00:00,385.0,V,abc,0.1,45,2,1.0,0.1,61041.5,KR-OWL'); // bad row
  // a star the catalog does not know yet
  rows.push(['Kestrel field star 1', '06:12:30.000', '+15:30:00.0', '93.12500', 'V', '1.250', '0.080', '33.00', '1.83', '2.1000', '0.0500', '61042.25000', 'KR-OWL'].join(','));
  void gaussian;
  fs.writeFileSync(path.join(out, 'kestrel-night-messy.csv'), '\ufeff' + [header, ...rows].join('\r\n') + '\r\n\r\n');
}
console.log(`wrote demo batches to ${out}`);
