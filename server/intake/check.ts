import fs from 'node:fs';
import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import { deleteInShortTransactions, maxId, reserveIds, setForeignKeyChecks, writeStats, selectRowsWhereIn, syncIdSequences, writeInShortTransactions } from '../dialect.js';
import { AppError } from '../errors.js';
import { icrsToGalactic } from '../science/frames.js';
import { deriveMeasurement, MEAS_COLS, ROW_COLS, STAR_COLS, type ColumnMapping } from '../measurements/service.js';
import { CrossMatcher, PRELOAD_STARS_PER_ROW, type MatchQuery, type MatchResult, type StarRef } from './crossmatch.js';
import { measurementValues, NUM, NUM_SLOTS, warningsJsonOf, writeDerived, type PrepareContext } from './prepare.js';
import { preparedChunks } from './prepare-stream.js';
import { VISIBLE_BATCH_STATES } from '../lib/visibility.js';

export type RowState = 'accepted' | 'rejected' | 'duplicate' | 'conflict' | 'ambiguous';

export interface BatchCounts {
  rows: number;
  accepted: number;
  rejected: number;
  duplicates: number;
  conflicts: number;
  ambiguous: number;
  newStars: number;
  matchedStars: number;
  warnings: number;
}

export const ZERO_COUNTS: BatchCounts = { rows: 0, accepted: 0, rejected: 0, duplicates: 0, conflicts: 0, ambiguous: 0, newStars: 0, matchedStars: 0, warnings: 0 };

export interface CheckOptions {
  crossmatchArcsec: number;
  /** two epochs closer than this (days) are the same observation */
  mjdToleranceDays: number;
  /** append where the check's time went to this file (config STARVEIL_INTAKE_TIMING), or null */
  timingFile?: string | null;
}

export interface CheckProgress {
  batchId: number;
  rowsDone: number;
  bytesDone: number;
  rowsTotal: number | null;
}

/**
 * Work per write transaction (ms of inserts; the COMMIT adds about as much again): the single
 * SQLite writer is held for tens of milliseconds at a time, then free for sign-ins, session
 * writes and curator edits. Smaller steps cost throughput (each COMMIT rewrites the index pages
 * it touched), larger ones delay everyone else.
 */
const WRITE_BUDGET_MS = 60;

/** Files at least this large are parsed on a second worker thread, overlapping the matching and writing. */
export const PARSE_WORKER_MIN_BYTES = 1 << 20;

/** Values equal to within floating-point noise of a CSV round trip. */
const same = (a: number | null, b: number | null) => (a === null || b === null ? a === b : Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b)));

const parseJson = <T>(s: string | null | undefined, fallback: T): T => (s ? (JSON.parse(s) as T) : fallback);

/** Data rows of a CSV file: its line breaks, less the header (quoted line breaks make it an estimate). */
export async function countDataRows(path: string): Promise<number> {
  let n = 0;
  let last = 10;
  for await (const chunk of fs.createReadStream(path, { highWaterMark: 1 << 20 }) as AsyncIterable<Buffer>) {
    let i = -1;
    while ((i = chunk.indexOf(10, i + 1)) !== -1) n++;
    if (chunk.length) last = chunk[chunk.length - 1];
  }
  if (last !== 10) n++;
  return Math.max(0, n - 1);
}

/** Remove whatever an interrupted or failed check of this batch had written (short transactions). */
export async function clearBatchRows(db: Knex, batchId: number): Promise<void> {
  await deleteInShortTransactions(db, 'measurements', 'batch_id = ?', [batchId]);
  await deleteInShortTransactions(db, 'batch_rows', 'batch_id = ?', [batchId]);
  await deleteInShortTransactions(db, 'stars', 'batch_id = ? AND NOT EXISTS (SELECT 1 FROM measurements m WHERE m.star_id = stars.id)', [batchId]);
}

/** Grants of ids, reserved in blocks so other connections can insert meanwhile. */
class IdBlock {
  private next = 0;
  private end = 0;
  constructor(
    private readonly db: Knex,
    private readonly table: string,
  ) {}
  async ensure(n: number): Promise<void> {
    if (this.end - this.next >= n) return;
    const size = Math.max(n, 20_000);
    this.next = await reserveIds(this.db, this.table, size);
    this.end = this.next + size;
  }
  take(): number {
    return this.next++;
  }
}

