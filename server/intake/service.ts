import fs from 'node:fs';
import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import type { Config } from '../config.js';
import { bulkInsertRows, maxId, selectWhereIn, syncIdSequences } from '../dialect.js';
import { AppError, badRequest, notFound } from '../errors.js';
import type { SessionUser } from '../auth/roles.js';
import { hasRole } from '../auth/roles.js';
import { deriveMeasurement } from '../measurements/derive.js';
import type { RowIssue } from '../measurements/normalise.js';
import { checkMapping, missingColumns, proposeMapping, type ColumnMapping, type MappingProposal } from '../measurements/mapping.js';
import { safeCsv, sniffCsv } from './csv.js';
import { CrossMatcher, type MatchQuery, type StarRef } from './crossmatch.js';
import { NUM, NUM_SLOTS, warningsJsonOf, writeDerived, type PrepareContext, type PreparedChunk } from './prepare.js';
import { preparedChunks } from './prepare-stream.js';
import { storeUpload } from './storage.js';

export type BatchState = 'received' | 'needs_mapping' | 'checking' | 'awaiting_review' | 'failed' | 'approved' | 'returned';
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

const ZERO_COUNTS: BatchCounts = { rows: 0, accepted: 0, rejected: 0, duplicates: 0, conflicts: 0, ambiguous: 0, newStars: 0, matchedStars: 0, warnings: 0 };

export interface IntakeOptions {
  crossmatchArcsec: number;
  /** two epochs closer than this (days) are the same observation */
  mjdToleranceDays: number;
  /** files up to this size are checked before the upload request returns */
  syncBytes: number;
}

interface Proposal extends MappingProposal {
  preview: string[][];
  delimiter: string;
}

const parseJson = <T>(s: string | null | undefined, fallback: T): T => (s ? (JSON.parse(s) as T) : fallback);

/** Values equal to within floating-point noise of a CSV round trip. */
const same = (a: number | null, b: number | null) => (a === null || b === null ? a === b : Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b)));

