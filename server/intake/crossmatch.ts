import type { Knex } from 'knex';
import { queryDiscNest } from '../science/healpix.js';
import { angularSeparationDeg } from '../science/separation.js';
import { INDEX_NSIDE } from '../measurements/derive.js';
import { selectRowsInRanges, selectRowsWhereIn } from '../dialect.js';

const STAR_COLS = ['id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'parallax_mas', 'parallax_err_mas', 'hpx15', 'batch_id'];

export interface StarRef {
  id: number;
  name: string | null;
  source_id: string | null;
  ra_deg: number;
  dec_deg: number;
  parallax_mas: number | null;
  parallax_err_mas: number | null;
  hpx15: number;
  /** the batch that created the star (null: catalog seed or curator) */
  batch_id?: number | null;
}

export interface MatchQuery {
  sourceId?: string;
  raDeg: number;
  decDeg: number;
  /** queryDiscNest of the position at the tolerance, when already computed */
  pixels?: ArrayLike<number> & Iterable<number>;
}

export type MatchResult = (
  | { kind: 'source_id' | 'position'; star: StarRef }
  | { kind: 'ambiguous'; candidates: { star: StarRef; separationArcsec: number }[] }
  | { kind: 'none' }
  /** the row's source_id belongs to a star the uploader may not see yet: held for curators */
  | { kind: 'held'; star: StarRef }
) & {
  /** stars the uploader may not see (another observer's batch awaiting review) within the tolerance */
  hidden?: StarRef[];
};


/**
 * Ties rows to known stars: by source_id first, else by position within the tolerance. Two or
 * more stars within the tolerance are reported as ambiguous for the curator — never guessed.
 * Stars created earlier in the same batch are found too (`remember`). Only stars the uploader
 * may see take part (`visible(batch_id)`: the catalog, approved batches, the uploader's own);
 * others are reported as `hidden`, for a note that only curators read.
 */
export class CrossMatcher {
  private bySource = new Map<string, StarRef>();
  private byPixel = new Map<number, StarRef[]>();
  private hiddenBySource = new Map<string, StarRef>();
  private hiddenByPixel = new Map<number, StarRef[]>();
  private loadedPixels = new Set<number>();
  private loadedSources = new Set<string>();

  constructor(
    private readonly db: Knex | Knex.Transaction,
    private readonly toleranceArcsec: number,
    private readonly visible: (batchId: number | null) => boolean = () => true,
  ) {}

  private pixelCache = new WeakMap<MatchQuery, number[]>();
  private pixelsFor(q: MatchQuery): Iterable<number> {
    if (q.pixels) return q.pixels;
    let px = this.pixelCache.get(q);
    if (!px) this.pixelCache.set(q, (px = queryDiscNest(INDEX_NSIDE, q.raDeg, q.decDeg, this.toleranceArcsec / 3600, true)));
    return px;
  }

  /** Forget what was loaded for the previous chunk (it is in the database now). */
  resetChunk(): void {
    this.bySource.clear();
    this.byPixel.clear();
    this.hiddenBySource.clear();
    this.hiddenByPixel.clear();
    this.loadedPixels.clear();
    this.loadedSources.clear();
    this.pixelCache = new WeakMap();
  }

  remember(star: StarRef): void {
    if (star.source_id) this.bySource.set(star.source_id, star);
    const list = this.byPixel.get(star.hpx15);
    if (list) list.push(star);
    else this.byPixel.set(star.hpx15, [star]);
  }

  /** Load every catalog star a chunk of queries could match, in a few queries. */
  async prefetch(queries: MatchQuery[]): Promise<void> {
    const seen = new Set<number>();
    const add = (rows: unknown[][]) => {
      for (const r of rows) {
        const id = r[0] as number;
        if (seen.has(id)) continue;
        seen.add(id);
        const sourceId = r[2] as string | null;
        if (sourceId && this.bySource.has(sourceId)) continue;
        const batchId = r[8] === null || r[8] === undefined ? null : Number(r[8]);
        const star: StarRef = { id, name: r[1] as string | null, source_id: sourceId, ra_deg: r[3] as number, dec_deg: r[4] as number, parallax_mas: r[5] as number | null, parallax_err_mas: r[6] as number | null, hpx15: Number(r[7]), batch_id: batchId };
        if (this.visible(batchId)) this.remember(star);
        else {
          if (sourceId) this.hiddenBySource.set(sourceId, star);
          const list = this.hiddenByPixel.get(star.hpx15);
          if (list) list.push(star);
          else this.hiddenByPixel.set(star.hpx15, [star]);
        }
      }
    };
    // by source_id first; only rows whose id is unknown need the positional look-up
    const sources = [...new Set(queries.map((q) => q.sourceId).filter((s): s is string => !!s && !this.loadedSources.has(s)))];
    add(await selectRowsWhereIn(this.db, 'stars', 'source_id', sources, STAR_COLS));
    for (const s of sources) this.loadedSources.add(s);
    const pixels = new Set<number>();
    for (const q of queries) {
      if (q.sourceId && this.bySource.has(q.sourceId)) continue;
      for (const p of this.pixelsFor(q)) if (!this.loadedPixels.has(p)) pixels.add(p);
    }
    // neighbouring nested pixels are often consecutive: one range per run
    const sorted = Float64Array.from(pixels).sort();
    const ranges: number[] = [];
    for (let i = 0; i < sorted.length; i++) {
      if (ranges.length && sorted[i] === ranges[ranges.length - 1] + 1) ranges[ranges.length - 1] = sorted[i];
      else ranges.push(sorted[i], sorted[i]);
    }
    add(await selectRowsInRanges(this.db, 'stars', 'hpx15', ranges, STAR_COLS));
    for (const p of pixels) this.loadedPixels.add(p);
  }

  /** Match one row (after prefetch of its chunk). */
  match(q: MatchQuery): MatchResult {
    if (q.sourceId) {
      const s = this.bySource.get(q.sourceId);
      if (s) return { kind: 'source_id', star: s };
    }
    const r = this.matchVisible(q);
    if (!this.hiddenByPixel.size && !this.hiddenBySource.size) return r;
    const hidden: StarRef[] = [];
    const held = q.sourceId ? this.hiddenBySource.get(q.sourceId) : undefined;
    if (held) hidden.push(held);
    for (const p of this.pixelsFor(q)) {
      for (const star of this.hiddenByPixel.get(p) ?? []) {
        if (star === held) continue;
        if (angularSeparationDeg(q.raDeg, q.decDeg, star.ra_deg, star.dec_deg) * 3600 <= this.toleranceArcsec) hidden.push(star);
      }
    }
    if (held && r.kind === 'none') return { kind: 'held', star: held, hidden };
    return hidden.length ? { ...r, hidden } : r;
  }

  private matchVisible(q: MatchQuery): MatchResult {
    const near: { star: StarRef; separationArcsec: number }[] = [];
    const seen = new Set<number>();
    for (const p of this.pixelsFor(q)) {
      for (const star of this.byPixel.get(p) ?? []) {
        if (seen.has(star.id)) continue;
        seen.add(star.id);
        // a star that has a different source_id is a different star, however close
        if (q.sourceId && star.source_id && star.source_id !== q.sourceId) continue;
        const sep = angularSeparationDeg(q.raDeg, q.decDeg, star.ra_deg, star.dec_deg) * 3600;
        if (sep <= this.toleranceArcsec) near.push({ star, separationArcsec: sep });
      }
    }
    if (near.length === 1) return { kind: 'position', star: near[0].star };
    if (near.length > 1) return { kind: 'ambiguous', candidates: near.sort((a, b) => a.separationArcsec - b.separationArcsec) };
    return { kind: 'none' };
  }
}
