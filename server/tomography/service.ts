import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import { bulkInsert } from '../dialect.js';
import { AppError, notFound } from '../errors.js';
import { whereInCone, withinCone } from '../lib/cone.js';
import { whereApprovedSettled } from '../lib/visibility.js';
import { npixForNside } from '../science/healpix.js';
import { combineMeasurements } from '../science/combine.js';
import { bandNormalisation, normalisationParams } from '../science/calibration.js';
import { distanceFromParallax } from '../science/distance.js';
import { galacticToIcrs, icrsToGalactic } from '../science/frames.js';
import { ang2pixNest, maxPixelRadiusDeg, orderForNside, pix2angNest } from '../science/healpix.js';
import { angularSeparationDeg } from '../science/separation.js';
import { layerExtremes } from './cellOutput.js';
import { candidateCellRanges, pixelOverlapsDisc } from './cone.js';
import { runCellsInWorkers, type TomographyCell } from './pool.js';
import type { SightlineResult, TomographyStar } from '../science/tomography/types.js';

// What other capabilities (masks) use of tomography: the cells of a run as answers show them.
export { cellMeetsCriteria, describeCriteria, filterCells, type CellCriteria } from './criteria.js';
export { cellInConvention, layerExtremes, runSummary, SIGHTLINE_CONVENTIONS, type CellForOutput, type RunForOutput } from './cellOutput.js';
export { provenanceComments } from './layersCsv.js';
export { sendCells, setProvenanceHeaders, type CellsAnswer } from './sendCells.js';

export interface RunParams {
  nside: number;
  coordsys: 'G' | 'C';
  band: string;
  minStars: number;
  draws: number;
  jumpThresholdDeg: number;
  minSegmentLength: number;
  region: { ra: number; dec: number; radius: number } | null;
  /** bring measurements of every band to this band with the Serkowski law (server/science/calibration.ts); absent: `band` only */
  referenceBand?: string | null;
  /** µm, λmax of the Serkowski law used for the normalisation (default 0.55) */
  lambdaMaxUm?: number;
  /** K of the Serkowski law (default 0.01 + 1.66 λmax, Whittet et al. 1992) */
  serkowskiK?: number;
}

/** Runs one person may have queued or running at once (the queue is shared: one run at a time). */
export const MAX_OPEN_RUNS_PER_PERSON = 2;
/** Monte Carlo draws × cells one run may fit (the demo run: about 100 × 300). */
export const MAX_DRAW_CELLS = 2_000_000;
/** include=stars: widest cone and most cells whose stars one answer gathers. */
export const MAX_STARS_RADIUS_DEG = 5;
export const MAX_STARS_CELLS = 50;

/** Thrown inside the final transaction when the run stopped being `running` (cancelled meanwhile). */
class RunEnded extends Error {}

export const DEFAULT_RUN: RunParams = { nside: 32, coordsys: 'G', band: 'R', minStars: 10, draws: 100, jumpThresholdDeg: 30, minSegmentLength: 3, region: null };

interface Live {
  cellsDone: number;
  cellsTotal: number;
  startedMs: number;
  abort: AbortController;
}