/** `readDb` answers reads on a second connection, so they are not queued behind a long check. */
export function intakeService(db: Knex, config: Config, opts: IntakeOptions, readDb: Knex = db, onChecked?: (batch: { id: number; filename: string; uploadedBy: { name: string; email: string }; counts: BatchCounts }) => void) {
  const progress = new Map<number, { bytesDone: number; rowsDone: number }>();
  const running = new Map<number, Promise<void>>();

  async function batchRow(id: number, via: Knex = readDb) {
    const b = await via('batches').leftJoin('users', 'users.id', 'batches.uploaded_by').where('batches.id', id).first('batches.*', 'users.name as uploader_name', 'users.email as uploader_email');
    if (!b) throw notFound(`Batch ${id}`);
    return b;
  }

  type Batch = ReturnType<typeof present>;
  function present(b: Record<string, any>) {
    const live = progress.get(b.id);
    const proposal = parseJson<Proposal | null>(b.proposal_json, null);
    return {
      id: b.id,
      state: b.state as BatchState,
      filename: b.filename,
      sizeBytes: Number(b.size_bytes),
      sha256: b.sha256,
      instrument: b.instrument,
      uploadedBy: { id: b.uploaded_by, name: b.uploader_name, email: b.uploader_email },
      createdAt: b.created_at,
      updatedAt: b.updated_at,
      counts: parseJson<BatchCounts>(b.counts_json, ZERO_COUNTS),
      progress: { bytesDone: live?.bytesDone ?? Number(b.bytes_done), bytesTotal: Number(b.size_bytes), rowsDone: live?.rowsDone ?? Number(b.rows_done) },
      mapping: parseJson<ColumnMapping | null>(b.mapping_json, null),
      proposal: b.state === 'needs_mapping' && proposal ? { headers: proposal.headers, mapping: proposal.mapping, ambiguous: proposal.ambiguous, unmapped: proposal.unmapped, missing: proposal.missing, preview: proposal.preview } : null,
      failure: b.failure ?? null,
    };
  }

  function assertCanSee(user: SessionUser, b: { uploaded_by: number }) {
    if (hasRole(user, ['curator'])) return;
    if (user.role === 'observer' && b.uploaded_by === user.id) return;
    // modelers read approved data only; other observers' batches do not exist for them
    throw notFound('Batch');
  }

  async function resolveInstrument(code: string | undefined | null): Promise<string | null> {
    if (!code) return null;
    const inst = await db('instruments').whereRaw('lower(code) = ?', [code.trim().toLowerCase()]).first();
    if (!inst) {
      const known = (await db('instruments').pluck('code')).join(', ');
      throw badRequest(`Unknown instrument "${code}". Registered instruments: ${known}.`, { fields: [{ field: 'instrument', message: `expected one of ${known}` }] });
    }
    return inst.code;
  }

  /** Read the whole stored file and write every row, star and measurement in one transaction. */
  async function process(batchId: number): Promise<void> {
    const b = await db('batches').where({ id: batchId }).first();
    const proposal = parseJson<Proposal | null>(b.proposal_json, null);
    const mapping = parseJson<ColumnMapping>(b.mapping_json, {});
    if (!proposal) throw new Error(`batch ${batchId} has no header information`);
    const headers = proposal.headers;
    const headerOf = (canon: string) => mapping[canon] ?? canon;
    const instruments = new Map<string, { code: string; bands: string[] }>(
      (await db('instruments').select('code', 'bands')).map((i) => [String(i.code).toLowerCase(), { code: i.code, bands: String(i.bands).split(',') }]),
    );
    progress.set(batchId, { bytesDone: 0, rowsDone: 0 });
    const now = new Date().toISOString();
    try {
      await db.transaction(async (trx) => {
        const matcher = new CrossMatcher(trx, opts.crossmatchArcsec);
        let nextStarId = (await maxId(trx, 'stars')) + 1;
        // stars with ids from here on were made by this batch (ids are assigned in order inside the transaction)
        const firstNewStarId = nextStarId;
        const isNew = (id: number) => id < 0 || id >= firstNewStarId;
        let nextRowId = (await maxId(trx, 'batch_rows')) + 1;
        let nextMeasId = (await maxId(trx, 'measurements')) + 1;
        const counts: BatchCounts = { ...ZERO_COUNTS };
        const matched = new Set<number>();
        // Memory stays bounded by the chunk: earlier chunks' stars and measurements are already
        // written inside this transaction, so each chunk reads them back like catalog rows.
        let known = new Map<string, { id: number; mjd: number | null; q: number; u: number; q_err: number; u_err: number }[]>();

        const ctx: PrepareContext = { headers, mapping, batchInstrument: b.instrument, instruments: [...instruments], crossmatchArcsec: opts.crossmatchArcsec };
        const onBytes = (bytes: number) => {
          const p = progress.get(batchId);
          if (p) p.bytesDone = bytes;
        };
        for await (const c of preparedChunks(b.stored_path, proposal.delimiter, ctx, onBytes, Number(b.size_bytes) >= WORKER_MIN_BYTES)) {
          const n = c.n;
          const num = c.num;
          // 2. cross-match the good rows against the catalog (one prefetch per chunk)
          const queries: (MatchQuery | null)[] = new Array(n);
          for (let i = 0; i < n; i++) {
            if (!c.ok[i]) {
              queries[i] = null;
              continue;
            }
            const o = i * NUM_SLOTS;
            const q: MatchQuery = { raDeg: num[o + NUM.pos_ra], decDeg: num[o + NUM.pos_dec] };
            if (c.sourceId[i] !== null) q.sourceId = c.sourceId[i]!;
            else q.pixels = c.pix.subarray(c.pixStart[i], c.pixStart[i + 1]);
            queries[i] = q;
          }
          matcher.resetChunk();
          known = new Map();
          await matcher.prefetch(queries.filter((q): q is MatchQuery => q !== null));

          const newStars: unknown[][] = [];
          const rowsOut: unknown[][] = [];
          const measOut: unknown[][] = [];
          const toLoad = new Set<number>();
          const matches = queries.map((q) => {
            if (!q) return null;
            const m = matcher.match(q);
            if ((m.kind === 'source_id' || m.kind === 'position') && m.star.id > 0) toLoad.add(m.star.id);
            return m;
          });
          // existing measurements of the matched catalog stars, for de-duplication
          const ids = [...toLoad];
          for (const r of await selectWhereIn<{ id: number; star_id: number; band: string; instrument: string; mjd: number | null; q: number; u: number; q_err: number; u_err: number }>(trx, 'measurements', 'star_id', ids, ['id', 'star_id', 'band', 'instrument', 'mjd', 'q', 'u', 'q_err', 'u_err'])) {
            const k = `${r.star_id}|${r.band}|${r.instrument}`;
            const list = known.get(k);
            if (list) list.push(r);
            else known.set(k, [r]);
          }

          // 3. de-duplicate, build rows
          for (let i = 0; i < n; i++) {
            counts.rows++;
            const rowId = nextRowId++;
            const line = c.lines[i];
            const m = matches[i];
            if (!m) {
              counts.rejected++;
              rowsOut.push([rowId, batchId, line, c.valuesJson[i], 'rejected', c.errorsJson[i], c.warningsJson[i], null, null, null, null, null]);
              continue;
            }
            const o = i * NUM_SLOTS;
            let star: StarRef | null = null;
            let starMatch: string | null = null;
            if (m.kind === 'source_id' || m.kind === 'position') {
              star = m.star;
              starMatch = m.kind;
              if (!isNew(star.id)) matched.add(star.id);
            } else if (m.kind === 'none') {
              const plx = num[o + NUM.star_plx];
              const plxErr = num[o + NUM.star_plx_err];
              star = {
                id: nextStarId++, name: c.starName[i], source_id: c.sourceId[i],
                ra_deg: num[o + NUM.pos_ra], dec_deg: num[o + NUM.pos_dec], parallax_mas: Number.isNaN(plx) ? null : plx, parallax_err_mas: Number.isNaN(plxErr) ? null : plxErr,
                hpx15: num[o + NUM.star_hpx15],
              };
              starMatch = 'new';
              newStars.push([star.id, star.name, star.source_id, star.ra_deg, star.dec_deg, num[o + NUM.star_glon], num[o + NUM.star_glat], star.parallax_mas, star.parallax_err_mas, star.hpx15, now, b.uploaded_by]);
              matcher.remember({ ...star, id: -star.id }); // negative: created in this batch
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
            if (warningsJson !== null) counts.warnings++;
            const measId = nextMeasId++;
            const starId = star ? Math.abs(star.id) : null;
            let state: RowState = 'accepted';
            let measState = 'pending';
            let candidatesJson: string | null = null;
            let duplicateOf: number | null = null;
            const band = c.band[i]!;
            const instrument = c.instrument[i]!;
            const mjdRaw = num[o + NUM.mjd];
            const mjd = Number.isNaN(mjdRaw) ? null : mjdRaw;
            const q = num[o + NUM.q], u = num[o + NUM.u], qErr = num[o + NUM.q_err], uErr = num[o + NUM.u_err];
            if (m.kind === 'ambiguous') {
              state = 'ambiguous';
              measState = 'ambiguous';
              candidatesJson = JSON.stringify(m.candidates.map((x) => ({ id: Math.abs(x.star.id), name: x.star.name, sourceId: x.star.source_id, separationArcsec: Number(x.separationArcsec.toFixed(3)) })));
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
                  rowsOut.push([rowId, batchId, line, c.valuesJson[i], 'duplicate', null, warningsJson, null, starMatch, starId, null, duplicateOf]);
                  continue;
                }
                state = 'conflict';
                measState = 'conflict';
                counts.conflicts++;
              } else counts.accepted++;
              const entry = { id: measId, mjd, q, u, q_err: qErr, u_err: uErr };
              if (list) list.push(entry);
              else known.set(key, (list = [entry]));
            }
            rowsOut.push([rowId, batchId, line, c.valuesJson[i], state, null, warningsJson, candidatesJson, starMatch, starId, measId, duplicateOf]);
            measOut.push(measurementValues(c, i, measId, starId, batchId, rowId, measState, now, state === 'conflict' ? duplicateOf : null));
          }
          await bulkInsertRows(trx, 'stars', STAR_COLS, newStars);
          await bulkInsertRows(trx, 'batch_rows', ROW_COLS, rowsOut);
          await bulkInsertRows(trx, 'measurements', MEAS_COLS, measOut);
          const p = progress.get(batchId);
          if (p) p.rowsDone = counts.rows;
        }
        counts.matchedStars = matched.size;
        await syncIdSequences(trx, ['stars', 'batch_rows', 'measurements']);
        const pr = progress.get(batchId);
        await trx('batches').where({ id: batchId }).update({
          state: 'awaiting_review', counts_json: JSON.stringify(counts), bytes_done: Number(b.size_bytes), rows_done: pr?.rowsDone ?? counts.rows, updated_at: new Date().toISOString(), failure: null,
        });
        await recordAudit(trx, { actorId: b.uploaded_by, action: 'batch.checked', entityType: 'batch', entityId: batchId, after: counts });
      });
    } catch (e) {
      const message = e instanceof AppError ? e.message : `The batch could not be written (${String((e as Error).message).slice(0, 200)}); nothing of it was stored.`;
      if (!(e instanceof AppError)) console.error(e);
      await db.transaction(async (trx) => {
        await trx('batches').where({ id: batchId }).update({ state: 'failed', failure: message, updated_at: new Date().toISOString() });
        await recordAudit(trx, { actorId: b.uploaded_by, action: 'batch.failed', entityType: 'batch', entityId: batchId, after: { failure: message } });
      });
    } finally {
      progress.delete(batchId);
    }
    const done = await batchRow(batchId, db);
    if (done.state === 'awaiting_review') onChecked?.(present(done));
  }

  function start(batchId: number): Promise<void> {
    const p = process(batchId).finally(() => running.delete(batchId));
    running.set(batchId, p);
    return p;
  }

  return {
    present,

    /** Take an uploaded file (a temp path from multer) and make or find its batch. */
    async upload(user: SessionUser, file: { path: string; originalname: string }, fields: { instrument?: string; mapping?: string }): Promise<{ created: boolean; batch: Batch }> {
      let given: ColumnMapping = {};
      if (fields.mapping !== undefined && fields.mapping !== '') {
        try {
          given = JSON.parse(fields.mapping);
        } catch {
          fs.rmSync(file.path, { force: true });
          throw badRequest('The mapping field is not valid JSON: expected an object of canonical column → header, e.g. {"ra_deg":"RAJ2000"}.', { fields: [{ field: 'mapping', message: 'invalid JSON' }] });
        }
      }
      let instrument: string | null;
      let head;
      try {
        instrument = await resolveInstrument(fields.instrument);
        head = await sniffCsv(file.path);
        const problems = Object.keys(given).length ? checkMapping(given, head.headers) : [];
        if (problems.length) throw badRequest(problems.map((p) => p.message).join('; '), { fields: problems });
      } catch (e) {
        fs.rmSync(file.path, { force: true });
        throw e;
      }
      const stored = await storeUpload(file.path, config.dataDir);
      const existing = await db('batches').where({ sha256: stored.sha256 }).first();
      if (existing) {
        assertCanSee(user, existing);
        return { created: false, batch: present(await batchRow(existing.id)) };
      }
      const saved = instrument ? parseJson<ColumnMapping>((await db('instrument_mappings').where({ instrument }).first())?.mapping_json, {}) : {};
      const proposal = proposeMapping(head.headers, given, saved, { batchInstrument: instrument });
      const ready = proposal.missing.length === 0 && Object.keys(proposal.ambiguous).length === 0;
      const now = new Date().toISOString();
      const id = await db.transaction(async (trx) => {
        const [id] = await trx('batches').insert({
          uploaded_by: user.id, instrument, filename: file.originalname.slice(0, 255), size_bytes: stored.sizeBytes, sha256: stored.sha256, stored_path: stored.storedPath,
          state: ready ? 'checking' : 'needs_mapping', mapping_json: ready ? JSON.stringify(proposal.mapping) : null,
          proposal_json: JSON.stringify({ ...proposal, preview: head.preview, delimiter: head.delimiter }), counts_json: null, created_at: now, updated_at: now,
        });
        await recordAudit(trx, { actorId: user.id, action: 'batch.upload', entityType: 'batch', entityId: id, after: { filename: file.originalname, sha256: stored.sha256, sizeBytes: stored.sizeBytes, instrument } });
        return id as number;
      });
      if (ready) {
        const job = start(id);
        if (stored.sizeBytes <= opts.syncBytes) await job;
      }
      return { created: true, batch: present(await batchRow(id)) };
    },

    /** A person confirms or corrects the column mapping of a batch that needs one. */
    async confirmMapping(user: SessionUser, id: number, mapping: unknown, saveForInstrument: boolean): Promise<Batch> {
      const b = await batchRow(id);
      assertCanSee(user, b);
      if (b.state !== 'needs_mapping') throw new AppError(409, 'conflict', `Batch ${id} is ${b.state}; its mapping can only be changed while it needs one.`);
      const proposal = parseJson<Proposal>(b.proposal_json, null as never);
      const problems = checkMapping(mapping, proposal.headers);
      if (problems.length) throw badRequest(problems.map((p) => p.message).join('; '), { fields: problems });
      const m = mapping as ColumnMapping;
      const missing = missingColumns(m, { batchInstrument: b.instrument });
      if (missing.length) throw badRequest(`The mapping still lacks: ${missing.join('; ')}.`, { fields: missing.map((x) => ({ field: 'mapping', message: `missing ${x}` })) });
      await db.transaction(async (trx) => {
        await trx('batches').where({ id }).update({ state: 'checking', mapping_json: JSON.stringify(m), updated_at: new Date().toISOString() });
        await recordAudit(trx, { actorId: user.id, action: 'batch.mapping', entityType: 'batch', entityId: id, before: proposal.mapping, after: m });
        if (saveForInstrument && b.instrument) {
          const row = { instrument: b.instrument, mapping_json: JSON.stringify(m), saved_by: user.id, saved_at: new Date().toISOString() };
          await trx('instrument_mappings').insert(row).onConflict('instrument').merge();
          await recordAudit(trx, { actorId: user.id, action: 'instrument.mapping_saved', entityType: 'instrument', entityId: b.instrument, after: m });
        }
      });
      const job = start(id);
      if (Number(b.size_bytes) <= opts.syncBytes) await job;
      return present(await batchRow(id));
    },

    async get(user: SessionUser, id: number): Promise<Batch> {
      const b = await batchRow(id);
      assertCanSee(user, b);
      return present(b);
    },

    async list(user: SessionUser, q: { state?: string; limit: number; offset: number }) {
      const base = readDb('batches').leftJoin('users', 'users.id', 'batches.uploaded_by');
      if (!hasRole(user, ['curator'])) {
        if (user.role !== 'observer') return { batches: [], total: 0 };
        base.where('batches.uploaded_by', user.id);
      }
      if (q.state) base.where('batches.state', q.state);
      const [{ n }] = await base.clone().count({ n: '*' });
      const rows = await base.orderBy('batches.id', 'desc').limit(q.limit).offset(q.offset).select('batches.*', 'users.name as uploader_name', 'users.email as uploader_email');
      return { batches: rows.map(present), total: Number(n) };
    },

    async rows(user: SessionUser, id: number, q: { state?: string; limit: number; offset: number }) {
      const b = await batchRow(id);
      assertCanSee(user, b);
      const base = readDb('batch_rows').where('batch_rows.batch_id', id);
      if (q.state) base.where('batch_rows.state', q.state);
      const [{ n }] = await base.clone().count({ n: '*' });
      const rows = await base
        .leftJoin('measurements', 'measurements.batch_row_id', 'batch_rows.id')
        .leftJoin('stars', 'stars.id', 'batch_rows.star_id')
        .orderBy('batch_rows.line')
        .limit(q.limit)
        .offset(q.offset)
        .select('batch_rows.*', 'stars.name as star_name', 'stars.source_id as star_source_id', 'measurements.id as m_id', ...DERIVED_COLUMNS.map((c) => `measurements.${c} as m_${c}`));
      const headers = parseJson<Proposal | null>(b.proposal_json, null)?.headers ?? [];
      return { rows: rows.map((r) => presentRow(r, headers)), total: Number(n) };
    },

    async errorsCsv(user: SessionUser, id: number): Promise<string> {
      const b = await batchRow(id);
      assertCanSee(user, b);
      const rows = await readDb('batch_rows').where({ batch_id: id }).whereNotNull('errors_json').orderBy('line').select('line', 'state', 'errors_json');
      // cells starting with = + - @ tab CR are neutralised (csv.ts safeCsv): a curator opens this in a spreadsheet
      const out: unknown[][] = [['line', 'state', 'column', 'field', 'value', 'message']];
      for (const r of rows) for (const e of JSON.parse(r.errors_json) as RowIssue[]) out.push([r.line, r.state, e.column, e.field, e.value ?? '', e.message]);
      return safeCsv(out);
    },

    async raw(user: SessionUser, id: number) {
      const b = await batchRow(id);
      assertCanSee(user, b);
      return { path: b.stored_path as string, filename: b.filename as string };
    },

    /** After a restart: batches left mid-check were rolled back; check them again. */
    async resumeInterrupted(): Promise<number> {
      const stuck = await db('batches').where({ state: 'checking' }).pluck('id');
      for (const id of stuck) void start(id);
      return stuck.length;
    },

    /** Wait for background checks (tests, shutdown). */
    async idle(): Promise<void> {
      await Promise.all([...running.values()]);
    },
  };
}
export type IntakeService = ReturnType<typeof intakeService>;

