import type { Knex } from 'knex';
import { recordAudit, type AuditEntry } from '../audit/service.js';
import { bulkInsertRows, isSqlite } from '../dialect.js';
import { AppError, badRequest, notFound } from '../errors.js';
import { deriveMeasurement, type CanonicalRow, type Derived } from '../measurements/service.js';
import { angleZeroPoint, applyCalibration, instrumentalPolarization, nightOfMjd, standardNameKey, type CalibrationTerms } from '../science/calibration.js';
import { propagateStokesErrors } from '../science/polarization.js';
import { angularSeparationDeg } from '../science/separation.js';

// Read-time plausibility flags: catalog and review filter and show them.
export { FLAG_NAMES, plausibilityService, type PlausibilityService } from './plausibility.js';

/** A row within this distance of a standard's recorded position is that standard (arcsec). */
export const STANDARD_MATCH_RADIUS_ARCSEC = 5;

export interface StandardStar {
  id: number;
  name: string;
  band: string;
  kind: 'polarized' | 'unpolarized';
  p: number;
  pErr: number | null;
  thetaDeg: number | null;
  thetaErrDeg: number | null;
  raDeg: number | null;
  decDeg: number | null;
  source: string;
  fromMemory: boolean;
  note: string | null;
  createdAt: string;
}

const toStandard = (r: any): StandardStar => ({
  id: r.id, name: r.name, band: r.band, kind: r.kind, p: r.p, pErr: r.p_err, thetaDeg: r.theta_deg, thetaErrDeg: r.theta_err_deg,
  raDeg: r.ra_deg, decDeg: r.dec_deg, source: r.source, fromMemory: Boolean(r.from_memory), note: r.note, createdAt: r.created_at,
});

/** One standard-star row of a batch and how it entered (or did not enter) the calibration. */
export interface StandardResidual {
  measurementId: number;
  line: number;
  name: string;
  standardId: number;
  standardName: string;
  kind: 'polarized' | 'unpolarized';
  matchedBy: 'name' | 'position';
  used: boolean;
  note: string | null;
  mjd: number | null;
  q: number;
  u: number;
  qErr: number;
  uErr: number;
  pRef: number;
  thetaRefDeg: number | null;
  /** after the instrumental (q, u) is subtracted */
  pObs: number;
  thetaObsDeg: number;
  thetaObsErrDeg: number;
  /** θ_obs − θ_ref (polarized standards), wrapped to (−90°, 90°] */
  offsetDeg: number | null;
  /** offset − zero-point (polarized) */
  residualDeg: number | null;
  /** p_obs − p_ref (polarized) */
  pResidual: number | null;
  /** q − q̄_inst, u − ū_inst (unpolarized) */
  qResidual: number | null;
  uResidual: number | null;
  source: string;
}

export interface CalibrationGroup {
  id: number | null;
  state: 'derived' | 'applied' | 'reverted' | 'applying' | 'reverting' | 'failed';
  instrument: string;
  band: string;
  night: string | null;
  zeroPointDeg: number | null;
  zeroPointErrDeg: number | null;
  instrumentalQ: number | null;
  instrumentalU: number | null;
  instrumentalQErr: number | null;
  instrumentalUErr: number | null;
  nPolarized: number;
  nUnpolarized: number;
  /** rows of the batch in this instrument, band and night (the rows an apply changes) */
  rows: number;
  instrumentalChi2: number | null;
  instrumentalDof: number | null;
  zeroPointScatterDeg: number | null;
  appliedAt: string | null;
  appliedBy: { id: number; name: string } | null;
  revertedAt: string | null;
  standards: StandardResidual[];
}

/** Persisted columns of a derived measurement (as the measurement service stores them). */
function derivedColumns(d: Derived) {
  const { flags, ...values } = d;
  return { ...values, flags_json: flags.length ? JSON.stringify(flags) : null };
}

type Meas = Record<string, any> & { id: number; version: number };

const groupKey = (instrument: string, band: string, night: string | null) => `${instrument}\u0000${band}\u0000${night ?? ''}`;

/** The stored measurement as the canonical row deriveMeasurement takes, with (q, u) replaced. */
function canonicalWithStokes(m: Meas, s: { q: number; u: number; qErr: number; uErr: number }): CanonicalRow {
  const row: CanonicalRow = { ra_deg: m.ra_deg, dec_deg: m.dec_deg, band: m.band, instrument: m.instrument, q: s.q, u: s.u, q_err: s.qErr, u_err: s.uErr, angle_frame: 'equatorial' };
  if (m.mjd !== null) row.mjd = m.mjd;
  if (m.ebv !== null) row.ebv = m.ebv;
  if (m.distance_method === 'given') {
    row.distance_pc = m.distance_pc;
    row.distance_err_pc = (m.distance_hi_pc - m.distance_lo_pc) / 2;
  } else if (m.parallax_mas !== null && m.parallax_err_mas !== null) {
    row.parallax_mas = m.parallax_mas;
    row.parallax_err_mas = m.parallax_err_mas;
  }
  return row;
}

/** The columns deriveMeasurement writes, plus what identifies the version: kept to restore on revert. */
const SNAPSHOT = ['q', 'u', 'q_err', 'u_err', 'p', 'p_err', 'p_debiased', 'theta_deg', 'theta_err_deg', 'q_gal', 'u_gal', 'q_gal_err', 'u_gal_err', 'theta_gal_deg', 'flags_json', 'distance_pc', 'distance_lo_pc', 'distance_hi_pc', 'distance_method', 'parallax_mas', 'parallax_err_mas', 'version'];
const snapshot = (m: Meas) => Object.fromEntries(SNAPSHOT.map((k) => [k, m[k] ?? null]));

