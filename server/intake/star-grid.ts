/**
 * An in-memory index of star positions for the cross-match of one batch: unit vectors binned
 * into a 3-D grid of cubes (edge ≈ 7′, at least the tolerance as a chord), so every star within
 * the tolerance of a point lies in a cube that the point's tolerance box touches — usually one,
 * at most 2×2×2. No special cases at the poles or at RA 0/360 (common practice for fixed-radius
 * neighbour search on the sphere). Each candidate is then checked with the exact separation
 * (Vincenty, science/separation.ts).
 *
 * Stars are kept in pages of typed arrays (a million stars take ~56 MB), never as one object
 * each; a StarRef is built only for a star a row matched.
 */
import { angularSeparationDeg } from '../science/separation.js';

const D2R = Math.PI / 180;

export interface GridStar {
  id: number;
  /** undefined: not read with the star (CrossMatcher.namesOf reads it when a row needs it) */
  name: string | null | undefined;
  source_id: string | null;
  ra_deg: number;
  dec_deg: number;
  parallax_mas: number | null;
  parallax_err_mas: number | null;
  hpx15: number;
  batch_id: number | null;
}

/** Cube edge in unit-vector space unless the tolerance is larger: 2e-3 rad ≈ 6.9′ (about one star per cube at a million stars). */
const MIN_CELL = 2e-3;
/** Cube coordinates run over ±1/h ≤ ±500: 10 bits each, one exact integer key. */
const cellKey = (ix: number, iy: number, iz: number) => ((ix + 512) << 20) | ((iy + 512) << 10) | (iz + 512);

/**
 * Slots live in pages of PAGE stars: the grid grows by one page at a time, never by copying what
 * it holds (a doubling array would briefly hold three times the stars' bytes and keep up to twice
 * what it needs).
 */
const PAGE_BITS = 16;
const PAGE = 1 << PAGE_BITS;
const IN_PAGE = PAGE - 1;

/** Per-page columns of the stars: 8 + 8 + 8 + 8 + 8 + 8 + 4 + 4 = 56 bytes a star. */
class Page {
  readonly ids = new Float64Array(PAGE);
  readonly ra = new Float64Array(PAGE);
  readonly dec = new Float64Array(PAGE);
  readonly plx = new Float64Array(PAGE);
  readonly plxErr = new Float64Array(PAGE);
  readonly hpx = new Float64Array(PAGE);
  /** batch id, -1 for none (batch ids are positive 32-bit integers) */
  readonly batch = new Int32Array(PAGE);
  /** next slot in the same cube, -1 at the end */
  readonly next = new Int32Array(PAGE);
}

export class StarGrid {
  private n = 0;
  private pages: Page[] = [];
  /** names and source ids by slot (null: none; a name undefined: not read, see GridStar) */
  private names: (string | null | undefined)[] = [];
  private sources: (string | null)[] = [];
  /** cube key → last star added in it (open addressing, linear probing; -1 = empty): 8 bytes a slot, not a Map entry per cube */
  private cellKeys = new Int32Array(1 << 12).fill(-1);
  private cellHeads = new Int32Array(1 << 12);
  private cells = 0;
  private readonly bySource = new Map<string, number>();
  /** cube edge in unit-vector space */
  private readonly h: number;
  private readonly chord: number;

  constructor(readonly toleranceArcsec: number) {
    this.chord = 2 * Math.sin((toleranceArcsec / 3600) * D2R * 0.5);
    this.h = Math.max(this.chord, MIN_CELL);
  }

  get size(): number {
    return this.n;
  }