const DERIVED_COLUMNS = ['band', 'instrument', 'mjd', 'q', 'u', 'q_err', 'u_err', 'p', 'p_err', 'p_debiased', 'theta_deg', 'theta_err_deg', 'q_gal', 'u_gal', 'theta_gal_deg', 'glon_deg', 'glat_deg', 'distance_pc', 'distance_lo_pc', 'distance_hi_pc', 'distance_method', 'state', 'flags_json'] as const;

/** Files at least this large are parsed and prepared on a worker thread (startup costs ~0.3 s). */
const WORKER_MIN_BYTES = 1 << 20;

const STAR_COLS = ['id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'parallax_mas', 'parallax_err_mas', 'hpx15', 'created_at', 'created_by'] as const;
const ROW_COLS = ['id', 'batch_id', 'line', 'values_json', 'state', 'errors_json', 'warnings_json', 'candidates_json', 'star_match', 'star_id', 'measurement_id', 'duplicate_of'] as const;
/** numeric columns of a measurement, stored from the prepared chunk (NaN = null) */
const MEAS_NUM = ['ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'hpx15', 'mjd', 'q', 'u', 'q_err', 'u_err', 'p', 'p_err', 'p_debiased', 'theta_deg', 'theta_err_deg', 'q_gal', 'u_gal', 'q_gal_err', 'u_gal_err', 'theta_gal_deg', 'parallax_mas', 'parallax_err_mas', 'distance_pc', 'distance_lo_pc', 'distance_hi_pc', 'ebv'] as const;
const MEAS_COLS = ['id', 'star_id', 'batch_id', 'batch_row_id', 'state', 'version', 'band', 'instrument', 'distance_method', 'flags_json', 'conflicts_with', 'created_at', 'updated_at', ...MEAS_NUM] as const;
const MEAS_SLOTS = MEAS_NUM.map((k) => NUM[k]);

function measurementValues(c: PreparedChunk, i: number, id: number, starId: number | null, batchId: number, rowId: number, state: string, now: string, conflictsWith: number | null): unknown[] {
  const v: unknown[] = [id, starId, batchId, rowId, state, 1, c.band[i], c.instrument[i], c.distanceMethod[i], c.flagsJson[i], conflictsWith, now, now];
  const o = i * NUM_SLOTS;
  for (const k of MEAS_SLOTS) {
    const x = c.num[o + k];
    v.push(Number.isNaN(x) ? null : x);
  }
  return v;
}

function presentRow(r: Record<string, any>, headers: string[]) {
  const derived = r.m_id
    ? Object.fromEntries(DERIVED_COLUMNS.filter((c) => c !== 'state' && c !== 'flags_json').map((c) => [c, r[`m_${c}`]]))
    : null;
  return {
    id: r.id,
    line: r.line,
    state: r.state as RowState,
    errors: r.errors_json ? JSON.parse(r.errors_json) : [],
    warnings: r.warnings_json ? JSON.parse(r.warnings_json) : [],
    values: Object.fromEntries(headers.map((h, i) => [h, (JSON.parse(r.values_json) as string[])[i] ?? ''])),
    star: r.star_id ? { id: r.star_id, name: r.star_name, sourceId: r.star_source_id, match: r.star_match } : null,
    candidates: r.candidates_json ? JSON.parse(r.candidates_json) : [],
    measurementId: r.m_id ?? null,
    measurementState: r.m_state ?? null,
    duplicateOf: r.duplicate_of ?? null,
    flags: r.m_flags_json ? JSON.parse(r.m_flags_json) : [],
    derived,
  };
}
