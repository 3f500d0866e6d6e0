import type { Knex } from 'knex';
import { auditFor } from '../audit/service.js';
import { beginDecision, type Decision } from './approve.js';
import { settleInBackground } from './settle.js';
import { settlingOf } from '../lib/settling.js';
import { badRequest, notFound } from '../errors.js';
import { hasRole, type SessionUser } from '../auth/roles.js';
import { visibleMeasurements, whereStarVisible } from '../catalog/service.js';
import { hiddenBatchIds } from '../lib/visibility.js';
import { plausibilityService } from '../calibration/service.js';
import { angularSeparationDeg } from '../science/separation.js';

export const MEASUREMENT_SORTS = ['line', 'state', 'band', 'instrument', 'mjd', 'q', 'u', 'p', 'p_debiased', 'theta_deg', 'theta_err_deg', 'distance_pc', 'star_name'] as const;
const FILTERABLE = ['state', 'band', 'instrument', 'distance_method'] as const;

export interface BatchDecisionHook {
  (batch: { id: number; filename: string; uploaded_by: number }, decision: 'approved' | 'returned', note: string | null, counts: Record<string, number>): Promise<void> | void;
}

/** Curator work on batches: the queue, the table of a batch's measurements, whole-batch decisions. */
export function reviewService(db: Knex, readDb: Knex = db, onDecision?: BatchDecisionHook, opts: { dbFile?: string } = {}) {
  const plausibility = plausibilityService(db, readDb); // read-time flags: p ceiling, χ²-inconsistent repeats
  /** Apply a settling batch off the request thread; tell the uploader once it has flipped. */
  const settleAndTell = (batch: { id: number; filename: string; uploaded_by: number }, decision: Decision, note: string | null) => {
    void settleInBackground(db, opts.dbFile, batch.id)
      .then((counts) => (counts ? onDecision?.(batch, decision, note, counts as unknown as Record<string, number>) : undefined))
      .catch((e) => console.error(`review: batch ${batch.id} could not be settled`, e));
  };
  return {
    async queue(q: { state: string; sort: 'age' | 'rows' | 'uploader'; order: 'asc' | 'desc' }) {
      const rows = await readDb('batches').leftJoin('users', 'users.id', 'batches.uploaded_by').where('batches.state', q.state).select('batches.id', 'batches.filename', 'batches.state', 'batches.instrument', 'batches.counts_json', 'batches.created_at', 'batches.reviewed_at', 'batches.review_note', 'users.name as uploader_name', 'users.email as uploader_email');
      const now = Date.now();
      const items = rows.map((b) => ({
        id: b.id, filename: b.filename, state: b.state, instrument: b.instrument, counts: b.counts_json ? JSON.parse(b.counts_json) : null,
        uploadedBy: { name: b.uploader_name, email: b.uploader_email }, createdAt: b.created_at, ageHours: Number(((now - Date.parse(b.created_at)) / 3.6e6).toFixed(2)),
        reviewedAt: b.reviewed_at, reviewNote: b.review_note,
      }));
      const key = { age: (x: (typeof items)[0]) => -x.ageHours, rows: (x: (typeof items)[0]) => x.counts?.rows ?? 0, uploader: (x: (typeof items)[0]) => x.uploadedBy.name ?? '' }[q.sort];
      items.sort((a, b) => {
        const ka = key(a), kb = key(b);
        return (ka < kb ? -1 : ka > kb ? 1 : 0) * (q.order === 'desc' ? -1 : 1);
      });
      return { batches: items };
    },

    /** One page of a batch's measurements (server-side sort and filters), for the review table. */
    async measurements(batchId: number, q: { sort: string; order: 'asc' | 'desc'; limit: number; offset: number; filters: Record<string, string>; search?: string }, user?: SessionUser) {
      // curators see everything; an observer reading their own batch sees only the stars and competing
      // values they may know of (another observer's unapproved star or value stays hidden)
      const restricted = user !== undefined && !hasRole(user, ['curator']);
      if (!(MEASUREMENT_SORTS as readonly string[]).includes(q.sort)) throw badRequest(`sort must be one of ${MEASUREMENT_SORTS.join(', ')}`, { fields: [{ field: 'sort', message: 'unknown column' }] });
      const batch = await readDb('batches').where({ id: batchId }).first();
      if (!batch) throw notFound(`Batch ${batchId}`);
      let base = readDb('measurements').join('batch_rows', 'batch_rows.id', 'measurements.batch_row_id').leftJoin('stars', 'stars.id', 'measurements.star_id').where('measurements.batch_id', batchId);
      base = base.whereNotIn('measurements.batch_id', hiddenBatchIds(readDb)); // a batch still being checked shows nothing (server/intake/visibility.ts)
      for (const [k, v] of Object.entries(q.filters)) {
        if (k === 'flag') {
          base = (await plausibility.flagFilter(v))(base) as typeof base;
          continue;
        }
        if (!(FILTERABLE as readonly string[]).includes(k)) throw badRequest(`filter.${k} is not filterable; use one of ${FILTERABLE.join(', ')}`, { fields: [{ field: `filter.${k}`, message: 'not filterable' }] });
        base = base.where(`measurements.${k}`, v);
      }
      if (q.search) {
        base = base.where((w) => w.where('stars.name', 'like', `%${q.search}%`).orWhere('stars.source_id', q.search!));
        if (restricted) base = base.whereExists(whereStarVisible(readDb('stars as vs').select(readDb.raw('1')).whereRaw('vs.id = stars.id'), readDb, user!, 'vs'));
      }
      const [{ n }] = await base.clone().count({ n: '*' });
      const sortCol = q.sort === 'line' ? 'batch_rows.line' : q.sort === 'star_name' ? 'stars.name' : `measurements.${q.sort}`;
      const rows = await base.clone().orderBy(sortCol, q.order).orderBy('measurements.id').limit(q.limit).offset(q.offset).select(
        'measurements.id', 'measurements.state', 'measurements.version', 'measurements.band', 'measurements.instrument', 'measurements.mjd', 'measurements.ra_deg', 'measurements.dec_deg',
        'measurements.q', 'measurements.u', 'measurements.q_err', 'measurements.u_err', 'measurements.p', 'measurements.p_err', 'measurements.p_debiased', 'measurements.theta_deg', 'measurements.theta_err_deg',
        'measurements.theta_gal_deg', 'measurements.parallax_mas', 'measurements.parallax_err_mas', 'measurements.distance_pc', 'measurements.distance_lo_pc', 'measurements.distance_hi_pc', 'measurements.distance_method', 'measurements.ebv',
        'measurements.flags_json', 'measurements.conflicts_with', 'batch_rows.line', 'batch_rows.warnings_json', 'batch_rows.candidates_json', 'stars.id as star_id', 'stars.name as star_name', 'stars.source_id as star_source_id',
        'stars.ra_deg as star_ra_deg', 'stars.dec_deg as star_dec_deg',
      );
      // conflicts and ambiguous matches carry what competes with them
      const otherIds = rows.filter((r) => r.conflicts_with).map((r) => r.conflicts_with);
      const othersQuery = restricted ? visibleMeasurements(readDb, user!) : readDb('measurements');
      // the competing row is named as "batch N, line M" (line of its uploaded file)
      const others = otherIds.length ? await othersQuery.leftJoin('batch_rows as obr', 'obr.id', 'measurements.batch_row_id').whereIn('measurements.id', otherIds).select('measurements.id', 'measurements.state', 'measurements.mjd', 'measurements.q', 'measurements.u', 'measurements.q_err', 'measurements.u_err', 'measurements.p', 'measurements.theta_deg', 'measurements.batch_id', 'obr.line as line') : [];
      const byId = new Map(others.map((o) => [o.id, o]));
      let visibleStar = (_id: number | null | undefined) => true;
      if (restricted) {
        const starIds = new Set<number>();
        for (const r of rows) {
          if (r.star_id) starIds.add(r.star_id);
          for (const c of r.candidates_json ? (JSON.parse(r.candidates_json) as { id?: number }[]) : []) if (typeof c.id === 'number') starIds.add(c.id);
        }
        const seen = new Set<number>(starIds.size ? await whereStarVisible(readDb('stars').whereIn('stars.id', [...starIds]), readDb, user!).pluck('stars.id') : []);
        visibleStar = (id) => id !== null && id !== undefined && seen.has(id);
      }
      return {
        total: Number(n),
        rows: await plausibility.annotate(rows.map(({ flags_json, warnings_json, candidates_json, star_source_id, star_ra_deg, star_dec_deg, ...r }) => {
          const starShown = r.star_id === null || visibleStar(r.star_id);
          const competing = r.conflicts_with ? byId.get(r.conflicts_with) ?? null : null;
          return {
            ...r,
            star_id: starShown ? r.star_id : null,
            star_name: starShown ? r.star_name : null,
            star_source_id: starShown ? star_source_id : null,
            // how far the measured position lies from the tied star (an edited position is re-matched)
            star_separation_arcsec: starShown && r.star_id !== null && star_ra_deg !== null ? angularSeparationDeg(r.ra_deg, r.dec_deg, star_ra_deg, star_dec_deg) * 3600 : null,
            conflicts_with: competing || !restricted ? r.conflicts_with : null,
            flags: flags_json ? JSON.parse(flags_json) : [],
            warnings: warnings_json ? JSON.parse(warnings_json) : [],
            candidates: (candidates_json ? (JSON.parse(candidates_json) as { id?: number }[]) : []).filter((c) => !restricted || visibleStar(c.id)),
            competing,
          };
        })),
      };
    },

    /**
     * Approve (or return) a whole batch (server/review/approve.ts says what each decision does to
     * the rows). A batch with up to SYNC_DECISION_ROWS measurements to change is decided here in one
     * transaction; a larger one is marked settling and applied in short transactions on a worker
     * thread (settle.ts), and the answer says so (`settling`); the uploader is told when it flips.
     * Allowed: awaiting_review → approved | returned; approved → returned; returned → approved.
     */
    async decide(actorId: number, batchId: number, decision: 'approved' | 'returned', note: string | null) {
      const r = await beginDecision(db, actorId, batchId, decision, note);
      if (r.done) {
        await onDecision?.(r.batch, decision, note, r.counts as unknown as Record<string, number>);
        return { id: batchId, state: decision, note, counts: r.counts };
      }
      settleAndTell(r.batch, decision, note);
      return { id: batchId, state: r.batch.state, note, counts: null, settling: { decision, done: 0, total: r.total } };
    },

    /** After a restart: batches left settling are applied on from where they stopped. */
    async resumeSettling(): Promise<number> {
      const open = await db('batches').whereNotNull('settling').select('id', 'filename', 'uploaded_by', 'settling', 'settle_json');
      for (const b of open) {
        const s = settlingOf(b);
        if (s) settleAndTell(b, s.decision, JSON.parse(b.settle_json).note ?? null);
      }
      return open.length;
    },

    /**
     * The audit trail of one entity. For an observer, ids of measurements and stars they may not
     * know of (a curator settled a conflict against another observer's unapproved row) become null.
     */
    async history(entityType: string, entityId: number, user?: SessionUser) {
      const rows = await auditFor(readDb, entityType, entityId);
      const entries = rows.map((a) => ({ id: a.id, at: a.at, action: a.action, actor: a.actor_id ? { id: a.actor_id, name: a.actor_name, email: a.actor_email } : null, before: a.before_json ? JSON.parse(a.before_json) : null, after: a.after_json ? JSON.parse(a.after_json) : null, reason: a.reason as string | null }));
      if (!user || hasRole(user, ['curator'])) return entries;
      const MEASUREMENT_KEYS = ['conflictsWith', 'conflicts_with', 'kept', 'rejected'];
      const STAR_KEYS = ['starId', 'star_id'];
      const mIds = new Set<number>(), sIds = new Set<number>();
      for (const e of entries) for (const side of [e.before, e.after]) {
        if (!side || typeof side !== 'object') continue;
        for (const k of MEASUREMENT_KEYS) if (typeof side[k] === 'number') mIds.add(side[k]);
        for (const k of STAR_KEYS) if (typeof side[k] === 'number') sIds.add(side[k]);
      }
      for (const e of entries) for (const m of /conflict with (\d+)/.exec(e.reason ?? '')?.slice(1) ?? []) mIds.add(Number(m));
      const seenM = new Set<number>(mIds.size ? await visibleMeasurements(readDb, user).whereIn('measurements.id', [...mIds]).pluck('measurements.id') : []);
      const seenS = new Set<number>(sIds.size ? await whereStarVisible(readDb('stars').whereIn('stars.id', [...sIds]), readDb, user).pluck('stars.id') : []);
      for (const e of entries) {
        for (const side of [e.before, e.after]) {
          if (!side || typeof side !== 'object') continue;
          for (const k of MEASUREMENT_KEYS) if (typeof side[k] === 'number' && !seenM.has(side[k])) side[k] = null;
          for (const k of STAR_KEYS) if (typeof side[k] === 'number' && !seenS.has(side[k])) side[k] = null;
        }
        if (e.reason) e.reason = e.reason.replace(/conflict with (\d+)/g, (all, id) => (seenM.has(Number(id)) ? all : 'conflict with another measurement'));
      }
      return entries;
    },
  };
}
export type ReviewService = ReturnType<typeof reviewService>;
