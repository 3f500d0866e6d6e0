import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import { AppError, badRequest, conflict, notFound } from '../errors.js';
import { icrsToGalactic } from '../science/frames.js';
import { ang2pixNest } from '../science/healpix.js';
import { deriveMeasurement, INDEX_NSIDE } from './derive.js';
import { designation } from './designation.js';
import { normaliseRow, type CanonicalRow } from './normalise.js';
import { hiddenBatchIds } from '../lib/visibility.js';
import { derivedColumns } from './stored.js';
import { rematchPosition } from './rematch.js';

/** The canonical fields a measurement can be edited in (equatorial frame, fractions, degrees). */
export const EDITABLE = ['ra_deg', 'dec_deg', 'band', 'instrument', 'mjd', 'q', 'u', 'q_err', 'u_err', 'p', 'p_err', 'theta_deg', 'theta_err_deg', 'parallax_mas', 'parallax_err_mas', 'distance_pc', 'distance_err_pc', 'ebv'] as const;
const P_FORM = ['p', 'p_err', 'theta_deg', 'theta_err_deg'];

export type MeasurementRow = Record<string, any> & { id: number; version: number; state: string };

/** The stored measurement as a canonical row, so an edit goes through the same checks as an upload. */
function canonicalOf(m: MeasurementRow, usePForm: boolean): Record<string, unknown> {
  const base: Record<string, unknown> = {
    ra_deg: m.ra_deg, dec_deg: m.dec_deg, band: m.band, instrument: m.instrument, mjd: m.mjd, parallax_mas: m.parallax_mas, parallax_err_mas: m.parallax_err_mas, ebv: m.ebv,
  };
  if (m.distance_method === 'given') {
    base.distance_pc = m.distance_pc;
    base.distance_err_pc = (m.distance_hi_pc - m.distance_lo_pc) / 2;
    base.parallax_mas = null;
    base.parallax_err_mas = null;
  }
  if (usePForm) Object.assign(base, { p: m.p, p_err: m.p_err, theta_deg: m.theta_deg, theta_err_deg: m.theta_err_deg });
  else Object.assign(base, { q: m.q, u: m.u, q_err: m.q_err, u_err: m.u_err });
  return base;
}

const toText = (v: unknown) => (v === null || v === undefined ? undefined : String(v));

/** Persisted columns of a derived measurement: the one list in stored.ts, shared with intake's bulk writes. */
export { derivedColumns } from './stored.js';
// The public face of a measurement's life for the other capabilities (intake in bulk, review and
// calibration one row at a time): the column contract, mapping, normalising, deriving, the stored columns.
export { COLUMNS } from './columns.js';
export { checkMapping, missingColumns, proposeMapping, type ColumnMapping, type MappingProposal } from './mapping.js';
export { normaliseRow, type CanonicalRow, type RowIssue } from './normalise.js';
export { deriveMeasurement, INDEX_NSIDE, type Derived } from './derive.js';
export { designation } from './designation.js';
export { DERIVED_COLUMNS, MEAS_COLS, MEAS_NUM, ROW_COLS, STAR_COLS } from './stored.js';

/**
 * Owns a stored measurement's life after intake: validate an edit with the upload schema,
 * re-derive, persist with a version bump, audit — all in one transaction.
 */
