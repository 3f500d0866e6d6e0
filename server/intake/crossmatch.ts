import type { Knex } from 'knex';
import { queryDiscNest } from '../science/healpix.js';
import { INDEX_NSIDE } from '../measurements/service.js';
import { iterateRows, selectRowsInRanges, selectRowsWhereIn } from '../dialect.js';
import { StarGrid, type GridStar } from './star-grid.js';

const STAR_COLS = ['id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'parallax_mas', 'parallax_err_mas', 'hpx15', 'batch_id'];

export type StarRef = GridStar;

export interface MatchQuery {
  sourceId?: string;
  raDeg: number;
  decDeg: number;
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

/** What preloadAll reads of each star: no name (a row needs one only for a note or an ambiguous match; namesOf reads those). */
const PRELOAD_COLS = ['id', 'source_id', 'ra_deg', 'dec_deg', 'parallax_mas', 'parallax_err_mas', 'hpx15', 'batch_id'];

/** Read every star up front when the catalog holds at most this many per row of the batch. */
export const PRELOAD_STARS_PER_ROW = 25;

const starOf = (r: unknown[]): GridStar => ({
  id: r[0] as number, name: r[1] as string | null, source_id: r[2] as string | null, ra_deg: r[3] as number, dec_deg: r[4] as number,
  parallax_mas: r[5] as number | null, parallax_err_mas: r[6] as number | null, hpx15: Number(r[7]), batch_id: r[8] === null || r[8] === undefined ? null : Number(r[8]),
});

/**
 * Ties rows to known stars: by source_id first, else by position within the tolerance. Two or
 * more stars within the tolerance are reported as ambiguous for the curator — never guessed.
 * Stars created earlier in the same batch are found too (`remember`: they stay in memory for the
 * whole batch). Only stars the uploader may see take part (`visible(batch_id)`: the catalog,
 * approved batches, the uploader's own); others are reported as `hidden`, for a note that only
 * curators read.
 *
 * Catalog stars come into memory in one of two ways: all at once (`preloadAll`, one sequential
 * read: for a batch that is large beside the catalog), or per chunk of rows (`prefetch`: by
 * source_id, then by the HEALPix order-15 pixels of each position's disc, one index range per run
 * of consecutive pixels).
 */
export class CrossMatcher {
  private readonly grid: StarGrid;
  private complete = false;
  private readonly loadedPixels = new Set<number>();
  private readonly loadedSources = new Set<string>();
  /** stars read by prefetch (which may meet a star twice) */
  private readonly loadedIds = new Set<number>();

  constructor(
    private readonly db: Knex | Knex.Transaction,
    private readonly toleranceArcsec: number,
    private readonly visible: (batchId: number | null) => boolean = () => true,
  ) {
    this.grid = new StarGrid(toleranceArcsec);
  }

  /** Read every star of the catalog (each star once, in storage order), without its name. */
  async preloadAll(): Promise<number> {
    let n = 0;
    await iterateRows(this.db, `SELECT ${PRELOAD_COLS.map((c) => `"${c}"`).join(',')} FROM stars`, [], (r) => {
      this.grid.add({
        id: r[0] as number, name: undefined, source_id: r[1] as string | null, ra_deg: r[2] as number, dec_deg: r[3] as number,
        parallax_mas: r[4] as number | null, parallax_err_mas: r[5] as number | null, hpx15: Number(r[6]), batch_id: r[7] === null || r[7] === undefined ? null : Number(r[7]),
      });
      n++;
    });
    this.complete = true;
    return n;
  }

  /** Names of the given stars whose name was not read with them (preloadAll), by id. */
  async namesOf(stars: Iterable<StarRef>): Promise<Map<number, string | null>> {
    const ids = new Set<number>();
    for (const s of stars) if (s.name === undefined) ids.add(s.id);
    const out = new Map<number, string | null>();
    if (ids.size) for (const r of await selectRowsWhereIn(this.db, 'stars', 'id', [...ids], ['id', 'name'])) out.set(r[0] as number, r[1] as string | null);
    return out;
  }

  /** Keep a star created by this batch; returns its slot (see starAt). */
  remember(star: StarRef): number {
    return this.grid.add(star);
  }

  starAt(slot: number): StarRef {
    return this.grid.star(slot);
  }

  /** Load every catalog star a chunk of queries could match (nothing once preloaded). */
  async prefetch(queries: MatchQuery[]): Promise<void> {
    if (this.complete) return;
    const add = (rows: unknown[][]) => {
      for (const r of rows) {
        if (this.loadedIds.has(r[0] as number)) continue;
        this.loadedIds.add(r[0] as number);
        this.grid.add(starOf(r));
      }
    };
    const sources = [...new Set(queries.map((q) => q.sourceId).filter((s): s is string => !!s && !this.loadedSources.has(s)))];
    add(await selectRowsWhereIn(this.db, 'stars', 'source_id', sources, STAR_COLS));
    for (const s of sources) this.loadedSources.add(s);
    const pixels = new Set<number>();
    for (const q of queries) {
      if (q.sourceId && this.grid.slotOfSource(q.sourceId) !== undefined) continue;
      for (const p of queryDiscNest(INDEX_NSIDE, q.raDeg, q.decDeg, this.toleranceArcsec / 3600, true)) if (!this.loadedPixels.has(p)) pixels.add(p);
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
    const g = this.grid;
    let held: StarRef | undefined;
    if (q.sourceId) {
      const k = g.slotOfSource(q.sourceId);
      if (k !== undefined) {
        if (this.visible(g.batchOf(k))) return { kind: 'source_id', star: g.star(k) };
        held = g.star(k);
      }
    }
    const near: { star: StarRef; separationArcsec: number }[] = [];
    const hidden: StarRef[] = held ? [held] : [];
    for (const { k, sepArcsec } of g.near(q.raDeg, q.decDeg)) {
      if (!this.visible(g.batchOf(k))) {
        if (!held || g.star(k).id !== held.id) hidden.push(g.star(k));
        continue;
      }
      // a star that has a different source_id is a different star, however close
      const s = g.sourceOf(k);
      if (q.sourceId && s && s !== q.sourceId) continue;
      near.push({ star: g.star(k), separationArcsec: sepArcsec });
    }
    const extra = hidden.length ? { hidden } : {};
    if (held && !near.length) return { kind: 'held', star: held, ...extra };
    if (near.length === 1) return { kind: 'position', star: near[0].star, ...extra };
    if (near.length > 1) return { kind: 'ambiguous', candidates: near, ...extra };
    return { kind: 'none', ...extra };
  }
}