/**
 * The whole check of one batch, on the caller's own connection (a worker thread's): parse,
 * validate, derive, cross-match, de-duplicate and write. Rows are written in short transactions
 * and stay invisible (the batch is `checking`) until one last short transaction makes the batch
 * `awaiting_review`. A failure marks the batch `failed` with a reason in words and clears its rows.
 */
export async function checkBatch(db: Knex, batchId: number, opts: CheckOptions, report: (p: CheckProgress) => void): Promise<void> {
  const b = await db('batches').where({ id: batchId }).first();
  if (!b || b.state !== 'checking') return;
  let lines: [number, number] = [0, 0];
  try {
    await clearBatchRows(db, batchId);
    const rowsTotal = await countDataRows(b.stored_path);
    await db('batches').where({ id: batchId }).update({ rows_done: 0, bytes_done: 0, rows_total: rowsTotal });
    report({ batchId, rowsDone: 0, bytesDone: 0, rowsTotal });
    const counts = await run(db, b, opts, rowsTotal, report, (l) => (lines = l));
    // the flip: one short transaction makes the whole batch visible
    await db.transaction(async (trx) => {
      const n = await trx('batches').where({ id: batchId, state: 'checking' }).update({
        state: 'awaiting_review', counts_json: JSON.stringify(counts), bytes_done: Number(b.size_bytes), rows_done: counts.rows, rows_total: counts.rows, updated_at: new Date().toISOString(), failure: null,
      });
      if (!n) throw new AppError(409, 'conflict', 'The batch was changed while it was checked.');
      await recordAudit(trx, { actorId: b.uploaded_by, action: 'batch.checked', entityType: 'batch', entityId: batchId, after: counts });
    });
  } catch (e) {
    let message: string;
    if (e instanceof AppError) message = e.message;
    else {
      console.error(`intake: batch ${batchId} failed near lines ${lines[0]}–${lines[1]}`, e);
      message = lines[0]
        ? `The batch could not be stored: an unexpected problem while writing lines ${lines[0]}–${lines[1]}. Nothing of it was kept; the problem has been logged for the administrators. Uploading the same file again retries it.`
        : 'The batch could not be checked: an unexpected problem before its first line was read. Nothing of it was kept; the problem has been logged for the administrators. Uploading the same file again retries it.';
    }
    await db.transaction(async (trx) => {
      await trx('batches').where({ id: batchId }).update({ state: 'failed', failure: message, updated_at: new Date().toISOString() });
      await recordAudit(trx, { actorId: b.uploaded_by, action: 'batch.failed', entityType: 'batch', entityId: batchId, after: { failure: message } });
    });
    await clearBatchRows(db, batchId);
  }
}