export function measurementService(db: Knex, opts: { crossmatchArcsec?: number } = {}) {
  async function load(trx: Knex | Knex.Transaction, id: number): Promise<MeasurementRow> {
    // a measurement of a batch still being checked (or failed) does not exist for anyone yet
    const m = await trx('measurements').where({ id }).whereNotIn('batch_id', hiddenBatchIds(trx)).first();
    if (!m) throw notFound(`Measurement ${id}`);
    return m;
  }

  /** Validate and derive the merged row; throws 400 naming each bad field. */
  async function rederive(trx: Knex | Knex.Transaction, m: MeasurementRow, changes: Record<string, unknown>) {
    const usePForm = Object.keys(changes).some((k) => P_FORM.includes(k));
    const merged = { ...canonicalOf(m, usePForm), ...changes };
    if ('distance_pc' in changes && changes.distance_pc !== null) {
      merged.parallax_mas = null;
      merged.parallax_err_mas = null;
    }
    const text: Record<string, string | undefined> = {};
    for (const [k, v] of Object.entries(merged)) text[k] = toText(v);
    const res = normaliseRow(text, (c) => c);
    if (!res.row) throw badRequest(res.errors.map((e) => `${e.field}: ${e.message}`).join('; '), { fields: res.errors.map((e) => ({ field: e.field, value: e.value, message: e.message })) });
    const inst = await trx('instruments').whereRaw('lower(code) = ?', [res.row.instrument.toLowerCase()]).first();
    if (!inst) throw badRequest(`instrument: unknown instrument "${res.row.instrument}"`, { fields: [{ field: 'instrument', message: 'unknown instrument' }] });
    res.row.instrument = inst.code;
    if (!String(inst.bands).split(',').includes(res.row.band)) throw badRequest(`band: ${inst.code} observes in ${inst.bands} only`, { fields: [{ field: 'band', message: `expected one of ${inst.bands}` }] });
    const star = m.star_id ? await trx('stars').where({ id: m.star_id }).first() : null;
    const fallback = star && star.parallax_mas !== null && star.parallax_err_mas !== null ? { parallaxMas: star.parallax_mas, parallaxErrMas: star.parallax_err_mas } : null;
    const { derived, warnings } = deriveMeasurement(res.row as CanonicalRow, fallback);
    return { derived, warnings: [...res.warnings, ...warnings] };
  }

  async function applyEdit(trx: Knex.Transaction, actorId: number, m: MeasurementRow, changes: Record<string, unknown>, reason: string | null, action: string) {
    const { derived, warnings } = await rederive(trx, m, changes);
    const cols = derivedColumns(derived);
    const before: Record<string, unknown> = {};
    const after: Record<string, unknown> = {};
    for (const k of Object.keys(changes)) {
      before[k] = k in m ? m[k] : (canonicalOf(m, P_FORM.includes(k)) as Record<string, unknown>)[k] ?? null;
      after[k] = changes[k];
    }
    await trx('measurements').where({ id: m.id }).update({ ...cols, version: m.version + 1, updated_at: new Date().toISOString(), updated_by: actorId });
    // a new position re-runs the match: beyond the radius from its star the row is held, untied (server/measurements/rematch.ts)
    if (('ra_deg' in changes || 'dec_deg' in changes) && m.star_id && m.state !== 'rejected') {
      const moved = await rematchPosition(trx, { star_id: m.star_id as number }, derived.ra_deg, derived.dec_deg, opts.crossmatchArcsec ?? 1);
      if (moved.held) {
        const row = await trx('batch_rows').where({ id: m.batch_row_id }).first('warnings_json');
        const kept = (row?.warnings_json ? (JSON.parse(row.warnings_json) as { field?: string; message: string }[]) : []).filter((w) => !/held for a curator/.test(w.message));
        await trx('measurements').where({ id: m.id }).update({ star_id: null, state: 'ambiguous' });
        await trx('batch_rows').where({ id: m.batch_row_id }).update({ star_id: null, star_match: null, candidates_json: JSON.stringify(moved.candidates), warnings_json: JSON.stringify([...kept, moved.warning]) });
        before.starId = m.star_id;
        before.state = m.state;
        Object.assign(after, { starId: null, state: 'ambiguous', separationArcsec: moved.separationArcsec });
        warnings.push({ field: 'ra_deg', message: moved.warning!.message });
      }
    }
    await recordAudit(trx, { actorId, action, entityType: 'measurement', entityId: m.id, before: { ...before, version: m.version }, after: { ...after, version: m.version + 1 }, reason });
    return { measurement: await load(trx, m.id), warnings };
  }

  return {
    load: (id: number) => load(db, id),

    /** PATCH: a stale version gets 409 with the current row, never a silent overwrite. */
    async edit(actorId: number, id: number, changes: Record<string, unknown>, version: number, reason: string | null) {
      return db.transaction(async (trx) => {
        const m = await load(trx, id);
        if (m.version !== version) throw conflict(`Measurement ${id} was changed by someone else (now version ${m.version}, your edit was against ${version}).`, { current: m });
        return applyEdit(trx, actorId, m, changes, reason, 'measurement.edit');
      });
    },

    /** Undo one recorded edit by writing its old values back (itself an audited edit). */
    async revert(actorId: number, auditId: number, reason: string | null) {
      return db.transaction(async (trx) => {
        const entry = await trx('audit_log').where({ id: auditId }).first();
        if (!entry || entry.entity_type !== 'measurement' || !['measurement.edit', 'measurement.revert'].includes(entry.action)) throw notFound(`Revertible edit ${auditId}`);
        const before = JSON.parse(entry.before_json) as Record<string, unknown>;
        delete before.version;
        const m = await load(trx, Number(entry.entity_id));
        return applyEdit(trx, actorId, m, before, reason ?? `revert of change ${auditId}`, 'measurement.revert');
      });
    },

    async setState(actorId: number, ids: number[], state: 'approved' | 'rejected', reason: string | null, opts: { from?: string[] } = {}) {
      return db.transaction(async (trx) => {
        const from = opts.from ?? ['pending', 'approved', 'rejected'];
        const rows: MeasurementRow[] = [];
        for (let i = 0; i < ids.length; i += 900) rows.push(...(await trx('measurements').whereIn('id', ids.slice(i, i + 900)).whereNotIn('batch_id', hiddenBatchIds(trx)).select('id', 'state', 'version')));
        const missing = ids.filter((id) => !rows.some((r) => r.id === id));
        if (missing.length) throw notFound(`Measurements ${missing.slice(0, 10).join(', ')}${missing.length > 10 ? ' …' : ''}`);
        const held = rows.filter((r) => !from.includes(r.state));
        if (held.length) throw new AppError(409, 'held', `${held.length} measurement(s) are ${[...new Set(held.map((h) => h.state))].join('/')} and must be resolved first (e.g. ${held.slice(0, 5).map((h) => h.id).join(', ')}).`, { ids: held.map((h) => h.id) });
        const changed = rows.filter((r) => r.state !== state);
        const now = new Date().toISOString();
        for (let i = 0; i < changed.length; i += 900) {
          await trx('measurements').whereIn('id', changed.slice(i, i + 900).map((r) => r.id)).update({ state, version: trx.raw('version + 1'), updated_at: now, updated_by: actorId });
        }
        await recordAudit(trx, changed.map((r) => ({ actorId, action: `measurement.${state === 'approved' ? 'approve' : 'reject'}`, entityType: 'measurement', entityId: r.id, before: { state: r.state }, after: { state }, reason })));
        return { changed: changed.length };
      });
    },

    /** A conflict: keep this measurement's values or the earlier one's; the other is rejected. */
    async resolveConflict(actorId: number, id: number, keep: 'this' | 'other', reason: string | null) {
      return db.transaction(async (trx) => {
        const m = await load(trx, id);
        if (m.state !== 'conflict' || !m.conflicts_with) throw new AppError(409, 'not_conflict', `Measurement ${id} is ${m.state}, not a conflict.`);
        const other = await load(trx, m.conflicts_with);
        const [kept, dropped] = keep === 'this' ? [m, other] : [other, m];
        const now = new Date().toISOString();
        await trx('measurements').where({ id: dropped.id }).update({ state: 'rejected', version: dropped.version + 1, updated_at: now, updated_by: actorId });
        if (kept.id === m.id) await trx('measurements').where({ id: m.id }).update({ state: 'pending', version: m.version + 1, updated_at: now, updated_by: actorId });
        await recordAudit(trx, [
          { actorId, action: 'measurement.resolve', entityType: 'measurement', entityId: m.id, before: { state: 'conflict', conflictsWith: other.id }, after: { kept: kept.id, rejected: dropped.id }, reason },
          { actorId, action: 'measurement.reject', entityType: 'measurement', entityId: dropped.id, before: { state: dropped.state }, after: { state: 'rejected' }, reason: `conflict with ${kept.id} resolved` },
        ]);
        return { kept: kept.id, rejected: dropped.id };
      });
    },

    /** An ambiguous match: attach to a chosen star, or make a new star at the measured position. */
    async attach(actorId: number, id: number, target: { starId: number } | { newStar: true; name?: string }, reason: string | null) {
      return db.transaction(async (trx) => {
        const m = await load(trx, id);
        if (m.state !== 'ambiguous') throw new AppError(409, 'not_ambiguous', `Measurement ${id} is ${m.state}; only an ambiguous match can be attached.`);
        let starId: number;
        if ('starId' in target) {
          const star = await trx('stars').where({ id: target.starId }).first();
          if (!star) throw badRequest(`starId: star ${target.starId} does not exist`, { fields: [{ field: 'starId', message: 'no such star' }] });
          starId = star.id;
        } else {
          const g = icrsToGalactic(m.ra_deg, m.dec_deg);
          const [newId] = await trx('stars').insert({
            name: target.name ?? designation(m.ra_deg, m.dec_deg), source_id: null, ra_deg: m.ra_deg, dec_deg: m.dec_deg, glon_deg: g.lDeg, glat_deg: g.bDeg,
            parallax_mas: m.parallax_mas, parallax_err_mas: m.parallax_err_mas, hpx15: ang2pixNest(INDEX_NSIDE, m.ra_deg, m.dec_deg), created_at: new Date().toISOString(), created_by: actorId,
          });
          starId = newId as number;
          await recordAudit(trx, { actorId, action: 'star.create', entityType: 'star', entityId: starId, after: { fromMeasurement: id } });
        }
        // re-derive with the chosen star: its catalog parallax gives the distance a row without one lacked
        const { derived, warnings } = await rederive(trx, { ...m, star_id: starId }, {});
        await trx('measurements').where({ id }).update({ ...derivedColumns(derived), star_id: starId, state: 'pending', version: m.version + 1, updated_at: new Date().toISOString(), updated_by: actorId });
        const row = await trx('batch_rows').where({ id: m.batch_row_id }).first('warnings_json');
        const others = (row?.warnings_json ? (JSON.parse(row.warnings_json) as { field?: string; message: string }[]) : []).filter((w) => w.field !== 'parallax_mas' && !/held for a curator/.test(w.message));
        await trx('batch_rows').where({ id: m.batch_row_id }).update({ star_id: starId, star_match: 'curator', warnings_json: JSON.stringify([...others, ...warnings.filter((w) => w.field === 'parallax_mas')]) });
        await recordAudit(trx, { actorId, action: 'measurement.attach', entityType: 'measurement', entityId: id, before: { state: 'ambiguous', starId: null, distance_pc: m.distance_pc, distance_method: m.distance_method }, after: { state: 'pending', starId, distance_pc: derived.distance_pc, distance_method: derived.distance_method }, reason });
        return load(trx, id);
      });
    },
  };
}
export type MeasurementService = ReturnType<typeof measurementService>;
