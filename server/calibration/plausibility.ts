import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import { DEFAULT_P_CEILING, PLAUSIBILITY_FLAGS, repeatsAreInconsistent, type PlausibilityFlag } from '../science/plausibility.js';
import { GAUSSIAN_ANGLE_MIN_SNR } from '../science/polarization.js';
import { POLARIZATION_EFFICIENCY_MAX_PCT_PER_MAG } from '../science/serkowski.js';
import { INCONSISTENT_TAIL_PROBABILITY } from '../science/combine.js';

const KEY = 'plausibility';
export const FLAG_NAMES = Object.keys(PLAUSIBILITY_FLAGS) as PlausibilityFlag[];

/**
 * Plausibility flags at read time: the stored per-row flags (derive.ts) plus those that depend on
 * a setting (the p ceiling) or on other rows (χ²-inconsistent repeats), and SQL filters for each.
 */
export function plausibilityService(db: Knex, readDb: Knex = db) {
  async function ceiling(k: Knex = readDb): Promise<number> {
    const row = await k('settings').where({ key: KEY }).first();
    return row ? Number(JSON.parse(row.value_json).pCeiling) : DEFAULT_P_CEILING;
  }

  /** Stars (ids) whose non-rejected repeats in a band and instrument are χ²-inconsistent. */
  async function inconsistentStarIds(starIds?: number[]): Promise<Set<number>> {
    const out = new Set<number>();
    let q = readDb('measurements').whereNotNull('star_id').whereNot('state', 'rejected');
    if (starIds) {
      if (!starIds.length) return out;
      q = q.whereIn('star_id', starIds.slice(0, 5000));
    } else {
      // only stars with repeats at all
      q = q.whereIn('star_id', readDb('measurements').whereNotNull('star_id').whereNot('state', 'rejected').groupBy('star_id', 'band', 'instrument').havingRaw('count(*) > 1').select('star_id'));
    }
    const rows = await q.orderBy(['star_id', 'band', 'instrument']).select('star_id', 'band', 'instrument', 'q', 'u', 'q_err', 'u_err');
    let group: any[] = [];
    const flush = () => {
      if (group.length > 1 && repeatsAreInconsistent(group.map((m) => ({ q: m.q, u: m.u, qErr: m.q_err, uErr: m.u_err })))) out.add(group[0].star_id);
      group = [];
    };
    for (const r of rows) {
      if (group.length && (group[0].star_id !== r.star_id || group[0].band !== r.band || group[0].instrument !== r.instrument)) flush();
      group.push(r);
    }
    flush();
    return out;
  }

  return {
    ceiling: () => ceiling(),
    inconsistentStarIds,

    async settings() {
      return {
        pCeiling: await ceiling(),
        efficiencyMaxPctPerMag: POLARIZATION_EFFICIENCY_MAX_PCT_PER_MAG,
        minPSnr: GAUSSIAN_ANGLE_MIN_SNR,
        inconsistentTailProbability: INCONSISTENT_TAIL_PROBABILITY,
        flags: FLAG_NAMES.map((flag) => ({ flag, description: PLAUSIBILITY_FLAGS[flag] })),
      };
    },

    async update(actorId: number, body: { pCeiling: number }) {
      await db.transaction(async (trx) => {
        const before = await trx('settings').where({ key: KEY }).first();
        const value_json = JSON.stringify({ pCeiling: body.pCeiling });
        const now = new Date().toISOString();
        if (before) await trx('settings').where({ key: KEY }).update({ value_json, updated_by: actorId, updated_at: now });
        else await trx('settings').insert({ key: KEY, value_json, updated_by: actorId, updated_at: now });
        await recordAudit(trx, { actorId, action: 'settings.plausibility', entityType: 'settings', entityId: KEY, before: before ? JSON.parse(before.value_json) : { pCeiling: DEFAULT_P_CEILING }, after: { pCeiling: body.pCeiling } });
      });
      return this.settings();
    },

    /** Add the read-time flags to rows that carry p, star_id and their stored flags. */
    async annotate<T extends { p: number; star_id: number | null; flags: string[] }>(rows: T[]): Promise<T[]> {
      const c = await ceiling();
      const bad = await inconsistentStarIds([...new Set(rows.map((r) => r.star_id).filter((x): x is number => x !== null))]);
      for (const r of rows) {
        const extra: string[] = [];
        if (r.p > c) extra.push('above_p_ceiling');
        if (r.star_id !== null && bad.has(r.star_id)) extra.push('inconsistent_repeats');
        r.flags = [...new Set([...r.flags, ...extra])];
      }
      return rows;
    },

    /**
     * A filter restricting a measurements query (table `measurements` or the given alias) to rows carrying a
     * flag. The stored flags are matched on their columns; the ceiling and the repeats are evaluated here.
     * Returned as a function (not a query builder) so that awaiting it never runs the query.
     */
    async flagFilter(flag: string, table = 'measurements'): Promise<(qb: Knex.QueryBuilder) => Knex.QueryBuilder> {
      if (flag === 'above_p_ceiling') {
        const c = await ceiling();
        return (qb) => qb.where(`${table}.p`, '>', c);
      }
      if (flag === 'inconsistent_repeats') {
        const ids = [...(await inconsistentStarIds())];
        return (qb) => qb.whereIn(`${table}.star_id`, ids.length ? ids : [-1]);
      }
      if (flag === 'low_p_snr') return (qb) => qb.whereRaw(`${table}.p < ? * ${table}.p_err`, [GAUSSIAN_ANGLE_MIN_SNR]);
      if (flag === 'above_efficiency_envelope') return (qb) => qb.where(`${table}.ebv`, '>', 0).whereRaw(`100 * ${table}.p > ? * ${table}.ebv`, [POLARIZATION_EFFICIENCY_MAX_PCT_PER_MAG]);
      const safe = flag.replace(/[^a-z_]/g, '');
      return (qb) => qb.where(`${table}.flags_json`, 'like', `%"${safe}"%`);
    },
  };
}
export type PlausibilityService = ReturnType<typeof plausibilityService>;
