// The invented, deterministic synthetic sky of the demo: fields spread over the sky, each with
// one, two or three dust clouds at different distances and field orientations, and the stars in
// them with positions and parallaxes. Same seed → same sky on every machine.
import { gaussian, mulberry32 } from '../server/science/random.js';
import { designation } from '../server/measurements/designation.js';
import { galacticToIcrs, icrsToGalactic } from '../server/science/frames.js';
import { ang2pixNest, npixForNside, pix2angNest } from '../server/science/healpix.js';

export interface DemoCloud {
  distancePc: number;
  /** Polarization this cloud adds, as a fraction, and its plane-of-sky angle (IAU, equatorial). */
  p: number;
  thetaDeg: number;
}

export interface DemoSkyField {
  key: string;
  raDeg: number;
  decDeg: number;
  radiusDeg: number;
  clouds: DemoCloud[];
}

export interface DemoSkyStar {
  field: string;
  name: string;
  sourceId: string;
  raDeg: number;
  decDeg: number;
  distancePc: number;
  parallaxMas: number;
  parallaxErrMas: number;
}

export const DEMO_SKY_SEED = 20261201;
export const DEMO_FIELD_NSIDE = 32;

export function buildDemoSky(opts: { fields?: number; starsPerField?: number; seed?: number } = {}) {
  const nFields = opts.fields ?? 240;
  const perField = opts.starsPerField ?? 30;
  const usedCells = new Set<number>();
  const rng = mulberry32(opts.seed ?? DEMO_SKY_SEED);
  const fields: DemoSkyField[] = [];
  const stars: DemoSkyStar[] = [];
  const seenSourceIds = new Set<string>();
  for (let f = 0; f < nFields; f++) {
    // uniform on the sphere, avoiding the densest Galactic-plane confusion is not needed for a demo
    // each field sits at the centre of its own Galactic HEALPix cell (NSIDE 32, as the demo run uses)
    let cell: number;
    do cell = Math.floor(rng() * npixForNside(DEMO_FIELD_NSIDE));
    while (usedCells.has(cell));
    usedCells.add(cell);
    const centre = pix2angNest(DEMO_FIELD_NSIDE, cell);
    const { raDeg, decDeg } = galacticToIcrs(centre.lonDeg, centre.latDeg);
    const kind = rng();
    const nClouds = kind < 0.4 ? 1 : kind < 0.8 ? 2 : 3;
    const clouds: DemoCloud[] = [];
    let d = 80 + rng() * 220;
    let theta = rng() * 180;
    for (let c = 0; c < nClouds; c++) {
      clouds.push({ distancePc: Math.round(d), p: 0.008 + rng() * 0.017, thetaDeg: ((theta % 180) + 180) % 180 });
      d += 250 + rng() * 600;
      theta += (rng() < 0.5 ? -1 : 1) * (35 + rng() * 50);
    }
    const key = `F${String(f + 1).padStart(3, '0')}`;
    const radiusDeg = 0.4;
    fields.push({ key, raDeg, decDeg, radiusDeg, clouds });
    const firstStar = stars.length;
    for (let s = 0; s < perField; s++) {
      // position uniform in a small disc around the field centre
      // uniform in a small disc around the field centre, in Galactic coordinates, kept inside the cell
      let ra = 0;
      let dec = 0;
      for (let tries = 0; tries < 50; tries++) {
        const r = radiusDeg * Math.sqrt(rng());
        const a = rng() * 2 * Math.PI;
        const b = Math.max(-89.9999, Math.min(89.9999, centre.latDeg + r * Math.sin(a)));
        const l = (((centre.lonDeg + (r * Math.cos(a)) / Math.max(0.05, Math.cos((centre.latDeg * Math.PI) / 180))) % 360) + 360) % 360;
        if (ang2pixNest(DEMO_FIELD_NSIDE, l, b) !== cell && tries < 49) continue;
        ({ raDeg: ra, decDeg: dec } = galacticToIcrs(l, b));
        break;
      }
      const distancePc = 40 + rng() * 2400;
      const trueParallax = 1000 / distancePc;
      const fracErr = 0.01 + rng() * 0.04;
      const parallaxErrMas = Math.max(0.015, trueParallax * fracErr);
      const parallaxMas = trueParallax - 0.017 + parallaxErrMas * gaussian(rng); // catalog values carry the −0.017 mas zero point
      let sourceId: string;
      do {
        // 19-digit identifiers well above 2^53, so any pass through a JS number would show
        sourceId = (4_000_000_000_000_000_000n + BigInt(Math.floor(rng() * 2 ** 31)) * 2_147_483_648n + BigInt(Math.floor(rng() * 2 ** 31))).toString();
      } while (seenSourceIds.has(sourceId));
      seenSourceIds.add(sourceId);
      stars.push({
        field: key,
        name: designation(ra, dec, 'KRS'),
        sourceId,
        raDeg: Number(ra.toFixed(6)),
        decDeg: Number(dec.toFixed(6)),
        distancePc,
        parallaxMas: Number(parallaxMas.toFixed(4)),
        parallaxErrMas: Number(parallaxErrMas.toFixed(4)),
      });
    }
    const placed = makeCloudsResolvable(clouds, stars.slice(firstStar).map((x) => x.distancePc));
    clouds.splice(0, clouds.length, ...placed);
  }
  return { fields, stars };
}