async function run(db: Knex, b: Record<string, any>, opts: CheckOptions, rowsTotal: number, report: (p: CheckProgress) => void, onLines: (l: [number, number]) => void): Promise<BatchCounts> {
  const batchId = b.id as number;
  const me = b.uploaded_by as number;
  const proposal = parseJson<{ headers: string[]; delimiter: string } | null>(b.proposal_json, null);
  const mapping = parseJson<ColumnMapping>(b.mapping_json, {});
  if (!proposal) throw new AppError(400, 'bad_request', 'The batch has no header information; upload the file again.');
  const headers = proposal.headers;
  const headerOf = (canon: string) => mapping[canon] ?? canon;
  const instruments = new Map<string, { code: string; bands: string[] }>(
    (await db('instruments').select('code', 'bands')).map((i) => [String(i.code).toLowerCase(), { code: i.code, bands: String(i.bands).split(',') }]),
  );
  // whose stars and measurements this uploader's rows may meet: approved batches, the uploader's own, the catalog
  const approvedOrOwn = new Set<number>([batchId]);
  const own = new Set<number>([batchId]);
  // curators (and admins) see every batch awaiting review, so their uploads meet all of them
  const seesAll = ['curator', 'admin'].includes((await db('users').where({ id: me }).first('role'))?.role);
  const visibleStates = VISIBLE_BATCH_STATES as unknown as string[];
  for (const r of await db('batches').where('state', 'approved').orWhere((w) => (seesAll ? w.whereIn('state', visibleStates) : w.where('uploaded_by', me).whereIn('state', visibleStates))).select('id', 'uploaded_by')) {
    approvedOrOwn.add(r.id);
    if (r.uploaded_by === me || seesAll) own.add(r.id);
  }
  const starVisible = (bid: number | null) => bid === null || approvedOrOwn.has(bid);
  const now = new Date().toISOString();
  const starRow = (s: StarRef, glon: number, glat: number) => [s.id, s.name, s.source_id, s.ra_deg, s.dec_deg, glon, glat, s.parallax_mas, s.parallax_err_mas, s.hpx15, now, me, batchId];
  const matcher = new CrossMatcher(db, opts.crossmatchArcsec, starVisible);
  // a batch large beside the catalog reads every star once, in storage order, instead of
  // looking positions up chunk by chunk
  if ((await maxId(db, 'stars')) <= rowsTotal * PRELOAD_STARS_PER_ROW) await matcher.preloadAll();
  // SQLite: new stars are written last, in transactions of star rows only (each COMMIT rewrites
  // the pages of the random-order indexes on hpx15 and position it touched: fewer, fuller
  // transactions touch fewer pages per star than a few stars in every chunk's transaction);
  // elsewhere chunk by chunk
  const deferStars = await setForeignKeyChecks(db, false);
  // grid slots of the batch's new stars (their rows are built again from the grid at the end)
  const deferred: number[] = [];
  const starIds = new IdBlock(db, 'stars');
  const rowIds = new IdBlock(db, 'batch_rows');
  const measIds = new IdBlock(db, 'measurements');
  const counts: BatchCounts = { ...ZERO_COUNTS };
  const matched = new Set<number>();
  let bytesDone = 0;
  let lastReport = 0;

  const ctx: PrepareContext = { headers, mapping, batchInstrument: b.instrument, instruments: [...instruments], crossmatchArcsec: opts.crossmatchArcsec };
  const T: Record<string, number> = { wait: 0, ids: 0, prefetch: 0, match: 0, known: 0, rows: 0, write: 0, stars: 0 };
  const mem = { rss: 0, heapTotal: 0, external: 0 };
  const sampleMemory = () => {
    const m = process.memoryUsage();
    mem.rss = Math.max(mem.rss, m.rss);
    mem.heapTotal = Math.max(mem.heapTotal, m.heapTotal);
    mem.external = Math.max(mem.external, m.external);
  };
  let tt = performance.now();
  const lap = (k: string) => {
    const t = performance.now();
    T[k] += t - tt;
    tt = t;
  };
  try {
    for await (const c of preparedChunks(b.stored_path, proposal.delimiter, ctx, (x) => (bytesDone = x), Number(b.size_bytes) >= PARSE_WORKER_MIN_BYTES)) {
      const n = c.n;
      const num = c.num;
      lap('wait');
      onLines([c.lines[0], c.lines[n - 1]]);
      await Promise.all([starIds.ensure(n), rowIds.ensure(n), measIds.ensure(n)]);
      lap('ids');
      const queries: (MatchQuery | null)[] = new Array(n);
      for (let i = 0; i < n; i++) {
        if (!c.ok[i]) {
          queries[i] = null;
          continue;
        }
        const o = i * NUM_SLOTS;
        const q: MatchQuery = { raDeg: num[o + NUM.pos_ra], decDeg: num[o + NUM.pos_dec] };
        if (c.sourceId[i] !== null) q.sourceId = c.sourceId[i]!;
        queries[i] = q;
      }
      await matcher.prefetch(queries.filter((q): q is MatchQuery => q !== null));
      lap('prefetch');
      const toLoad = new Set<number>();
      const matches: (MatchResult | null)[] = queries.map((q) => {
        if (!q) return null;
        const m = matcher.match(q);
        if (m.kind === 'source_id' || m.kind === 'position') toLoad.add(m.star.id);
        return m;
      });
      // names of preloaded stars a note or an ambiguous match will show (read only for those)
      const named: StarRef[] = [];
      for (const m of matches) {
        if (!m) continue;
        if (m.hidden) named.push(...m.hidden);
        if (m.kind === 'ambiguous') for (const x of m.candidates) named.push(x.star);
      }
      const names = named.length ? await matcher.namesOf(named) : null;
      const nameOf = (s: StarRef) => (s.name !== undefined ? s.name : (names?.get(s.id) ?? null));
      lap('match');
      // measurements the uploader may see of the matched stars, for de-duplication
      type Known = { id: number; mjd: number | null; q: number; u: number; q_err: number; u_err: number; line?: number };
      const known = new Map<string, Known[]>();
      for (const r of await selectRowsWhereIn(db, 'measurements', 'star_id', [...toLoad], ['id', 'star_id', 'band', 'instrument', 'mjd', 'q', 'u', 'q_err', 'u_err', 'state', 'batch_id'])) {
        if (r[9] !== 'approved' && !own.has(r[10] as number)) continue;
        const k = `${r[1]}|${r[2]}|${r[3]}`;
        const e: Known = { id: r[0] as number, mjd: r[4] as number | null, q: r[5] as number, u: r[6] as number, q_err: r[7] as number, u_err: r[8] as number };
        const list = known.get(k);
        if (list) list.push(e);
        else known.set(k, [e]);
      }

      lap('known');
      const newStars: unknown[][] = [];
      const rowsOut: unknown[][] = [];
      const measOut: unknown[][] = [];
      let newInChunk = false;
      for (let i = 0; i < n; i++) {
        counts.rows++;
        const rowId = rowIds.take();
        const line = c.lines[i];
        // a star created earlier in this chunk is found only by matching again
        const m = newInChunk && queries[i] ? matcher.match(queries[i]!) : matches[i];
        if (!m) {
          counts.rejected++;
          rowsOut.push([rowId, batchId, line, c.valuesJson[i], 'rejected', c.errorsJson[i], c.warningsJson[i], null, null, null, null, null, null]);
          continue;
        }
        const o = i * NUM_SLOTS;
        let star: StarRef | null = null;
        let starMatch: string | null = null;
        const notes: string[] = [];
        if (m.hidden?.length) {
          for (const h of m.hidden) {
            const hn = nameOf(h);
            notes.push(`star ${h.id}${hn ? ` (${hn})` : ''} from batch ${h.batch_id}, not yet approved and uploaded by someone else, is within ${opts.crossmatchArcsec}″${h.source_id && h.source_id === c.sourceId[i] ? ' and has the same source_id' : ''}`);
          }
        }
        if (m.kind === 'source_id' || m.kind === 'position') {
          star = m.star;
          starMatch = m.kind;
          if (star.batch_id !== batchId) matched.add(star.id);
        } else if (m.kind === 'none') {
          const plx = num[o + NUM.star_plx];
          const plxErr = num[o + NUM.star_plx_err];
          star = {
            id: starIds.take(), name: c.starName[i], source_id: c.sourceId[i],
            ra_deg: num[o + NUM.pos_ra], dec_deg: num[o + NUM.pos_dec], parallax_mas: Number.isNaN(plx) ? null : plx, parallax_err_mas: Number.isNaN(plxErr) ? null : plxErr,
            hpx15: num[o + NUM.star_hpx15], batch_id: batchId,
          };
          starMatch = 'new';
          const slot = matcher.remember(star);
          if (deferStars) deferred.push(slot);
          else newStars.push(starRow(star, num[o + NUM.star_glon], num[o + NUM.star_glat]));
          newInChunk = true;
          counts.newStars++;
        }
        let warningsJson = c.warningsJson[i];
        const redo = c.redo[i];
        if (redo && star && star.parallax_mas !== null && star.parallax_err_mas !== null) {
          // no parallax or distance in the row: derive again with the star's catalog parallax
          const { derived, warnings } = deriveMeasurement(redo.row, { parallaxMas: star.parallax_mas, parallaxErrMas: star.parallax_err_mas });
          writeDerived(c, i, derived);
          warningsJson = warningsJsonOf(redo.warnings, warnings, headerOf);
        }
        const measId = measIds.take();
        const starId = star ? star.id : null;
        let state: RowState = 'accepted';
        let measState = 'pending';
        let candidatesJson: string | null = null;
        let duplicateOf: number | null = null;
        const band = c.band[i]!;
        const instrument = c.instrument[i]!;
        const mjdRaw = num[o + NUM.mjd];
        const mjd = Number.isNaN(mjdRaw) ? null : mjdRaw;
        const q = num[o + NUM.q], u = num[o + NUM.u], qErr = num[o + NUM.q_err], uErr = num[o + NUM.u_err];
        if (m.kind === 'ambiguous' || m.kind === 'held') {
          state = 'ambiguous';
          measState = 'ambiguous';
          candidatesJson = JSON.stringify(m.kind === 'held' ? [] : m.candidates.map((x) => ({ id: x.star.id, name: nameOf(x.star), sourceId: x.star.source_id, separationArcsec: Number(x.separationArcsec.toFixed(3)) })));
          counts.ambiguous++;
        } else {
          const key = `${starId}|${band}|${instrument}`;
          let list = known.get(key);
          const sameEpoch = list?.find((k) => (k.mjd === null && mjd === null) || (k.mjd !== null && mjd !== null && Math.abs(k.mjd - mjd) <= opts.mjdToleranceDays));
          if (sameEpoch) {
            const identical = same(sameEpoch.q, q) && same(sameEpoch.u, u) && same(sameEpoch.q_err, qErr) && same(sameEpoch.u_err, uErr);
            duplicateOf = sameEpoch.id;
            if (identical) {
              counts.duplicates++;
              if (warningsJson !== null) counts.warnings++;
              rowsOut.push([rowId, batchId, line, c.valuesJson[i], 'duplicate', null, warningsJson, null, starMatch, starId, null, duplicateOf, notes.length ? notes.join('; ') : null]);
              continue;
            }
            state = 'conflict';
            measState = 'conflict';
            counts.conflicts++;
          } else counts.accepted++;
          const entry = { id: measId, mjd, q, u, q_err: qErr, u_err: uErr, line };
          if (list) list.push(entry);
          else known.set(key, (list = [entry]));
        }
        if (warningsJson !== null) counts.warnings++;
        rowsOut.push([rowId, batchId, line, c.valuesJson[i], state, null, warningsJson, candidatesJson, starMatch, starId, measId, duplicateOf, notes.length ? notes.join('; ') : null]);
        measOut.push(measurementValues(c, i, measId, starId, batchId, rowId, measState, now, state === 'conflict' ? duplicateOf : null));
      }
      lap('rows');
      await writeInShortTransactions(
        db,
        [
          { table: 'stars', cols: STAR_COLS, rows: deferStars ? [] : newStars },
          { table: 'batch_rows', cols: ROW_COLS, rows: rowsOut },
          { table: 'measurements', cols: MEAS_COLS, rows: measOut },
        ],
        WRITE_BUDGET_MS,
        [{ sql: 'UPDATE batches SET rows_done = ?, bytes_done = ? WHERE id = ?', params: [counts.rows, bytesDone, batchId] }],
      );
      lap('write');
      if (opts.timingFile) sampleMemory();
      if (Date.now() - lastReport > 250) {
        lastReport = Date.now();
        report({ batchId, rowsDone: counts.rows, bytesDone, rowsTotal: Math.max(rowsTotal, counts.rows) });
      }
    }
    if (deferred.length) {
      // in id order: the table (clustered on id) and its batch_id index grow at their end
      for (let i = 0; i < deferred.length; i += 20_000) {
        const rows = deferred.slice(i, i + 20_000).map((slot) => {
          const s = matcher.starAt(slot);
          const g = icrsToGalactic(s.ra_deg, s.dec_deg);
          return starRow(s, g.lDeg, g.bDeg);
        });
        await writeInShortTransactions(db, [{ table: 'stars', cols: STAR_COLS, rows }], WRITE_BUDGET_MS);
      }
      deferred.length = 0;
    }
    lap('stars');
  } finally {
    if (deferStars) await setForeignKeyChecks(db, true);
  }
  if (opts.timingFile) fs.appendFileSync(opts.timingFile, `batch ${batchId} ${counts.rows} rows: ${Object.entries(T).map(([k, v]) => `${k} ${(v / 1000).toFixed(1)}s`).join(', ')}; ${JSON.stringify(writeStats)}; peak MB: ${Object.entries(mem).map(([k, v]) => `${k} ${(v / 2 ** 20).toFixed(0)}`).join(', ')}\n`);
  counts.matchedStars = matched.size;
  await syncIdSequences(db, ['stars', 'batch_rows', 'measurements']);
  return counts;
}