  /** Add a star (the caller adds each star once). Returns its slot. */
  add(s: GridStar): number {
    if (s.batch_id !== null && !(s.batch_id > 0 && s.batch_id < 2 ** 31 && Number.isInteger(s.batch_id))) throw new Error(`star ${s.id}: batch id ${s.batch_id} out of range`);
    const k = this.n++;
    if (k >> PAGE_BITS === this.pages.length) this.pages.push(new Page());
    const pg = this.pages[k >> PAGE_BITS];
    const j = k & IN_PAGE;
    pg.ids[j] = s.id;
    pg.ra[j] = s.ra_deg;
    pg.dec[j] = s.dec_deg;
    pg.plx[j] = s.parallax_mas ?? NaN;
    pg.plxErr[j] = s.parallax_err_mas ?? NaN;
    pg.hpx[j] = s.hpx15;
    pg.batch[j] = s.batch_id ?? -1;
    this.names.push(s.name);
    this.sources.push(s.source_id);
    if (s.source_id) this.bySource.set(s.source_id, k);
    const ra = s.ra_deg * D2R;
    const dec = s.dec_deg * D2R;
    const c = Math.cos(dec);
    const key = cellKey(Math.floor((c * Math.cos(ra)) / this.h), Math.floor((c * Math.sin(ra)) / this.h), Math.floor(Math.sin(dec) / this.h));
    const at = this.slotOf(key);
    if (this.cellKeys[at] === -1) {
      this.cellKeys[at] = key;
      this.cellHeads[at] = k;
      pg.next[j] = -1;
      if (++this.cells * 2 > this.cellKeys.length) this.rehash();
    } else {
      pg.next[j] = this.cellHeads[at];
      this.cellHeads[at] = k;
    }
    return k;
  }

  /** The table slot of a cube key: where it is, or the empty slot where it would go. */
  private slotOf(key: number): number {
    const mask = this.cellKeys.length - 1;
    let i = (Math.imul(key, 0x9e3779b1) >>> 0) & mask;
    while (this.cellKeys[i] !== -1 && this.cellKeys[i] !== key) i = (i + 1) & mask;
    return i;
  }

  /** Double the cube table (load factor ≤ 1/2). */
  private rehash(): void {
    const keys = this.cellKeys;
    const heads = this.cellHeads;
    this.cellKeys = new Int32Array(keys.length * 2).fill(-1);
    this.cellHeads = new Int32Array(keys.length * 2);
    for (let i = 0; i < keys.length; i++) {
      if (keys[i] === -1) continue;
      const at = this.slotOf(keys[i]);
      this.cellKeys[at] = keys[i];
      this.cellHeads[at] = heads[i];
    }
  }

  star(k: number): GridStar {
    const pg = this.pages[k >> PAGE_BITS];
    const j = k & IN_PAGE;
    const b = pg.batch[j];
    const p = pg.plx[j];
    const pe = pg.plxErr[j];
    return { id: pg.ids[j], name: this.names[k], source_id: this.sources[k], ra_deg: pg.ra[j], dec_deg: pg.dec[j], parallax_mas: Number.isNaN(p) ? null : p, parallax_err_mas: Number.isNaN(pe) ? null : pe, hpx15: pg.hpx[j], batch_id: b === -1 ? null : b };
  }

  batchOf(k: number): number | null {
    const b = this.pages[k >> PAGE_BITS].batch[k & IN_PAGE];
    return b === -1 ? null : b;
  }

  sourceOf(k: number): string | null {
    return this.sources[k];
  }

  slotOfSource(sourceId: string): number | undefined {
    return this.bySource.get(sourceId);
  }

  /** Slots of the stars within the tolerance of (ra, dec), with their separations in arcsec, nearest first. */
  near(raDeg: number, decDeg: number): { k: number; sepArcsec: number }[] {
    const ra = raDeg * D2R;
    const dec = decDeg * D2R;
    const c = Math.cos(dec);
    const x = c * Math.cos(ra);
    const y = c * Math.sin(ra);
    const z = Math.sin(dec);
    const h = this.h;
    const r = this.chord;
    const x0 = Math.floor((x - r) / h), x1 = Math.floor((x + r) / h);
    const y0 = Math.floor((y - r) / h), y1 = Math.floor((y + r) / h);
    const z0 = Math.floor((z - r) / h), z1 = Math.floor((z + r) / h);
    let out: { k: number; sepArcsec: number }[] | null = null;
    for (let ix = x0; ix <= x1; ix++)
      for (let iy = y0; iy <= y1; iy++)
        for (let iz = z0; iz <= z1; iz++) {
          const at = this.slotOf(cellKey(ix, iy, iz));
          for (let k = this.cellKeys[at] === -1 ? -1 : this.cellHeads[at]; k !== -1; ) {
            const pg = this.pages[k >> PAGE_BITS];
            const j = k & IN_PAGE;
            const sep = angularSeparationDeg(raDeg, decDeg, pg.ra[j], pg.dec[j]) * 3600;
            if (sep <= this.toleranceArcsec) (out ??= []).push({ k, sepArcsec: sep });
            k = pg.next[j];
          }
        }
    if (!out) return [];
    if (out.length > 1) out.sort((a, b) => a.sepArcsec - b.sepArcsec);
    return out;
  }
}
