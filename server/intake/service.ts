import fs from 'node:fs';
import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import type { Config } from '../config.js';
import { AppError, badRequest, notFound } from '../errors.js';
import type { SessionUser } from '../auth/roles.js';
import { hasRole } from '../auth/roles.js';
import { checkMapping, DERIVED_COLUMNS, missingColumns, proposeMapping, type ColumnMapping, type MappingProposal, type RowIssue } from '../measurements/service.js';
import { sniffCsv } from './csv.js';
import { safeCsv } from '../lib/csv.js';
import { storeUpload } from './storage.js';
import { ZERO_COUNTS, type BatchCounts, type RowState } from './check.js';
import { CheckRunner } from './runner.js';
import { settlingOf } from '../lib/settling.js';
import { VISIBLE_BATCH_STATES } from '../lib/visibility.js';

export type { BatchCounts, RowState } from './check.js';

export type { BatchState } from '../lib/visibility.js';
import type { BatchState } from '../lib/visibility.js';

export interface IntakeOptions {
  crossmatchArcsec: number;
  /** two epochs closer than this (days) are the same observation */
  mjdToleranceDays: number;
  /** where the check appends its timers (profiling), or null */
  timingFile?: string | null;
  /** files up to this size are checked before the upload request returns */
  syncBytes: number;
}

interface Proposal extends MappingProposal {
  preview: string[][];
  delimiter: string;
}

const parseJson = <T>(s: string | null | undefined, fallback: T): T => (s ? (JSON.parse(s) as T) : fallback);


