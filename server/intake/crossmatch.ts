import type { Knex } from 'knex';
import { queryDiscNest } from '../science/healpix.js';
import { angularSeparationDeg } from '../science/separation.js';
import { INDEX_NSIDE } from '../measurements/derive.js';
import { selectWhereIn } from '../dialect.js';

export interface StarRef {
  id: number;
  name: string | null;
  source_id: string | null;
  ra_deg: number;
  dec_deg: number;
  parallax_mas: number | null;
  parallax_err_mas: number | null;
  hpx15: number;
}

export interface MatchQuery {
  sourceId?: string;
  raDeg: number;
  decDeg: number;
}

export type MatchResult =
  | { kind: 'source_id' | 'position'; star: StarRef }
  | { kind: 'ambiguous'; candidates: { star: StarRef; separationArcsec: number }[] }
  | { kind: 'none' };


/**
 * Ties rows to known stars: by source_id first, else by position within the tolerance. Two or
 * more stars within the tolerance are reported as ambiguous for the curator — never guessed.
 * Stars created earlier in the same batch are found too (`remember`).
 */
export class CrossMatcher {
  private bySource = new Map<string, StarRef>();
  private byPixel = new Map<number, StarRef[]>();
  private loadedPixels = new Set<number>();
  private loadedSources = new Set<string>();

  constructor(
    private readonly db: Knex | Knex.Transaction,
    private readonly toleranceArcsec: number,
  ) {}

  private pixelCache = new WeakMap<MatchQuery, number[]>();
  private pixelsFor(q: MatchQuery): number[] {
    let px = this.pixelCache.get(q);
    if (!px) this.pixelCache.set(q, (px = queryDiscNest(INDEX_NSIDE, q.raDeg, q.decDeg, this.toleranceArcsec / 3600, true)));
    return px;
  }

  /** Forget what was loaded for the previous chunk (it is in the database now). */
  resetChunk(): void {
    this.bySource.clear();
    this.byPixel.clear();
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

  /** Load every catalog star a chunk of queries could match, in a few IN (…) queries. */
  async prefetch(queries: MatchQuery[]): Promise<void> {
    const cols = ['id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'parallax_mas', 'parallax_err_mas', 'hpx15'];
    const seen = new Set<number>();
    const add = (rows: StarRef[]) => {
      for (const r of rows) {
        if (seen.has(r.id)) continue;
        seen.add(r.id);
        if (r.source_id && this.bySource.has(r.source_id)) continue;
        this.remember({ ...r, hpx15: Number(r.hpx15) });
      }
    };
    // by source_id first; only rows whose id is unknown need the positional look-up
    const sources = [...new Set(queries.map((q) => q.sourceId).filter((s): s is string => !!s && !this.loadedSources.has(s)))];
    add(await selectWhereIn<StarRef>(this.db, 'stars', 'source_id', sources, cols));
    for (const s of sources) this.loadedSources.add(s);
    const pixels = new Set<number>();
    for (const q of queries) {
      if (q.sourceId && this.bySource.has(q.sourceId)) continue;
      for (const p of this.pixelsFor(q)) if (!this.loadedPixels.has(p)) pixels.add(p);
    }
    add(await selectWhereIn<StarRef>(this.db, 'stars', 'hpx15', [...pixels], cols));
    for (const p of pixels) this.loadedPixels.add(p);
  }

  /** Match one row (after prefetch of its chunk). */
  match(q: MatchQuery): MatchResult {
    if (q.sourceId) {
      const s = this.bySource.get(q.sourceId);
      if (s) return { kind: 'source_id', star: s };
    }
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