/**
 * Fewest stars of a field between two successive clouds (and behind the last one) for the demo to
 * list a cloud: the fit needs a segment of at least 3 stars (minSegmentLength) to see a step, and
 * one more absorbs a star misordered by its distance error. A demo cloud list the demo's own
 * stars cannot resolve would show the fit "missing" clouds that no method could find.
 */
export const DEMO_MIN_STARS_BETWEEN_CLOUDS = 4;

/**
 * The demo's clouds moved, where needed, so that each one after the first has at least
 * DEMO_MIN_STARS_BETWEEN_CLOUDS stars between it and the previous cloud (it is put midway between
 * the 4th and 5th star behind the previous cloud, rounded to a parsec); a cloud with fewer stars
 * than that behind it is dropped. The first cloud may have any number of stars in front (with
 * none, the fit reports it as a 'foreground' layer). Uses no random numbers, so stars and every
 * later field are unchanged.
 */
export function makeCloudsResolvable(clouds: DemoCloud[], starDistancesPc: number[], minBetween = DEMO_MIN_STARS_BETWEEN_CLOUDS): DemoCloud[] {
  const d = [...starDistancesPc].sort((a, b) => a - b);
  const out: DemoCloud[] = [];
  for (const c of clouds) {
    let at = c.distancePc;
    const prev = out[out.length - 1];
    if (prev) {
      const behindPrev = d.filter((x) => x > prev.distancePc);
      const between = behindPrev.filter((x) => x < at).length;
      if (between < minBetween) {
        if (behindPrev.length < minBetween + 1) break;
        at = Math.round((behindPrev[minBetween - 1] + behindPrev[minBetween]) / 2);
      }
    }
    if (d.filter((x) => x > at).length < minBetween) break;
    out.push({ ...c, distancePc: at });
  }
  return out;
}

/**
 * Agreement of a tomography run with the demo's own cloud list: a cell agrees when its layer count
 * equals the number of clouds of the field in it. Over-split: more layers than clouds.
 */
export function demoCloudAgreement(fields: DemoSkyField[], layersByCell: Map<number, number>, nside = DEMO_FIELD_NSIDE) {
  let agree = 0, over = 0, under = 0, missing = 0;
  for (const f of fields) {
    const g = icrsToGalactic(f.raDeg, f.decDeg);
    const n = layersByCell.get(ang2pixNest(nside, g.lDeg, g.bDeg));
    if (n === undefined) { missing++; continue; }
    if (n === f.clouds.length) agree++;
    else if (n > f.clouds.length) over++;
    else under++;
  }
  return { fields: fields.length, agree, over, under, missing };
}

/**
 * Synthetic measurement of a star in the demo sky: the thin-screen sum of the Stokes parameters
 * of every cloud nearer than the star (METHODS.md, Tomography §2), with a small turbulent scatter
 * and measurement noise. R-band values are scaled from V by the Serkowski law ratio at λmax 0.55 µm
 * (≈ 0.97; a demo approximation).
 */
export function demoStokesForStar(field: DemoSkyField, star: DemoSkyStar, band: 'R' | 'V', rng: () => number) {
  const scale = band === 'R' ? 0.97 : 1;
  let q = 0;
  let u = 0;
  for (const c of field.clouds) {
    if (c.distancePc >= star.distancePc) continue;
    const t = (2 * c.thetaDeg * Math.PI) / 180;
    q += c.p * scale * Math.cos(t) + 0.0006 * gaussian(rng);
    u += c.p * scale * Math.sin(t) + 0.0006 * gaussian(rng);
  }
  const err = 0.0006 + 0.0012 * rng();
  return { q: q + err * gaussian(rng), u: u + err * gaussian(rng), qErr: err, uErr: err };
}