/** Stars of the approved catalog in one band, each with its combined (q, u) in the run's frame. */
export async function gatherStars(db: Knex, p: RunParams, from: { releaseId?: number } = {}) {
  // live approved catalog, or the copies frozen with a release
  const [M, S] = from.releaseId ? ['release_measurements', 'release_stars'] : ['measurements', 'stars'];
  let q = db(`${M} as m`)
    .join(`${S} as s`, from.releaseId ? (j) => j.on('s.star_id', 'm.star_id').andOn('s.release_id', 'm.release_id') : (j) => j.on('s.id', 'm.star_id'))
    .orderBy(['m.star_id', from.releaseId ? 'm.measurement_id' : 'm.id'])
    .select(
      from.releaseId ? 'm.measurement_id as id' : 'm.id', 'm.version', 'm.band', 'm.star_id', 'm.q', 'm.u', 'm.q_err', 'm.u_err',
      'm.q_gal', 'm.u_gal', 'm.q_gal_err', 'm.u_gal_err', 'm.distance_pc', 'm.distance_lo_pc', 'm.distance_hi_pc',
      's.ra_deg', 's.dec_deg', 's.glon_deg', 's.glat_deg', 's.parallax_mas', 's.parallax_err_mas',
    );
  q = from.releaseId ? q.where('m.release_id', from.releaseId) : whereApprovedSettled(q, db, 'm');
  if (!p.referenceBand) q = q.where('m.band', p.band);
  if (p.region) q = whereInCone(q, 's.hpx15', p.region.ra, p.region.dec, p.region.radius);
  let rows = await q;
  if (p.region) rows = withinCone(rows, p.region.ra, p.region.dec, p.region.radius);
  const hash = crypto.createHash('sha256');
  hash.update(JSON.stringify(p));
  const stars = new Map<number, { cell: number; star: TomographyStar; used: number }>();
  let group: typeof rows = [];
  const flush = () => {
    if (!group.length) return;
    const s = group[0];
    const gal = p.coordsys === 'G';
    const scale = (m: { band: string }) => (p.referenceBand ? bandNormalisation(m.band, p.referenceBand, p.lambdaMaxUm, p.serkowskiK).factor : 1);
    const c = combineMeasurements(group.map((m, _i, _a, f = scale(m)) => (gal ? { q: f * m.q_gal, u: f * m.u_gal, qErr: f * m.q_gal_err, uErr: f * m.u_gal_err } : { q: f * m.q, u: f * m.u, qErr: f * m.q_err, uErr: f * m.u_err })));
    let dist: { distancePc: number; distanceLoPc: number; distanceHiPc: number } | null = null;
    let parallax: { parallaxMas: number; parallaxErrMas: number } | null = null;
    if (s.parallax_mas !== null && s.parallax_err_mas !== null && s.parallax_err_mas > 0) {
      dist = distanceFromParallax(s.parallax_mas, s.parallax_err_mas);
      parallax = { parallaxMas: s.parallax_mas, parallaxErrMas: s.parallax_err_mas };
    } else {
      const withDist = group.find((m) => m.distance_pc !== null);
      if (withDist) dist = { distancePc: withDist.distance_pc, distanceLoPc: withDist.distance_lo_pc, distanceHiPc: withDist.distance_hi_pc };
    }
    if (dist && Number.isFinite(dist.distancePc) && dist.distancePc > 0) {
      const cell = gal ? ang2pixNest(p.nside, s.glon_deg, s.glat_deg) : ang2pixNest(p.nside, s.ra_deg, s.dec_deg);
      stars.set(s.star_id, {
        cell,
        used: group.length,
        star: { id: String(s.star_id), distancePc: dist.distancePc, distanceLoPc: dist.distanceLoPc, distanceHiPc: dist.distanceHiPc, ...(parallax ?? { distanceErrPc: (dist.distanceHiPc - dist.distanceLoPc) / 2 }), q: c.q, u: c.u, qErr: c.qErr, uErr: c.uErr },
      });
      for (const m of group) hash.update(`${m.id}:${m.version};`);
      hash.update(`s${s.star_id}:${s.parallax_mas}:${s.parallax_err_mas};`);
    }
    group = [];
  };
  for (const r of rows) {
    if (group.length && group[0].star_id !== r.star_id) flush();
    group.push(r);
  }
  flush();
  const byCell = new Map<number, TomographyStar[]>();
  let measurementsUsed = 0;
  for (const { cell, star, used } of stars.values()) {
    measurementsUsed += used;
    const list = byCell.get(cell);
    if (list) list.push(star);
    else byCell.set(cell, [star]);
  }
  return { byCell, fingerprint: hash.digest('hex'), starsUsed: stars.size, measurementsUsed };
}

function summarise(r: SightlineResult) {
  const { maxJump, nearestLayerPc, farthestLayerPc } = layerExtremes(r);
  return {
    n_stars: r.nStars,
    n_layers: r.nLayers,
    layer_support: r.layerCountSupport,
    complex: r.complex,
    max_jump_deg: maxJump?.deg ?? null,
    max_jump_significance: maxJump?.sig ?? null,
    nearest_layer_pc: nearestLayerPc,
    farthest_layer_pc: farthestLayerPc,
  };
}