/** Rows per write transaction to start with; then sized to about CHUNK_BUDGET_MS each. */
const FIRST_CHUNK_ROWS = 100;
const MAX_CHUNK_ROWS = 2000;
const CHUNK_BUDGET_MS = 25;

/** Write transactions of apply, revert and recovery: how many and the longest (ms), for benches. */
export const calibrationWriteStats = { transactions: 0, longestMs: 0, totalMs: 0 };

/** Calibrations this process is applying or reverting now (per database), so recovery leaves them alone. */
const activeByDb = new WeakMap<object, Set<number>>();
const active = (db: Knex) => {
  let s = activeByDb.get(db);
  if (!s) activeByDb.set(db, (s = new Set()));
  return s;
};
const recoveries = new WeakMap<object, Promise<void>>();
const updateStatements = new WeakMap<object, Map<string, import('better-sqlite3').Statement>>();
const sqliteValue = (v: unknown) => (v === undefined ? null : typeof v === 'boolean' ? (v ? 1 : 0) : v);

/**
 * Calibration from standard stars: recognise a batch's standard rows, derive per instrument, band and
 * night the instrumental (q, u) and the angle zero-point, apply them to every row of that group as one
 * audited transformation (values before and after kept per row), and revert. Rows are written in
 * short transactions (see apply). `opts` (tests): the first chunk's row count, and a step awaited
 * after each committed chunk.
 */
