import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import { AppError, conflict, notFound } from '../errors.js';
import { whereApprovedSettled } from '../lib/visibility.js';

const M_COLS = ['measurement_id', 'version', 'star_id', 'band', 'instrument', 'mjd', 'q', 'u', 'q_err', 'u_err', 'q_gal', 'u_gal', 'q_gal_err', 'u_gal_err', 'p_debiased', 'theta_deg', 'theta_gal_deg', 'distance_pc', 'distance_lo_pc', 'distance_hi_pc'];
const S_COLS = ['star_id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'hpx15', 'parallax_mas', 'parallax_err_mas'];

/** Frozen releases: a tag that pins one tomography run and copies of the approved catalog. */
export function releaseService(db: Knex, readDb: Knex = db) {
  function present(r: Record<string, any>) {
    return { tag: r.tag, notes: r.notes, runId: r.run_id, fingerprint: r.fingerprint, counts: JSON.parse(r.counts_json), frozenBy: r.frozen_by, frozenAt: r.frozen_at };
  }
  return {
    async freeze(actorId: number, input: { tag: string; notes?: string; runId?: number }) {
      return db.transaction(async (trx) => {
        if (await trx('releases').where({ tag: input.tag }).first()) throw conflict(`A release tagged ${input.tag} already exists; releases never change.`);
        const run = input.runId ? await trx('tomography_runs').where({ id: input.runId }).first() : await trx('tomography_runs').where({ state: 'done' }).orderBy('id', 'desc').first();
        if (!run) throw notFound(input.runId ? `Run ${input.runId}` : 'A finished tomography run');
        if (run.state !== 'done') throw new AppError(409, 'not_finished', `Run ${run.id} is ${run.state}; only a finished run can be released.`);
        const [id] = await trx('releases').insert({ tag: input.tag, notes: input.notes ?? null, run_id: run.id, counts_json: '{}', fingerprint: run.fingerprint, frozen_by: actorId, frozen_at: new Date().toISOString() });
        // copies, so later edits and approvals leave the release as it was
        await trx.into(trx.raw('?? (??)', ['release_measurements', ['release_id', ...M_COLS]]))
          .insert(whereApprovedSettled(trx('measurements'), trx).whereNotNull('star_id').select(trx.raw('? as release_id', [id]), 'id', 'version', 'star_id', 'band', 'instrument', 'mjd', 'q', 'u', 'q_err', 'u_err', 'q_gal', 'u_gal', 'q_gal_err', 'u_gal_err', 'p_debiased', 'theta_deg', 'theta_gal_deg', 'distance_pc', 'distance_lo_pc', 'distance_hi_pc'));
        await trx.into(trx.raw('?? (??)', ['release_stars', ['release_id', ...S_COLS]]))
          .insert(trx('stars').whereIn('id', trx('release_measurements').where({ release_id: id }).distinct('star_id')).select(trx.raw('? as release_id', [id]), 'id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'hpx15', 'parallax_mas', 'parallax_err_mas'));
        const [{ n: nm }] = await trx('release_measurements').where({ release_id: id }).count({ n: '*' });
        const [{ n: ns }] = await trx('release_stars').where({ release_id: id }).count({ n: '*' });
        const [{ n: nc }] = await trx('tomography_cells').where({ run_id: run.id }).count({ n: '*' });
        const counts = { measurements: Number(nm), stars: Number(ns), cells: Number(nc) };
        await trx('releases').where({ id }).update({ counts_json: JSON.stringify(counts) });
        await recordAudit(trx, { actorId, action: 'release.freeze', entityType: 'release', entityId: input.tag, after: { runId: run.id, ...counts }, reason: input.notes ?? null });
        return present(await trx('releases').where({ id }).first());
      });
    },
    async list() {
      return (await readDb('releases').orderBy('id', 'desc')).map(present);
    },
    async get(tag: string) {
      const r = await readDb('releases').where({ tag }).first();
      if (!r) throw notFound(`Release ${tag}`);
      return present(r);
    },
  };
}
export type ReleaseService = ReturnType<typeof releaseService>;