/** Tomography runs: gather the approved data, fit every cell on worker threads, store with a fingerprint. */
export function tomographyService(db: Knex, readDb: Knex = db, opts: { threads?: number; maxDrawCells?: number; maxOpenRunsPerPerson?: number } = {}) {
  const maxDrawCells = opts.maxDrawCells ?? MAX_DRAW_CELLS;
  const maxOpenRuns = opts.maxOpenRunsPerPerson ?? MAX_OPEN_RUNS_PER_PERSON;
  const live = new Map<number, Live>();
  let queue: Promise<void> = Promise.resolve();

  async function execute(runId: number): Promise<void> {
    const run = await db('tomography_runs').where({ id: runId }).first();
    if (!run || run.state !== 'queued') return;
    const params = JSON.parse(run.params_json) as RunParams;
    const abort = new AbortController();
    const state: Live = { cellsDone: 0, cellsTotal: 0, startedMs: Date.now(), abort };
    live.set(runId, state);
    try {
      // queued → running only if nobody cancelled it while it waited
      const claimed = await db('tomography_runs').where({ id: runId, state: 'queued' }).update({ state: 'running', started_at: new Date().toISOString() });
      if (!claimed) return;
      const { byCell, fingerprint, starsUsed, measurementsUsed } = await gatherStars(readDb, params);
      const cells: TomographyCell[] = [...byCell].filter(([, s]) => s.length >= params.minStars).sort((a, b) => a[0] - b[0]).map(([ipix, stars]) => ({ cellId: `${params.nside}/${ipix}`, stars }));
      state.cellsTotal = cells.length;
      state.startedMs = Date.now(); // time left counts fitting only, not gathering
      const work = cells.length * Math.max(1, params.draws);
      if (work > maxDrawCells) throw new Error(`${cells.length} cells × ${params.draws} draws = ${work} is over the limit of ${maxDrawCells} draws × cells per run`);
      if (abort.signal.aborted) throw new RunEnded('cancelled');
      await db('tomography_runs').where({ id: runId }).update({ cells_total: cells.length, fingerprint, stars_used: starsUsed, measurements_used: measurementsUsed });
      const results = await runCellsInWorkers(
        cells,
        { draws: params.draws, jumpThresholdDeg: params.jumpThresholdDeg, minSegmentLength: params.minSegmentLength },
        (p) => {
          state.cellsDone = p.cellsDone;
        },
        { threads: opts.threads, signal: abort.signal },
      );
      const rows = results.map((r, i) => {
        const ipix = Number(cells[i].cellId.split('/')[1]);
        const c = pix2angNest(params.nside, ipix);
        const icrs = params.coordsys === 'G' ? galacticToIcrs(c.lonDeg, c.latDeg) : { raDeg: c.lonDeg, decDeg: c.latDeg };
        const { segments, starOrder, ...rest } = r;
        return { run_id: runId, nside: params.nside, ipix, lon_deg: c.lonDeg, lat_deg: c.latDeg, ra_deg: icrs.raDeg, dec_deg: icrs.decDeg, ...summarise(r), result_json: JSON.stringify({ ...rest, segments, starOrder }) };
      });
      if (abort.signal.aborted) throw new RunEnded('cancelled');
      // all cells or none: the state flips to done in the same transaction, and only from running
      await db.transaction(async (trx) => {
        const flipped = await trx('tomography_runs').where({ id: runId, state: 'running' }).update({ state: 'done', cells_done: rows.length, finished_at: new Date().toISOString() });
        if (!flipped) throw new RunEnded('the run was ended meanwhile');
        await bulkInsert(trx, 'tomography_cells', rows);
        await recordAudit(trx, { actorId: run.started_by, action: 'tomography.finished', entityType: 'tomography_run', entityId: runId, after: { cells: rows.length, fingerprint } });
      });
    } catch (e) {
      const cancelled = abort.signal.aborted || e instanceof RunEnded;
      if (!cancelled) console.error(e);
      // only a run still open is marked: a cancel already wrote its own end
      await db('tomography_runs').where({ id: runId }).whereIn('state', ['queued', 'running']).update({ state: cancelled ? 'cancelled' : 'failed', error: cancelled ? null : String((e as Error).message).slice(0, 500), finished_at: new Date().toISOString(), cells_done: 0 });
    } finally {
      live.delete(runId);
    }
  }

  /**
   * Limits on one person's use of the shared queue, each a 4xx naming the limit:
   * at most MAX_OPEN_RUNS_PER_PERSON runs queued or running, and at most MAX_DRAW_CELLS
   * Monte Carlo draws × cells (cells bounded above by the stars that could fill them ÷ minStars,
   * and by the pixels of the sky).
   */
  async function checkRunLimits(actorId: number, params: RunParams) {
    const [{ n: open }] = await readDb('tomography_runs').where({ started_by: actorId }).whereIn('state', ['queued', 'running']).count({ n: '*' });
    if (Number(open) >= maxOpenRuns) {
      throw new AppError(429, 'too_many_runs', `You have ${Number(open)} tomography runs queued or running; the limit is ${maxOpenRuns} per person. Wait for one to finish or cancel one.`, { fields: [{ field: 'run', message: `at most ${maxOpenRuns} open runs per person` }] });
    }
    let q = whereApprovedSettled(readDb('measurements as m').join('stars as s', 's.id', 'm.star_id'), readDb, 'm');
    if (!params.referenceBand) q = q.where('m.band', params.band);
    if (params.region) q = whereInCone(q, 's.hpx15', params.region.ra, params.region.dec, params.region.radius);
    const [{ n: stars }] = await q.countDistinct({ n: 'm.star_id' });
    const cellsAtMost = Math.min(npixForNside(params.nside), Math.floor(Number(stars) / params.minStars));
    const work = cellsAtMost * Math.max(1, params.draws);
    if (work > maxDrawCells) {
      throw new AppError(400, 'bad_request', `This run could fit up to ${cellsAtMost.toLocaleString('en-US')} cells (${Number(stars).toLocaleString('en-US')} stars ÷ minStars ${params.minStars}) × ${params.draws} draws = ${work.toLocaleString('en-US')}; the limit is ${maxDrawCells.toLocaleString('en-US')} draws × cells per run. Lower draws, raise minStars, or give a region.`, {
        fields: [{ field: 'draws', message: `draws × cells ≤ ${maxDrawCells}` }],
      });
    }
  }

  /**
   * On start: a run left `running` by a stopped server is marked `interrupted` with the reason
   * (its cells were never written: they go in one transaction at the end); a run left `queued`
   * is queued again.
   */
  async function recoverInterrupted(): Promise<{ interrupted: number[]; requeued: number[] }> {
    const open = await db('tomography_runs').whereIn('state', ['queued', 'running']).orderBy('id').select('id', 'state', 'started_by');
    const interrupted: number[] = [];
    const requeued: number[] = [];
    for (const r of open) {
      if (live.has(r.id)) continue;
      if (r.state === 'queued') {
        requeued.push(r.id);
        enqueue(r.id);
        continue;
      }
      await db.transaction(async (trx) => {
        const changed = await trx('tomography_runs').where({ id: r.id, state: 'running' }).update({
          state: 'interrupted', cells_done: 0, finished_at: new Date().toISOString(),
          error: 'The server stopped while this run was fitting; no result of it was kept. Start the run again.',
        });
        if (!changed) return;
        await trx('tomography_cells').where({ run_id: r.id }).delete();
        await recordAudit(trx, { actorId: r.started_by, action: 'tomography.interrupted', entityType: 'tomography_run', entityId: r.id, before: { state: 'running' }, after: { state: 'interrupted' } });
      });
      interrupted.push(r.id);
    }
    return { interrupted, requeued };
  }

  function enqueue(id: number): Promise<void> {
    const job = queue.then(() => execute(id));
    queue = job.catch(() => undefined);
    return job;
  }

  function present(r: Record<string, any>) {
    const l = live.get(r.id);
    const cellsDone = l ? l.cellsDone : r.cells_done;
    const cellsTotal = l ? l.cellsTotal : r.cells_total;
    const elapsed = l ? (Date.now() - l.startedMs) / 1000 : null;
    return {
      id: r.id,
      state: r.state,
      params: JSON.parse(r.params_json) as RunParams,
      fingerprint: r.fingerprint,
      progress: { cellsDone, cellsTotal, etaSeconds: l && cellsDone > 0 && elapsed !== null ? Number(((elapsed / cellsDone) * (cellsTotal - cellsDone)).toFixed(1)) : null },
      starsUsed: r.stars_used,
      measurementsUsed: r.measurements_used,
      startedBy: r.started_by,
      createdAt: r.created_at,
      startedAt: r.started_at,
      finishedAt: r.finished_at,
      error: r.error,
    };
  }

  const recovered = recoverInterrupted().catch((e) => {
    console.error('tomography: could not check runs left open by a restart', e);
    return { interrupted: [] as number[], requeued: [] as number[] };
  });

  return {
    async start(actorId: number, input: Partial<RunParams>) {
      await recovered; // runs a restart left open are settled first
      const params: RunParams = { ...DEFAULT_RUN, ...input, region: input.region ?? null };
      await checkRunLimits(actorId, params);
      // band normalisation: recorded with its λmax and K in the params (and so in the fingerprint)
      if (params.referenceBand) Object.assign(params, normalisationParams(params.referenceBand, params.lambdaMaxUm, params.serkowskiK));
      const id = await db.transaction(async (trx) => {
        const [id] = await trx('tomography_runs').insert({ state: 'queued', params_json: JSON.stringify(params), started_by: actorId, created_at: new Date().toISOString() });
        await recordAudit(trx, { actorId, action: 'tomography.start', entityType: 'tomography_run', entityId: id, after: params });
        return id as number;
      });
      return { id, done: enqueue(id) };
    },

    async cancel(actorId: number, id: number) {
      const run = await db('tomography_runs').where({ id }).first();
      if (!run) throw notFound(`Run ${id}`);
      if (!['queued', 'running'].includes(run.state)) throw new AppError(409, 'finished', `Run ${id} is ${run.state}; only a queued or running run can be cancelled.`);
      // any unfinished run ends here, live or left over from before a restart; its fit (if any) is
      // aborted and can no longer flip it to done (the final write requires state = running)
      await db.transaction(async (trx) => {
        await trx('tomography_runs').where({ id }).whereIn('state', ['queued', 'running']).update({ state: 'cancelled', finished_at: new Date().toISOString(), cells_done: 0 });
        await trx('tomography_cells').where({ run_id: id }).delete();
        await recordAudit(trx, { actorId, action: 'tomography.cancel', entityType: 'tomography_run', entityId: id, before: { state: run.state } });
      });
      live.get(id)?.abort.abort();
      return present(await db('tomography_runs').where({ id }).first());
    },

    async get(id: number) {
      const r = await readDb('tomography_runs').where({ id }).first();
      if (!r) throw notFound(`Run ${id}`);
      return present(r);
    },

    async list() {
      return (await readDb('tomography_runs').orderBy('id', 'desc').limit(100)).map(present);
    },

    /** The run answers come from: a release's frozen run, the one asked for, else the latest finished. */
    async resolveRun(runId?: number, releaseTag?: string) {
      let release: { tag: string; run_id: number } | undefined;
      if (releaseTag) {
        release = await readDb('releases').where({ tag: releaseTag }).first('tag', 'run_id');
        if (!release) throw notFound(`Release ${releaseTag}`);
        if (runId && runId !== release.run_id) throw new AppError(400, 'bad_request', `release ${releaseTag} is run ${release.run_id}, not run ${runId}`, { fields: [{ field: 'run', message: 'does not match the release' }] });
        runId = release.run_id;
      }
      const r = runId ? await readDb('tomography_runs').where({ id: runId }).first() : await readDb('tomography_runs').where({ state: 'done' }).orderBy('id', 'desc').first();
      if (!r) throw notFound(runId ? `Run ${runId}` : 'A finished tomography run');
      if (r.state !== 'done') throw new AppError(409, 'not_finished', `Run ${r.id} is ${r.state}.`);
      return { ...present(r), release: release?.tag ?? null };
    },

    /** Every cell of a run, compact, for the sky map. */
    async cells(runId: number) {
      const rows = await readDb('tomography_cells').where({ run_id: runId }).orderBy('ipix').select('ipix', 'lon_deg', 'lat_deg', 'ra_deg', 'dec_deg', 'n_stars', 'n_layers', 'layer_support', 'complex', 'max_jump_deg', 'max_jump_significance', 'nearest_layer_pc', 'farthest_layer_pc');
      return rows.map((c) => ({ ...c, ipix: Number(c.ipix), complex: Boolean(c.complex) }));
    },

    async sightlines(run: ReturnType<typeof present> & { release?: string | null }, where: { ipix: number[] } | { ra: number; dec: number; radius: number }, includeStars: boolean) {
      const { nside, coordsys } = run.params;
      let rows: Record<string, any>[];
      let starsCone: { ra: number; dec: number; radius: number } | null = null;
      if ('ipix' in where) {
        rows = await readDb('tomography_cells').where({ run_id: run.id }).whereIn('ipix', where.ipix).orderBy('ipix');
        if (rows.length) starsCone = { ra: rows[0].ra_deg, dec: rows[0].dec_deg, radius: maxPixelRadiusDeg(nside) * 1.01 };
      } else {
        // every cell overlapping the cone, found through the index (server/tomography/cone.ts)
        const centre = coordsys === 'G' ? (({ lDeg, bDeg }) => ({ lon: lDeg, lat: bDeg }))(icrsToGalactic(where.ra, where.dec)) : { lon: where.ra, lat: where.dec };
        if (includeStars && where.radius > MAX_STARS_RADIUS_DEG) {
          throw new AppError(400, 'bad_request', `include=stars is limited to cones of radius ≤ ${MAX_STARS_RADIUS_DEG}°; this one is ${where.radius}°. Ask without include=stars, or for one cell (nside, ipix).`, { fields: [{ field: 'include', message: `stars only for radius ≤ ${MAX_STARS_RADIUS_DEG}` }] });
        }
        const ranges = candidateCellRanges(nside, centre.lon, centre.lat, where.radius);
        const candidates = ranges.length
          ? await readDb('tomography_cells').where({ run_id: run.id }).where((w) => {
            for (const [lo, hi] of ranges) w.orWhereBetween('ipix', [lo, hi]);
          })
          : [];
        const order = orderForNside(nside);
        rows = candidates
          .filter((c) => pixelOverlapsDisc(order, Number(c.ipix), centre.lon, centre.lat, where.radius))
          .map((c) => ({ ...c, separation_deg: angularSeparationDeg(centre.lon, centre.lat, c.lon_deg, c.lat_deg) }))
          .sort((a, b) => a.separation_deg - b.separation_deg || Number(a.ipix) - Number(b.ipix));
        // a cell overlapping the cone reaches at most radius + 2 × its corner distance from the centre
        starsCone = { ra: where.ra, dec: where.dec, radius: where.radius + 2 * maxPixelRadiusDeg(nside) * 1.01 };
      }
      const out = rows.map((c) => presentCell(c));
      if (includeStars && out.length) {
        if (out.length > MAX_STARS_CELLS) {
          throw new AppError(400, 'bad_request', `include=stars is limited to ${MAX_STARS_CELLS} cells per answer; this cone touches ${out.length}. Use a smaller radius.`, { fields: [{ field: 'include', message: `stars for at most ${MAX_STARS_CELLS} cells` }] });
        }
        // the stars of every cell at once, gathered exactly as the run gathered them (one cone query)
        const releaseId = run.release ? (await readDb('releases').where({ tag: run.release }).first('id'))?.id : undefined;
        const { byCell } = await gatherStars(readDb, { ...run.params, region: starsCone }, { releaseId });
        for (const c of out) (c as Record<string, unknown>).stars = (byCell.get(c.ipix) ?? []).sort((a, b) => a.distancePc - b.distancePc);
      }
      return out;
    },

    /** Wait for the start-up check of runs a restart left open (tests, start-up logging). */
    ready: () => recovered,
  };
}
export type TomographyService = ReturnType<typeof tomographyService>;

export function presentCell(c: Record<string, any>) {
  const r = JSON.parse(c.result_json);
  return {
    nside: c.nside,
    ipix: Number(c.ipix),
    centre: { lonDeg: c.lon_deg, latDeg: c.lat_deg, raDeg: c.ra_deg, decDeg: c.dec_deg },
    ...(c.separation_deg !== undefined ? { separationDeg: c.separation_deg } : {}),
    nStars: c.n_stars,
    nLayers: c.n_layers,
    layerCountSupport: c.layer_support,
    layerCountHistogram: r.layerCountHistogram,
    complex: Boolean(c.complex),
    clearForeground: r.clearForeground,
    layers: r.layers,
    jumps: r.jumps,
    segments: r.segments,
    draws: r.draws,
    matchedDraws: r.matchedDraws,
    // runs stored before the survey fit have neither field: they came from the classic fit
    method: r.method ?? 'classic',
    starsNotPlaced: r.starsNotPlaced ?? [],
  };
}