/** `readDb` answers reads on a second connection, so they are not queued behind a long check. */
export function intakeService(db: Knex, config: Config, opts: IntakeOptions, readDb: Knex = db, onChecked?: (batch: { id: number; filename: string; uploadedBy: { name: string; email: string }; counts: BatchCounts }) => unknown) {

  async function batchRow(id: number, via: Knex = readDb) {
    const b = await via('batches').leftJoin('users', 'users.id', 'batches.uploaded_by').where('batches.id', id).first('batches.*', 'users.name as uploader_name', 'users.email as uploader_email');
    if (!b) throw notFound(`Batch ${id}`);
    return b;
  }

  type Batch = ReturnType<typeof present>;
  function present(b: Record<string, any>) {
    const live = b.state === 'checking' ? runner.live.get(b.id) : undefined;
    const rowsTotal = live?.rowsTotal ?? (b.rows_total === null || b.rows_total === undefined ? null : Number(b.rows_total));
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
      progress: {
        bytesDone: Math.max(live?.bytesDone ?? 0, Number(b.bytes_done)), bytesTotal: Number(b.size_bytes), rowsDone: Math.max(live?.rowsDone ?? 0, Number(b.rows_done)), rowsTotal,
        attempts: Number(b.check_attempts ?? 0) + (b.state === 'checking' || b.rows_total !== null ? 1 : 0), note: b.check_note ?? null,
      },
      mapping: parseJson<ColumnMapping | null>(b.mapping_json, null),
      proposal: b.state === 'needs_mapping' && proposal ? { headers: proposal.headers, mapping: proposal.mapping, ambiguous: proposal.ambiguous, unmapped: proposal.unmapped, missing: proposal.missing, preview: proposal.preview } : null,
      failure: b.failure ?? null,
      /** a large approve or return being applied in short transactions (null otherwise) */
      settling: settlingOf(b),
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
      throw badRequest(`Unknown instrument "${code}". Registered instruments: ${known}. An admin can register a new one on the Instruments page (POST /api/v1/instruments).`, { fields: [{ field: 'instrument', message: `expected one of ${known}` }] });
    }
    return inst.code;
  }

  const runner = new CheckRunner(db, config.dbFile, { crossmatchArcsec: opts.crossmatchArcsec, mjdToleranceDays: opts.mjdToleranceDays, timingFile: opts.timingFile ?? null }, async (batchId) => {
    const done = await batchRow(batchId, db);
    if (done.state === 'awaiting_review') await onChecked?.(present(done));
  });

  /** Hand the batch to the intake worker thread; the returned promise ends with its check. */
  function start(batchId: number): Promise<void> {
    return runner.enqueue(batchId);
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
      if (existing && existing.state !== 'failed') {
        assertCanSee(user, existing);
        return { created: false, batch: present(await batchRow(existing.id)) };
      }
      if (existing) assertCanSee(user, existing);
      const saved = instrument ? parseJson<ColumnMapping>((await db('instrument_mappings').where({ instrument }).first())?.mapping_json, {}) : {};
      const proposal = proposeMapping(head.headers, given, saved, { batchInstrument: instrument });
      const ready = proposal.missing.length === 0 && Object.keys(proposal.ambiguous).length === 0;
      const now = new Date().toISOString();
      const fresh = {
        instrument, filename: file.originalname.slice(0, 255), size_bytes: stored.sizeBytes, stored_path: stored.storedPath,
        state: ready ? 'checking' : 'needs_mapping', mapping_json: ready ? JSON.stringify(proposal.mapping) : null,
        proposal_json: JSON.stringify({ ...proposal, preview: head.preview, delimiter: head.delimiter }), counts_json: null, updated_at: now,
      };
      const id = await db.transaction(async (trx) => {
        if (existing) {
          // the same bytes as a batch that failed: check them again under the same batch
          await trx('batches').where({ id: existing.id, state: 'failed' }).update({ ...fresh, failure: null, rows_done: 0, bytes_done: 0, rows_total: null, check_attempts: 0, check_note: `Uploaded again after a failed check (${String(existing.failure ?? '').slice(0, 300)})` });
          await recordAudit(trx, { actorId: user.id, action: 'batch.retry', entityType: 'batch', entityId: existing.id, before: { state: 'failed', failure: existing.failure }, after: { filename: file.originalname, instrument } });
          return existing.id as number;
        }
        const [id] = await trx('batches').insert({ ...fresh, uploaded_by: user.id, sha256: stored.sha256, created_at: now });
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
      // rows of a batch still being checked (or failed) are not shown: they may be half-written
      if (!(VISIBLE_BATCH_STATES as readonly string[]).includes(b.state)) return { rows: [], total: 0 };
      const base = readDb('batch_rows').where('batch_rows.batch_id', id);
      if (q.state) base.where('batch_rows.state', q.state);
      const [{ n }] = await base.clone().count({ n: '*' });
      const rows = await base
        // through the row's measurement_id (the primary key), not measurements.batch_row_id (no index: a scan per row)
        .leftJoin('measurements', 'measurements.id', 'batch_rows.measurement_id')
        .leftJoin('stars', 'stars.id', 'batch_rows.star_id')
        .leftJoin('measurements as dm', 'dm.id', 'batch_rows.duplicate_of')
        .leftJoin('batch_rows as dr', 'dr.id', 'dm.batch_row_id')
        .orderBy('batch_rows.line')
        .limit(q.limit)
        .offset(q.offset)
        .select('batch_rows.*', 'stars.name as star_name', 'stars.source_id as star_source_id', 'measurements.id as m_id', 'dr.line as dup_line', 'dr.batch_id as dup_batch_id', ...DERIVED_COLUMNS.map((c) => `measurements.${c} as m_${c}`));
      const headers = parseJson<Proposal | null>(b.proposal_json, null)?.headers ?? [];
      const forCurator = hasRole(user, ['curator']);
      return { rows: rows.map((r) => presentRow(r, headers, forCurator)), total: Number(n) };
    },

    async errorsCsv(user: SessionUser, id: number): Promise<string> {
      const b = await batchRow(id);
      assertCanSee(user, b);
      const visible = (VISIBLE_BATCH_STATES as readonly string[]).includes(b.state);
      const rows = !visible ? [] : await readDb('batch_rows').where({ batch_id: id }).whereNotNull('errors_json').orderBy('line').select('line', 'state', 'errors_json');
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

    /**
     * After a restart: a batch left `checking` may have rows written by the interrupted check
     * (invisible). They are discarded and the batch is checked again from its first line; its
     * progress note says so.
     */
    async resumeInterrupted(): Promise<number> {
      const stuck = await db('batches').where({ state: 'checking' }).select('id', 'rows_done', 'rows_total', 'check_attempts');
      for (const b of stuck) {
        if (runner.isQueued(b.id)) continue;
        const started = b.rows_total !== null;
        if (started) {
          const at = `row ${Number(b.rows_done).toLocaleString('en')}${b.rows_total ? ` of ${Number(b.rows_total).toLocaleString('en')}` : ''}`;
          await db('batches').where({ id: b.id }).update({
            check_attempts: Number(b.check_attempts) + 1, updated_at: new Date().toISOString(), rows_done: 0, bytes_done: 0,
            check_note: `A server restart interrupted the check at ${at}; what it had written was discarded and the batch is checked again from the first line.`,
          });
        }
        void start(b.id);
      }
      return stuck.length;
    },

    /** Wait for background checks (tests, shutdown). */
    async idle(): Promise<void> {
      await runner.idle();
    },

    /** A check is queued or running (the request thread then leaves WAL checkpoints to the worker). */
    busy(): boolean {
      return runner.busy();
    },

    /** End the worker thread (shutdown). */
    async close(): Promise<void> {
      await runner.close();
    },
  };
}
export type IntakeService = ReturnType<typeof intakeService>;

function presentRow(r: Record<string, any>, headers: string[], forCurator: boolean) {
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
    /** the line of this batch that the row repeats (null: it repeats or conflicts with another batch's measurement) */
    duplicateOfLine: r.dup_batch_id === r.batch_id && r.dup_line !== null && r.dup_line !== undefined ? r.dup_line : null,
    ...(forCurator ? { curatorNote: r.curator_note ?? null } : {}),
    flags: r.m_flags_json ? JSON.parse(r.m_flags_json) : [],
    derived,
  };
}