export function calibrationService(db: Knex, readDb: Knex = db, opts: { firstChunkRows?: number; afterChunk?: (rowsDone: number) => Promise<void> } = {}) {
  async function standards(k: Knex | Knex.Transaction = readDb): Promise<StandardStar[]> {
    return (await k('standard_stars').orderBy(['name_key', 'band'])).map(toStandard);
  }

  /** Measurements of a batch with the name given in the upload and the tied star's name. */
  async function batchRows(k: Knex | Knex.Transaction, batchId: number) {
    const batch = await k('batches').where({ id: batchId }).first();
    if (!batch) throw notFound(`Batch ${batchId}`);
    const mapping = batch.mapping_json ? (JSON.parse(batch.mapping_json) as Record<string, string>) : {};
    // the raw row is kept as received: an array in header order (or, in older batches, header → text)
    const headers: string[] = batch.proposal_json ? (JSON.parse(batch.proposal_json).headers ?? []) : [];
    const nameIndex = mapping.name ? headers.indexOf(mapping.name) : -1;
    const rows = await k('measurements as m')
      .join('batch_rows as r', 'r.id', 'm.batch_row_id')
      .leftJoin('stars as s', 's.id', 'm.star_id')
      .where('m.batch_id', batchId)
      .orderBy('r.line')
      .select('m.*', 'r.line', 'r.values_json', 's.name as star_name');
    return {
      batch,
      rows: rows.map((r: any) => {
        const values = JSON.parse(r.values_json) as string[] | Record<string, string>;
        const given = Array.isArray(values) ? (nameIndex >= 0 ? values[nameIndex] : undefined) : mapping.name ? values[mapping.name] : undefined;
        const { values_json: _v, ...rest } = r;
        return { ...rest, given_name: given && given.trim() ? given.trim() : null } as Meas & { line: number; given_name: string | null; star_name: string | null };
      }),
    };
  }

  /** Which rows are standards: by name (case and spacing ignored) or within 5″ of a recorded position. */
  function recognise(rows: Awaited<ReturnType<typeof batchRows>>['rows'], stds: StandardStar[]) {
    const byKey = new Map<string, StandardStar[]>();
    for (const s of stds) {
      const key = standardNameKey(s.name);
      byKey.set(key, [...(byKey.get(key) ?? []), s]);
    }
    const positioned = stds.filter((s) => s.raDeg !== null && s.decDeg !== null);
    const out = new Map<number, { entries: StandardStar[]; matchedBy: 'name' | 'position'; name: string }>();
    for (const r of rows) {
      for (const n of [r.given_name, r.star_name]) {
        if (!n) continue;
        const hit = byKey.get(standardNameKey(n));
        if (hit) {
          out.set(r.id, { entries: hit, matchedBy: 'name', name: n });
          break;
        }
      }
      if (out.has(r.id)) continue;
      const near = positioned.filter((s) => angularSeparationDeg(r.ra_deg, r.dec_deg, s.raDeg!, s.decDeg!) * 3600 <= STANDARD_MATCH_RADIUS_ARCSEC);
      if (near.length) {
        const key = standardNameKey(near[0].name);
        out.set(r.id, { entries: byKey.get(key) ?? near, matchedBy: 'position', name: r.given_name ?? r.star_name ?? near[0].name });
      }
    }
    return out;
  }

  /** Derive the calibrations of a batch from its current (uncalibrated) values. */
  async function derive(k: Knex | Knex.Transaction, batchId: number) {
    const { batch, rows } = await batchRows(k, batchId);
    const stds = await standards(k);
    const recognised = recognise(rows, stds);
    type Row = (typeof rows)[number];
    const groups = new Map<string, { instrument: string; band: string; night: string | null; rows: Row[]; std: Row[] }>();
    for (const r of rows) {
      const night = nightOfMjd(r.mjd);
      const key = groupKey(r.instrument, r.band, night);
      const g = groups.get(key) ?? { instrument: r.instrument, band: r.band, night, rows: [] as Row[], std: [] as Row[] };
      g.rows.push(r);
      if (recognised.has(r.id) && r.state !== 'rejected') g.std.push(r);
      groups.set(key, g);
    }
    const calibrations: CalibrationGroup[] = [];
    const uncalibrated: { instrument: string; band: string; night: string | null; rows: number }[] = [];
    for (const g of groups.values()) {
      if (!g.std.length) {
        uncalibrated.push({ instrument: g.instrument, band: g.band, night: g.night, rows: g.rows.length });
        continue;
      }
      // the reference for this band; an unpolarized standard is unpolarized in every band (its listed p is an upper value)
      const pick = (r: (typeof rows)[0]) => {
        const entries = recognised.get(r.id)!.entries;
        const same = entries.find((e) => e.band === r.band);
        if (same) return { ref: same, note: null as string | null };
        const unpol = entries.find((e) => e.kind === 'unpolarized');
        if (unpol) return { ref: unpol, note: `reference from band ${unpol.band}: unpolarized standard` };
        return { ref: entries[0], note: `no reference value in band ${r.band} (only ${entries.map((e) => e.band).join(', ')}): not used` };
      };
      const picked = g.std.map((r) => ({ r, ...pick(r) }));
      const unpol = picked.filter((x) => x.ref.kind === 'unpolarized' && (x.ref.band === x.r.band || x.note?.startsWith('reference from')));
      const pol = picked.filter((x) => x.ref.kind === 'polarized' && x.ref.band === x.r.band);
      const inst = unpol.length ? instrumentalPolarization(unpol.map((x) => ({ q: x.r.q, u: x.r.u, qErr: x.r.q_err, uErr: x.r.u_err, refPFraction: x.ref.p }))) : null;
      const instTerms = inst ? { q: inst.q, u: inst.u, qErr: inst.qErr, uErr: inst.uErr } : { q: 0, u: 0, qErr: 0, uErr: 0 };
      const zp = pol.length ? angleZeroPoint(pol.map((x) => ({ q: x.r.q, u: x.r.u, qErr: x.r.q_err, uErr: x.r.u_err, thetaRefDeg: x.ref.thetaDeg!, thetaRefErrDeg: x.ref.thetaErrDeg ?? 0 })), instTerms) : null;
      const standardsOut: StandardResidual[] = picked.map((x) => {
        const fa = propagateStokesErrors(x.r.q - instTerms.q, x.r.u - instTerms.u, Math.hypot(x.r.q_err, instTerms.qErr), Math.hypot(x.r.u_err, instTerms.uErr));
        const polIdx = pol.indexOf(x);
        const used = polIdx >= 0 || unpol.includes(x);
        const z = polIdx >= 0 && zp ? zp.standards[polIdx] : null;
        return {
          measurementId: x.r.id, line: x.r.line, name: recognised.get(x.r.id)!.name, standardId: x.ref.id, standardName: x.ref.name, kind: x.ref.kind,
          matchedBy: recognised.get(x.r.id)!.matchedBy, used, note: x.note, mjd: x.r.mjd, q: x.r.q, u: x.r.u, qErr: x.r.q_err, uErr: x.r.u_err,
          pRef: x.ref.p, thetaRefDeg: x.ref.thetaDeg, pObs: fa.p, thetaObsDeg: fa.thetaDeg, thetaObsErrDeg: fa.thetaErrDeg,
          offsetDeg: z ? z.offsetDeg : null, residualDeg: z ? z.residualDeg : null, pResidual: z ? fa.p - x.ref.p : null,
          qResidual: x.ref.kind === 'unpolarized' && inst ? x.r.q - inst.q : null, uResidual: x.ref.kind === 'unpolarized' && inst ? x.r.u - inst.u : null,
          source: x.ref.source + (x.ref.fromMemory ? ' (from memory)' : ''),
        };
      });
      calibrations.push({
        id: null, state: 'derived', instrument: g.instrument, band: g.band, night: g.night,
        zeroPointDeg: zp ? zp.zeroPointDeg : null, zeroPointErrDeg: zp ? zp.zeroPointErrDeg : null,
        instrumentalQ: inst ? inst.q : null, instrumentalU: inst ? inst.u : null, instrumentalQErr: inst ? inst.qErr : null, instrumentalUErr: inst ? inst.uErr : null,
        nPolarized: pol.length, nUnpolarized: unpol.length, rows: g.rows.length,
        instrumentalChi2: inst ? inst.chi2 : null, instrumentalDof: inst ? inst.dof : null, zeroPointScatterDeg: zp?.externalErrDeg != null ? zp.externalErrDeg * Math.sqrt(pol.length) : null,
        appliedAt: null, appliedBy: null, revertedAt: null, standards: standardsOut,
      });
    }
    calibrations.sort((a, b) => groupKey(a.instrument, a.band, a.night).localeCompare(groupKey(b.instrument, b.band, b.night)));
    return { batch, rows, groups, calibrations, uncalibrated };
  }

  const fromStored = (c: any, users: Map<number, string>): CalibrationGroup => {
    const extra = JSON.parse(c.standards_json) as { standards: StandardResidual[]; nPolarized: number; nUnpolarized: number; rows: number; instrumentalChi2: number | null; instrumentalDof: number | null; zeroPointScatterDeg: number | null };
    return {
      id: c.id, state: c.state, instrument: c.instrument, band: c.band, night: c.night,
      zeroPointDeg: c.zero_point_deg, zeroPointErrDeg: c.zero_point_err_deg, instrumentalQ: c.instrumental_q, instrumentalU: c.instrumental_u, instrumentalQErr: c.instrumental_q_err, instrumentalUErr: c.instrumental_u_err,
      nPolarized: extra.nPolarized, nUnpolarized: extra.nUnpolarized, rows: c.rows_calibrated, instrumentalChi2: extra.instrumentalChi2, instrumentalDof: extra.instrumentalDof, zeroPointScatterDeg: extra.zeroPointScatterDeg,
      appliedAt: c.applied_at, appliedBy: { id: c.applied_by, name: users.get(c.applied_by) ?? '' }, revertedAt: c.reverted_at, standards: extra.standards,
    };
  };

  async function userNames(k: Knex | Knex.Transaction, ids: number[]) {
    const rows = ids.length ? await k('users').whereIn('id', [...new Set(ids)]).select('id', 'name') : [];
    return new Map<number, string>(rows.map((u: any) => [u.id, u.name]));
  }

  /** One short write transaction, timed (calibrationWriteStats). */
  async function writeTx<T>(work: (trx: Knex.Transaction) => Promise<T>): Promise<T> {
    const t0 = performance.now();
    try {
      return await db.transaction(work);
    } finally {
      const ms = performance.now() - t0;
      calibrationWriteStats.transactions++;
      calibrationWriteStats.totalMs += ms;
      calibrationWriteStats.longestMs = Math.max(calibrationWriteStats.longestMs, ms);
    }
  }

  /**
   * Work through items in short write transactions of about CHUNK_BUDGET_MS each (the chunk size
   * follows the time the last one took), giving the event loop back between them.
   */
  async function inChunks<T>(items: T[], work: (trx: Knex.Transaction, chunk: T[]) => Promise<void>): Promise<void> {
    let size = opts.firstChunkRows ?? FIRST_CHUNK_ROWS;
    let pause = 0;
    for (let i = 0; i < items.length; ) {
      // a writer on another thread or process waits in SQLite's busy handler, which retries after
      // growing sleeps (up to 100 ms): a gap as long as the last transaction lets it in
      await new Promise((r) => (pause ? setTimeout(r, pause) : setImmediate(r)));
      const chunk = items.slice(i, i + size);
      const t0 = performance.now();
      await writeTx((trx) => work(trx, chunk));
      const ms = performance.now() - t0;
      i += chunk.length;
      size = Math.max(opts.firstChunkRows ?? 50, Math.min(MAX_CHUNK_ROWS, Math.round(chunk.length * Math.min(2, CHUNK_BUDGET_MS / Math.max(ms, 1)))));
      pause = Math.min(100, Math.max(2, Math.round(ms)));
      if (opts.afterChunk) await opts.afterChunk(i);
    }
  }

  /** The approved catalog changes only all at once: an approved batch is returned (withdrawn) before it is calibrated. */
  async function refuseApproved(batchId: number, what: string) {
    const b = await db('batches').where({ id: batchId }).first('id', 'state', 'settling');
    if (!b) throw notFound(`Batch ${batchId}`);
    if (b.settling) throw new AppError(409, 'decision_in_progress', `Batch ${batchId} is being ${b.settling === 'approved' ? 'approved' : 'returned'} right now; ${what} once that has finished.`);
    if (b.state === 'approved') throw new AppError(409, 'batch_approved', `Batch ${batchId} is approved; return it first (its rows leave the approved catalog), ${what}, then approve it again, so that modelers and runs never read a night half-calibrated.`);
  }

  function refuseBusy(batchId: number, c: any): never {
    if (c.state === 'applied') throw new AppError(409, 'already_calibrated', `Batch ${batchId} is already calibrated (calibration ${c.id}, applied ${c.applied_at}); revert it first to apply again.`, { calibrationId: c.id });
    throw new AppError(409, 'calibration_in_progress', `Batch ${batchId}'s calibration ${c.id} is being ${c.state === 'applying' ? 'applied' : 'reverted'} right now; try again when that has finished.`, { calibrationId: c.id, state: c.state });
  }

  const editedSince = (ids: number[]) =>
    new AppError(409, 'edited_since', `${ids.length} calibrated measurement(s) were changed after the calibration (e.g. ${ids.slice(0, 5).join(', ')}); revert those edits first.`, { ids });

  type Link = { id: number; calibration_id: number; measurement_id: number; before: Record<string, unknown> & { version: number }; after: Record<string, unknown> & { version: number } };

  /** The rows a calibration changed, with their values before and after, read in pages (the event loop breathes between them). */
  async function loadLinks(calIds: number[]): Promise<Link[]> {
    const out: Link[] = [];
    for (let last = 0; ; ) {
      const page = await readDb('calibration_rows').whereIn('calibration_id', calIds).where('id', '>', last).orderBy('id').limit(2000);
      for (const l of page) out.push({ id: l.id, calibration_id: l.calibration_id, measurement_id: l.measurement_id, before: JSON.parse(l.before_json), after: JSON.parse(l.after_json) });
      if (page.length < 2000) return out;
      last = page[page.length - 1].id;
      await new Promise((r) => setImmediate(r));
    }
  }

  /** UPDATE measurements by id, one prepared statement per column set (SQLite), else one query per row. */
  async function updateMeasurements(trx: Knex.Transaction, rows: Record<string, unknown>[]) {
    if (!rows.length) return;
    if (!isSqlite(db)) {
      for (const { id, ...values } of rows) await trx('measurements').where({ id }).update(values);
      return;
    }
    const conn = (await (trx as any).client.acquireConnection()) as import('better-sqlite3').Database;
    let cache = updateStatements.get(conn);
    if (!cache) updateStatements.set(conn, (cache = new Map()));
    for (const r of rows) {
      const cols = Object.keys(r).filter((k) => k !== 'id');
      const sql = `UPDATE "measurements" SET ${cols.map((c) => `"${c}" = ?`).join(', ')} WHERE "id" = ?`;
      let stmt = cache.get(sql);
      if (!stmt) cache.set(sql, (stmt = conn.prepare(sql)));
      stmt.run([...cols.map((c) => sqliteValue(r[c])), r.id]);
    }
  }

  type Rewrite = { update: Record<string, unknown>; audit: AuditEntry };

  /**
   * Rewrites the measurements of these links in short transactions (inChunks): `step` gets each
   * link with its row as it is now and returns the row's update and audit entry, or null to leave
   * it; `check` may refuse a whole chunk first (by throwing).
   */
  async function rewriteLinked(links: Link[], step: (l: Link, m: Meas | undefined, trx: Knex.Transaction) => Promise<Rewrite | null> | Rewrite | null, check?: (chunk: Link[], cur: Map<number, Meas>) => void) {
    await inChunks(links, async (trx, chunk) => {
      const cur = new Map<number, Meas>(((await trx('measurements').whereIn('id', chunk.map((l) => l.measurement_id))) as Meas[]).map((m) => [m.id, m]));
      check?.(chunk, cur);
      const updates: Record<string, unknown>[] = [];
      const audits: AuditEntry[] = [];
      for (const l of chunk) {
        const r = await step(l, cur.get(l.measurement_id), trx);
        if (!r) continue;
        updates.push(r.update);
        audits.push(r.audit);
      }
      await updateMeasurements(trx, updates);
      await recordAudit(trx, audits);
    });
  }

  /**
   * Undo an apply that did not finish: rows still as the apply left them get their values before
   * back; a row edited since is left as edited and named. The calibrations become `failed`.
   */
  async function rollBackApply(calIds: number[], why: string, actorId: number | null) {
    const links = await loadLinks(calIds);
    const left: number[] = [];
    const now = new Date().toISOString();
    await rewriteLinked(links, (l, m) => {
      if (!m) return null;
      if (m.calibration_id !== l.calibration_id || m.version !== l.after.version) {
        left.push(l.measurement_id);
        return null;
      }
      const { version: _v, ...values } = l.before;
      return {
        update: { ...values, calibration_id: null, version: m.version + 1, updated_at: now, updated_by: actorId, id: m.id },
        audit: { actorId, action: 'measurement.calibration_rollback', entityType: 'measurement', entityId: m.id, before: { ...snapshot(m), calibrationId: l.calibration_id }, after: { ...values, version: m.version + 1 }, reason: `calibration ${l.calibration_id} did not finish: ${why}` },
      };
    });
    const reason = why + (left.length ? `; ${left.length} row(s) edited after being calibrated were left as edited (e.g. ${left.slice(0, 5).join(', ')})` : '');
    await writeTx(async (trx) => {
      await trx('calibrations').whereIn('id', calIds).where({ state: 'applying' }).update({ state: 'failed', failure_reason: reason });
      await recordAudit(trx, calIds.map((id) => ({ actorId, action: 'calibration.fail', entityType: 'calibration', entityId: id, before: { state: 'applying' }, after: { state: 'failed', rowsRestored: links.length - left.length, rowsLeft: left }, reason })));
    });
  }

  /**
   * Undo a revert that did not finish: rows it restored get their calibrated values back (a
   * version bump; the stored "after" follows, so a later revert checks against it); the calibrations are `applied` again.
   */
  async function rollBackRevert(calIds: number[], actorId: number | null, why: string) {
    const links = await loadLinks(calIds);
    const left: number[] = [];
    const now = new Date().toISOString();
    await rewriteLinked(links, async (l, m, trx) => {
      if (!m || (m.calibration_id === l.calibration_id && m.version === l.after.version)) return null; // not reached by the revert
      if (m.calibration_id !== null || m.version !== l.after.version + 1) {
        left.push(l.measurement_id);
        return null;
      }
      const { version: _v, ...values } = l.after;
      const after = { ...l.after, version: m.version + 1 };
      await trx('calibration_rows').where({ id: l.id }).update({ after_json: JSON.stringify(after) });
      return {
        update: { ...values, calibration_id: l.calibration_id, version: m.version + 1, updated_at: now, updated_by: actorId, id: m.id },
        audit: { actorId, action: 'measurement.calibration_revert_undone', entityType: 'measurement', entityId: m.id, before: snapshot(m), after: { ...after, calibrationId: l.calibration_id }, reason: `revert of calibration ${l.calibration_id} did not finish: ${why}` },
      };
    });
    const reason = why + (left.length ? `; ${left.length} row(s) edited after being restored were left as edited (e.g. ${left.slice(0, 5).join(', ')})` : '');
    await writeTx(async (trx) => {
      await trx('calibrations').whereIn('id', calIds).where({ state: 'reverting' }).update({ state: 'applied' });
      await recordAudit(trx, calIds.map((id) => ({ actorId, action: 'calibration.revert_abandoned', entityType: 'calibration', entityId: id, before: { state: 'reverting' }, after: { state: 'applied', rowsLeft: left }, reason })));
    });
  }

  /** Calibrations left `applying` or `reverting` by a process that is gone (not this one's own work) are put right, one recovery at a time. */
  async function recoverStuck(batchId: number | null): Promise<void> {
    const prev = recoveries.get(db) ?? Promise.resolve();
    const run = prev.catch(() => undefined).then(async () => {
      const q = db('calibrations').whereIn('state', ['applying', 'reverting']).orderBy('id');
      if (batchId !== null) q.where({ batch_id: batchId });
      const stuck = ((await q) as any[]).filter((c) => !active(db).has(c.id));
      const applying = stuck.filter((c) => c.state === 'applying').map((c) => c.id as number);
      const reverting = stuck.filter((c) => c.state === 'reverting').map((c) => c.id as number);
      if (applying.length) await rollBackApply(applying, 'interrupted while applying (the server stopped part-way); the rows written were restored', null);
      if (reverting.length) await rollBackRevert(reverting, null, 'interrupted while reverting (the server stopped part-way); the calibration stays applied');
    });
    recoveries.set(db, run);
    return run;
  }

  return {
    standards: () => standards(),

    async addStandard(actorId: number, body: { name: string; band: string; p?: number; pPct?: number; pErr?: number; thetaDeg?: number | null; thetaErrDeg?: number; raDeg?: number; decDeg?: number; source: string; fromMemory?: boolean; note?: string }) {
      const p = body.p ?? (body.pPct !== undefined ? body.pPct / 100 : undefined);
      if (p === undefined) throw badRequest('p (fraction) or pPct (percent) is required', { fields: [{ field: 'p', message: 'expected p or pPct' }] });
      if ((body.raDeg === undefined) !== (body.decDeg === undefined)) throw badRequest('raDeg and decDeg go together', { fields: [{ field: body.raDeg === undefined ? 'raDeg' : 'decDeg', message: 'expected both or neither' }] });
      const kind = body.thetaDeg === undefined || body.thetaDeg === null ? 'unpolarized' : 'polarized';
      const name_key = standardNameKey(body.name);
      if (!name_key) throw badRequest('name must contain more than spaces', { fields: [{ field: 'name', message: 'expected a star name' }] });
      return db.transaction(async (trx) => {
        const dupe = await trx('standard_stars').where({ name_key, band: body.band }).first();
        if (dupe) throw new AppError(409, 'duplicate_standard', `${dupe.name} already has a ${body.band}-band reference (entry ${dupe.id}).`, { id: dupe.id });
        const row = {
          name: body.name.trim(), name_key, band: body.band, kind, p, p_err: body.pErr ?? null, theta_deg: kind === 'polarized' ? body.thetaDeg : null, theta_err_deg: body.thetaErrDeg ?? null,
          ra_deg: body.raDeg ?? null, dec_deg: body.decDeg ?? null, source: body.source.trim(), from_memory: body.fromMemory ?? false, note: body.note ?? null, created_by: actorId, created_at: new Date().toISOString(),
        };
        const [id] = await trx('standard_stars').insert(row);
        const saved = await trx('standard_stars').where({ id: typeof id === 'object' ? (id as any).id : id }).first();
        await recordAudit(trx, { actorId, action: 'standard.create', entityType: 'standard_star', entityId: saved.id, after: toStandard(saved) });
        return toStandard(saved);
      });
    },

    /** GET …/calibration: the applied calibration if there is one, else what the standards give now. */
    async forBatch(batchId: number) {
      let moving = await readDb('calibrations').where({ batch_id: batchId }).whereIn('state', ['applying', 'reverting']).orderBy('id');
      if (moving.some((c: any) => !active(db).has(c.id))) {
        await recoverStuck(batchId);
        moving = await readDb('calibrations').where({ batch_id: batchId }).whereIn('state', ['applying', 'reverting']).orderBy('id');
      }
      // being applied or reverted now: the stored calibrations with that state, never "applied"
      // (the rows are part-way) and never derived afresh from part-calibrated values
      const applied = moving.length ? moving : await readDb('calibrations').where({ batch_id: batchId, state: 'applied' }).orderBy('id');
      if (applied.length) {
        const users = await userNames(readDb, applied.map((c: any) => c.applied_by));
        const b = await readDb('batches').where({ id: batchId }).first('id');
        if (!b) throw notFound(`Batch ${batchId}`);
        const total = await readDb('measurements').where({ batch_id: batchId }).count({ n: '*' }).first();
        const calibrated = applied.reduce((s: number, c: any) => s + c.rows_calibrated, 0);
        return { batchId, applied: !moving.length, calibrations: applied.map((c: any) => fromStored(c, users)), uncalibratedRows: Number(total?.n ?? 0) - calibrated };
      }
      const { calibrations, uncalibrated } = await derive(readDb, batchId);
      return { batchId, applied: false, calibrations, uncalibratedRows: uncalibrated.reduce((s, u) => s + u.rows, 0) };
    },

    /**
     * Apply every derived calibration of the batch once. The rows are written in short
     * transactions (a calibration is `applying` meanwhile; a second apply is a 409), then the
     * calibrations become `applied` in a last short one. A failure part-way rolls the written
     * rows back from their stored values before and marks the calibration `failed`.
     */
    async apply(actorId: number, batchId: number, reason: string | null) {
      await recoverStuck(batchId);
      const busy = await db('calibrations').where({ batch_id: batchId }).whereIn('state', ['applied', 'applying', 'reverting']).orderBy('id').first();
      if (busy) refuseBusy(batchId, busy);
      // derived outside any write transaction; the claim below checks nothing it used has moved
      const { groups, calibrations } = await derive(readDb, batchId);
      const usable = calibrations.filter((c) => c.zeroPointDeg !== null || c.instrumentalQ !== null);
      if (!usable.length) throw new AppError(409, 'no_standards', `Batch ${batchId} has no usable standard-star rows: nothing to calibrate with (recognised standards: ${calibrations.reduce((s, c) => s + c.standards.length, 0)}).`);
      await refuseApproved(batchId, 'calibrate it');
      const stdVersions = new Map<number, number>();
      for (const c of usable) for (const s of c.standards) stdVersions.set(s.measurementId, groups.get(groupKey(c.instrument, c.band, c.night))!.rows.find((r) => r.id === s.measurementId)!.version);
      const now = new Date().toISOString();
      const mine = active(db);
      const claimed = await writeTx(async (trx) => {
        const again = await trx('calibrations').where({ batch_id: batchId }).whereIn('state', ['applied', 'applying', 'reverting']).orderBy('id').first();
        if (again) refuseBusy(batchId, again);
        const ids = [...stdVersions.keys()];
        const current = ids.length ? await trx('measurements').whereIn('id', ids).select('id', 'version') : [];
        if (current.some((m: any) => stdVersions.get(m.id) !== m.version)) throw new AppError(409, 'standards_changed', `A standard-star row of batch ${batchId} was edited while the calibration was being derived; apply again.`);
        const out: { id: number; c: CalibrationGroup; rowIds: number[] }[] = [];
        for (const c of usable) {
          const g = groups.get(groupKey(c.instrument, c.band, c.night))!;
          const [insId] = await trx('calibrations').insert({
            batch_id: batchId, instrument: c.instrument, band: c.band, night: c.night, zero_point_deg: c.zeroPointDeg, zero_point_err_deg: c.zeroPointErrDeg,
            instrumental_q: c.instrumentalQ, instrumental_u: c.instrumentalU, instrumental_q_err: c.instrumentalQErr, instrumental_u_err: c.instrumentalUErr,
            standards_json: JSON.stringify({ standards: c.standards, nPolarized: c.nPolarized, nUnpolarized: c.nUnpolarized, rows: c.rows, instrumentalChi2: c.instrumentalChi2, instrumentalDof: c.instrumentalDof, zeroPointScatterDeg: c.zeroPointScatterDeg }),
            state: 'applying', rows_calibrated: g.rows.length, applied_by: actorId, applied_at: now,
          });
          out.push({ id: typeof insId === 'object' ? (insId as any).id : (insId as number), c, rowIds: g.rows.map((r) => r.id) });
        }
        // ours before the commit makes them visible: a recovery never takes them for stuck
        for (const x of out) mine.add(x.id);
        return out;
      });
      try {
        for (const { id: calId, c, rowIds } of claimed) {
          const terms: CalibrationTerms = {
            instrumentalQ: c.instrumentalQ ?? 0, instrumentalU: c.instrumentalU ?? 0, instrumentalQErr: c.instrumentalQErr ?? 0, instrumentalUErr: c.instrumentalUErr ?? 0,
            zeroPointDeg: c.zeroPointDeg ?? 0, zeroPointErrDeg: c.zeroPointErrDeg ?? 0,
          };
          const rowReason = reason ?? `calibration ${calId} of batch ${batchId} (${c.instrument} ${c.band} ${c.night ?? 'no epoch'})`;
          await inChunks(rowIds, async (trx, ids) => {
            // the rows as they are now (an edit between chunks is calibrated, not overwritten)
            const ms = (await trx('measurements').whereIn('id', ids)) as Meas[];
            const starIds = [...new Set(ms.map((m) => m.star_id).filter((x): x is number => x !== null))];
            const stars = new Map<number, any>(starIds.length ? (await trx('stars').whereIn('id', starIds).select('id', 'parallax_mas', 'parallax_err_mas')).map((s: any) => [s.id, s]) : []);
            const updates: Record<string, unknown>[] = [];
            const links: unknown[][] = [];
            const audits: Parameters<typeof recordAudit>[1] = [];
            for (const m of ms) {
              const cal = applyCalibration({ q: m.q, u: m.u, qErr: m.q_err, uErr: m.u_err }, terms);
              const star = m.star_id ? stars.get(m.star_id) : null;
              const fallback = star && star.parallax_mas !== null && star.parallax_err_mas !== null ? { parallaxMas: star.parallax_mas, parallaxErrMas: star.parallax_err_mas } : null;
              const { derived } = deriveMeasurement(canonicalWithStokes(m, cal), fallback);
              const cols = derivedColumns(derived);
              const before = snapshot(m);
              const after = snapshot({ ...m, ...cols, version: m.version + 1 });
              updates.push({ ...cols, calibration_id: calId, version: m.version + 1, updated_at: now, updated_by: actorId, id: m.id });
              links.push([calId, m.id, JSON.stringify(before), JSON.stringify(after)]);
              audits.push({ actorId, action: 'measurement.calibrate', entityType: 'measurement', entityId: m.id, before, after: { ...after, calibrationId: calId }, reason: rowReason });
            }
            await updateMeasurements(trx, updates);
            await bulkInsertRows(trx, 'calibration_rows', ['calibration_id', 'measurement_id', 'before_json', 'after_json'], links);
            await recordAudit(trx, audits);
          });
        }
        await writeTx(async (trx) => {
          const n = await trx('calibrations').whereIn('id', claimed.map((x) => x.id)).where({ state: 'applying' }).update({ state: 'applied' });
          if (n !== claimed.length) throw new Error(`calibrations ${claimed.map((x) => x.id).join(', ')} left the applying state`);
          const audits: Parameters<typeof recordAudit>[1] = claimed.map(({ id, c, rowIds }) => ({ actorId, action: 'calibration.apply', entityType: 'calibration', entityId: id, after: { batchId, instrument: c.instrument, band: c.band, night: c.night, zeroPointDeg: c.zeroPointDeg, zeroPointErrDeg: c.zeroPointErrDeg, instrumentalQ: c.instrumentalQ, instrumentalU: c.instrumentalU, rows: rowIds.length }, reason }));
          audits.push({ actorId, action: 'batch.calibrate', entityType: 'batch', entityId: batchId, after: { calibrations: claimed.map((x) => x.id), rows: claimed.reduce((s, x) => s + x.rowIds.length, 0) }, reason });
          await recordAudit(trx, audits);
        });
      } catch (err) {
        await rollBackApply(claimed.map((x) => x.id), `the apply stopped part-way (${err instanceof Error ? err.message : String(err)}); the rows written were restored`, actorId);
        throw err;
      } finally {
        for (const x of claimed) mine.delete(x.id);
      }
      const out = claimed.map(({ id, c, rowIds }) => ({ id, instrument: c.instrument, band: c.band, night: c.night, rowsCalibrated: rowIds.length }));
      return { batchId, applied: out, rowsCalibrated: out.reduce((s, o) => s + o.rowsCalibrated, 0) };
    },

    /**
     * Restore every row of the batch's applied calibrations to its values before; refused if a row
     * changed since. Written in short transactions (the calibrations are `reverting` meanwhile); a
     * row edited part-way puts the rows already restored back to their calibrated values (409).
     */
    async revert(actorId: number, batchId: number, reason: string | null) {
      await recoverStuck(batchId);
      await refuseApproved(batchId, 'revert its calibration');
      const b = await db('batches').where({ id: batchId }).first('id');
      if (!b) throw notFound(`Batch ${batchId}`);
      const mine = active(db);
      const cals = await writeTx(async (trx) => {
        const moving = await trx('calibrations').where({ batch_id: batchId }).whereIn('state', ['applying', 'reverting']).first();
        if (moving) refuseBusy(batchId, moving);
        const found = await trx('calibrations').where({ batch_id: batchId, state: 'applied' }).orderBy('id');
        if (!found.length) throw new AppError(409, 'not_calibrated', `Batch ${batchId} has no applied calibration to revert.`);
        await trx('calibrations').whereIn('id', found.map((c: any) => c.id)).update({ state: 'reverting' });
        for (const c of found) mine.add(c.id);
        return found as any[];
      });
      const calIds = cals.map((c) => c.id as number);
      try {
        const links = await loadLinks(calIds);
        const ms = new Map<number, number>();
        const ids = links.map((l) => l.measurement_id);
        for (let i = 0; i < ids.length; i += 900) for (const m of await readDb('measurements').whereIn('id', ids.slice(i, i + 900)).select('id', 'version')) ms.set(m.id, m.version);
        const moved = links.filter((l) => ms.get(l.measurement_id) !== l.after.version);
        if (moved.length) {
          await writeTx((trx) => trx('calibrations').whereIn('id', calIds).where({ state: 'reverting' }).update({ state: 'applied' }));
          throw editedSince(moved.map((l) => l.measurement_id));
        }
        const now = new Date().toISOString();
        try {
          await rewriteLinked(
            links,
            (l, m) => {
              const { version: _v, ...values } = l.before;
              return {
                update: { ...values, calibration_id: null, version: m!.version + 1, updated_at: now, updated_by: actorId, id: m!.id },
                audit: { actorId, action: 'measurement.calibration_revert', entityType: 'measurement', entityId: m!.id, before: { ...snapshot(m!), calibrationId: l.calibration_id }, after: { ...values, version: m!.version + 1 }, reason: reason ?? `revert of calibration ${l.calibration_id}` },
              };
            },
            (chunk, cur) => {
              const late = chunk.filter((l) => cur.get(l.measurement_id)?.version !== l.after.version);
              if (late.length) throw editedSince(late.map((l) => l.measurement_id));
            },
          );
        } catch (err) {
          // a row was edited while the others were being restored: back to applied, as a whole
          await rollBackRevert(calIds, actorId, `the revert stopped part-way (${err instanceof Error ? err.message : String(err)})`);
          throw err;
        }
        await writeTx(async (trx) => {
          await trx('calibrations').whereIn('id', calIds).where({ state: 'reverting' }).update({ state: 'reverted', reverted_by: actorId, reverted_at: now });
          const audits: Parameters<typeof recordAudit>[1] = calIds.map((id) => ({ actorId, action: 'calibration.revert', entityType: 'calibration', entityId: id, before: { state: 'applied' }, after: { state: 'reverted' }, reason }));
          audits.push({ actorId, action: 'batch.calibration_revert', entityType: 'batch', entityId: batchId, after: { calibrations: calIds, rows: links.length }, reason });
          await recordAudit(trx, audits);
        });
        return { batchId, reverted: calIds, rowsRestored: links.length };
      } finally {
        for (const id of calIds) mine.delete(id);
      }
    },

    /**
     * Put right what an interrupted apply or revert left (a crash, a stopped server): an `applying`
     * calibration is rolled back from its stored values before and marked `failed`; a `reverting`
     * one is put back to `applied`. Runs at start-up and before any calibration of such a batch is read or written.
     */
    recover: () => recoverStuck(null),

    /** Every calibration of an instrument, newest first (the instrument's history). */
    async history(code: string) {
      const inst = await readDb('instruments').whereRaw('lower(code) = ?', [code.toLowerCase()]).first();
      if (!inst) throw notFound(`Instrument ${code}`);
      const rows = await readDb('calibrations as c').join('batches as b', 'b.id', 'c.batch_id').where('c.instrument', inst.code).orderBy('c.id', 'desc').select('c.*', 'b.filename');
      const users = await userNames(readDb, rows.flatMap((c: any) => [c.applied_by, c.reverted_by].filter(Boolean)));
      return {
        instrument: inst.code,
        calibrations: rows.map((c: any) => {
          const { standards: _s, ...rest } = fromStored(c, users);
          return { ...rest, batchId: c.batch_id, filename: c.filename, revertedBy: c.reverted_by ? { id: c.reverted_by, name: users.get(c.reverted_by) ?? '' } : null, failureReason: c.failure_reason ?? null };
        }),
      };
    },
  };
}
export type CalibrationService = ReturnType<typeof calibrationService>;
