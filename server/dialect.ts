import { createRequire } from 'node:module';
import type { Knex } from 'knex';

// Write transactions begin IMMEDIATE: with a background check committing short transactions on
// its own connection, a deferred transaction that reads and then writes could find its snapshot
// stale and fail at once (SQLITE_BUSY, no retry). IMMEDIATE takes the write lock up front and
// waits for it (busy_timeout) instead.
{
  const SqliteTransaction = createRequire(import.meta.url)('knex/lib/dialects/sqlite3/execution/sqlite-transaction.js') as { prototype: { begin(conn: unknown): unknown; query(conn: unknown, sql: string): unknown } };
  SqliteTransaction.prototype.begin = function begin(conn: unknown) {
    return this.query(conn, 'BEGIN IMMEDIATE;');
  };
}

/**
 * The one place that knows which SQL engine is underneath. Everything else uses portable Knex
 * query building; anything engine-specific (pragmas, upsert quirks, JSON functions) goes here.
 */
export function sqliteConnectionOptions(filename: string, opts: { role?: 'request' | 'background'; cacheMb?: number } = {}): Knex.Config {
  // Checkpoints (copying the WAL into the database file) run inside the COMMIT that crosses the
  // threshold. A connection of the request thread never runs them (a session write would copy a
  // background check's pages while a person waits); background connections do, in large steps
  // (after their COMMIT has released the write lock; a page rewritten by many short transactions
  // is copied once per checkpoint, so fewer, larger ones cost less); checkpointIdle() runs the
  // small remainder when nothing is being checked.
  const autoCheckpoint = opts.role === 'background' ? 40_000 : 0;
  return {
    client: 'better-sqlite3',
    connection: { filename },
    useNullAsDefault: true,
    pool: {
      min: 1,
      max: 1,
      afterCreate(conn: { pragma: (s: string) => unknown }, done: (err: Error | null, conn: unknown) => void) {
        conn.pragma('journal_mode = WAL');
        conn.pragma('foreign_keys = ON');
        conn.pragma('busy_timeout = 10000');
        conn.pragma('synchronous = NORMAL');
        // the index pages a large batch touches stay cached: 64 MiB, 128 MiB on a background
        // (intake) connection, whose random index inserts otherwise miss the cache on every row
        conn.pragma(`cache_size = ${opts.cacheMb ? -opts.cacheMb * 1024 : opts.role === 'background' ? -131072 : -65536}`);
        if (filename !== ':memory:') conn.pragma(`wal_autocheckpoint = ${autoCheckpoint}`);
        done(null, conn);
      },
    },
  };
}

export function isSqlite(db: Knex): boolean {
  return /sqlite/.test(String(db.client.config.client));
}

/** Largest number of bound parameters in one statement that every supported engine takes. */
export const MAX_BIND_PARAMS = 32_000;

/** Highest id in a table (0 when empty), for assigning ids explicitly inside a write transaction. */
export async function maxId(db: Knex | Knex.Transaction, table: string): Promise<number> {
  const r = await db(table).max({ m: 'id' }).first();
  return Number(r?.m ?? 0);
}

/**
 * After inserting rows with explicit ids: PostgreSQL sequences must be moved past them;
 * SQLite's AUTOINCREMENT table follows by itself.
 */
export async function syncIdSequences(db: Knex | Knex.Transaction, tables: string[]): Promise<void> {
  if (isSqlite(db as Knex)) return;
  for (const t of tables) await db.raw(`SELECT setval(pg_get_serial_sequence(?, 'id'), COALESCE((SELECT MAX(id) FROM ??), 1))`, [t, t]);
}

type Sqlite = import('better-sqlite3').Database;
type Statement = import('better-sqlite3').Statement;
const statementCache = new WeakMap<object, Map<string, Statement>>();

/** The better-sqlite3 handle under a Knex instance or transaction (SQLite only). */
async function sqliteHandle(db: Knex | Knex.Transaction): Promise<Sqlite> {
  const client = (db as unknown as { client: { acquireConnection(): Promise<Sqlite>; releaseConnection(c: Sqlite): Promise<void> } }).client;
  const conn = await client.acquireConnection();
  // outside a transaction: give the connection back to the pool at once; callers use the
  // handle synchronously (better-sqlite3), so no other query can run on it meanwhile
  if (!(db as Knex.Transaction).isTransaction) await client.releaseConnection(conn);
  return conn;
}

async function cachedStatement(db: Knex | Knex.Transaction, sql: string): Promise<{ conn: Sqlite; stmt: Statement }> {
  const conn = await sqliteHandle(db);
  let cache = statementCache.get(conn);
  if (!cache) statementCache.set(conn, (cache = new Map()));
  let stmt = cache.get(sql);
  if (!stmt) cache.set(sql, (stmt = conn.prepare(sql)));
  return { conn, stmt };
}

const sqliteValue = (v: unknown) => (v === undefined ? null : typeof v === 'boolean' ? (v ? 1 : 0) : v);

/**
 * Insert many rows (all with the same keys). SQLite: one prepared statement run per row on the
 * transaction's own connection (much faster than compound multi-row INSERTs); other engines:
 * multi-row INSERTs in chunks under the bound-parameter limit.
 */
export async function bulkInsert(db: Knex | Knex.Transaction, table: string, rows: Record<string, unknown>[]): Promise<void> {
  if (!rows.length) return;
  const cols = Object.keys(rows[0]);
  if (isSqlite(db as Knex)) {
    const { stmt } = await cachedStatement(db, `INSERT INTO "${table}" (${cols.map((c) => `"${c}"`).join(',')}) VALUES (${cols.map(() => '?').join(',')})`);
    const vals = new Array(cols.length);
    for (const r of rows) {
      for (let i = 0; i < cols.length; i++) vals[i] = sqliteValue(r[cols[i]]);
      stmt.run(vals);
    }
    return;
  }
  const chunk = Math.max(1, Math.min(5000, Math.floor(MAX_BIND_PARAMS / cols.length)));
  for (let i = 0; i < rows.length; i += chunk) await db(table).insert(rows.slice(i, i + chunk));
}

/**
 * Insert many rows given as value arrays in the order of `cols` (values: null, number or
 * string). Same engine paths as bulkInsert, without building an object per row.
 */
export async function bulkInsertRows(db: Knex | Knex.Transaction, table: string, cols: readonly string[], rows: unknown[][]): Promise<void> {
  if (!rows.length) return;
  if (isSqlite(db as Knex)) {
    const { stmt } = await cachedStatement(db, `INSERT INTO "${table}" (${cols.map((c) => `"${c}"`).join(',')}) VALUES (${cols.map(() => '?').join(',')})`);
    for (const r of rows) stmt.run(r);
    return;
  }
  await bulkInsert(db, table, rows.map((r) => Object.fromEntries(cols.map((c, i) => [c, r[i]]))));
}

/** selectWhereIn, answering value arrays in the order of `cols` (no object per row). */
export async function selectRowsWhereIn(db: Knex | Knex.Transaction, table: string, column: string, values: (string | number)[], cols: string[]): Promise<unknown[][]> {
  if (!values.length) return [];
  if (isSqlite(db as Knex)) {
    const { stmt } = await cachedStatement(db, `SELECT ${cols.map((c) => `"${c}"`).join(',')} FROM "${table}" WHERE "${column}" IN (SELECT value FROM json_each(?))`);
    return stmt.raw(true).all(JSON.stringify(values)) as unknown[][];
  }
  return (await selectWhereIn<Record<string, unknown>>(db, table, column, values, cols)).map((r) => cols.map((c) => r[c]));
}

/**
 * Rows whose integer `column` lies in one of the inclusive, disjoint ranges [lo, hi] (flat
 * array lo0, hi0, lo1, hi1, …), as value arrays in the order of `cols`. One index seek per range.
 */
export async function selectRowsInRanges(db: Knex | Knex.Transaction, table: string, column: string, ranges: number[], cols: string[]): Promise<unknown[][]> {
  if (!ranges.length) return [];
  if (isSqlite(db as Knex)) {
    const { stmt } = await cachedStatement(db, `SELECT ${cols.map((c) => `t."${c}"`).join(',')} FROM json_each(?) AS j CROSS JOIN "${table}" AS t WHERE t."${column}" BETWEEN json_extract(j.value, '$[0]') AND json_extract(j.value, '$[1]')`);
    const pairs: number[][] = [];
    for (let i = 0; i < ranges.length; i += 2) pairs.push([ranges[i], ranges[i + 1]]);
    return stmt.raw(true).all(JSON.stringify(pairs)) as unknown[][];
  }
  const out: unknown[][] = [];
  for (let i = 0; i < ranges.length; i += 2000) {
    const q = db(table).select(cols);
    for (let k = i; k < Math.min(ranges.length, i + 2000); k += 2) q.orWhereBetween(column, [ranges[k], ranges[k + 1]]);
    for (const r of (await q) as Record<string, unknown>[]) out.push(cols.map((c) => r[c]));
  }
  return out;
}

/**
 * SELECT cols FROM table WHERE column IN (values), for long value lists. SQLite: one prepared
 * statement over json_each(?); other engines: chunked whereIn.
 */
export async function selectWhereIn<T = Record<string, unknown>>(db: Knex | Knex.Transaction, table: string, column: string, values: (string | number)[], cols: string[]): Promise<T[]> {
  if (!values.length) return [];
  if (isSqlite(db as Knex)) {
    const { stmt } = await cachedStatement(db, `SELECT ${cols.map((c) => `"${c}"`).join(',')} FROM "${table}" WHERE "${column}" IN (SELECT value FROM json_each(?))`);
    return stmt.all(JSON.stringify(values)) as T[];
  }
  const out: T[] = [];
  for (let i = 0; i < values.length; i += 5000) out.push(...((await db(table).whereIn(column, values.slice(i, i + 5000)).select(cols)) as T[]));
  return out;
}

/**
 * Call `each` with every row of a SELECT as a value array, without holding all rows in memory
 * (SQLite: a statement iterator; other engines: one query).
 */
export async function iterateRows(db: Knex | Knex.Transaction, sql: string, params: unknown[], each: (row: unknown[]) => void): Promise<void> {
  if (isSqlite(db as Knex)) {
    const { stmt } = await cachedStatement(db, sql);
    for (const r of stmt.raw(true).iterate(...params) as IterableIterator<unknown[]>) each(r);
    return;
  }
  const res = (await db.raw(sql, params as Knex.RawBinding[])) as { rows: Record<string, unknown>[] };
  for (const r of res.rows) each(Object.values(r));
}

/**
 * SQLite: turn the checking of foreign keys on this (background) connection off or on. A batch
 * check writes its new stars last (sorted on the sky, so their index pages are written once)
 * after the rows that point at them; all of it stays invisible until the batch flips. Other
 * engines keep their checks (and the caller writes stars first).
 */
export async function setForeignKeyChecks(db: Knex, on: boolean): Promise<boolean> {
  if (!isSqlite(db)) return false;
  await db.raw(`PRAGMA foreign_keys = ${on ? 'ON' : 'OFF'}`);
  return true;
}

export interface WriteStep {
  table: string;
  cols: readonly string[];
  rows: unknown[][];
}

const sleepSync = (ms: number) => Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);

/**
 * Write rows (steps in order, e.g. stars before the rows that point at them) in short
 * transactions: each commits after about `budgetMs` of work, so the single SQLite writer is free
 * in between for everyone else (sign-ins, session writes, curator edits). For a background
 * check on its own connection: a reader never sees a half-written step only because the rows
 * belong to a batch that is not visible yet. `extra` runs inside the last transaction (progress).
 */
export async function writeInShortTransactions(db: Knex, steps: WriteStep[], budgetMs = 25, extra: { sql: string; params: unknown[] }[] = []): Promise<void> {
  if (!isSqlite(db)) {
    await db.transaction(async (trx) => {
      for (const s of steps) await bulkInsertRows(trx, s.table, s.cols, s.rows);
      for (const e of extra) await trx.raw(e.sql, e.params as Knex.RawBinding[]);
    });
    return;
  }
  const client = (db as unknown as { client: { acquireConnection(): Promise<Sqlite>; releaseConnection(c: Sqlite): Promise<void> } }).client;
  const conn = await client.acquireConnection();
  try {
    writeSync(conn, steps, budgetMs, extra);
  } finally {
    await client.releaseConnection(conn);
  }
}

/** Time spent in writeInShortTransactions (ms) and its commits, for profiling. */
export const writeStats = { insertMs: 0, commitMs: 0, commits: 0, rows: 0 };

function writeSync(conn: Sqlite, steps: WriteStep[], budgetMs: number, extra: { sql: string; params: unknown[] }[]): void {
  let cache = statementCache.get(conn);
  if (!cache) statementCache.set(conn, (cache = new Map()));
  const stmtFor = (s: WriteStep) => {
    const sql = `INSERT INTO "${s.table}" (${s.cols.map((c) => `"${c}"`).join(',')}) VALUES (${s.cols.map(() => '?').join(',')})`;
    let st = cache!.get(sql);
    if (!st) cache!.set(sql, (st = conn.prepare(sql)));
    return st;
  };
  let open = false;
  let t0 = 0;
  const begin = () => {
    conn.exec('BEGIN IMMEDIATE');
    open = true;
    t0 = performance.now();
  };
  try {
    begin();
    for (const s of steps) {
      const st = stmtFor(s);
      for (let i = 0; i < s.rows.length; i++) {
        st.run(s.rows[i]);
        if ((i & 127) === 127 && performance.now() - t0 > budgetMs) {
          const tc = performance.now();
          writeStats.insertMs += tc - t0;
          conn.exec('COMMIT');
          writeStats.commitMs += performance.now() - tc;
          writeStats.commits++;
          open = false;
          sleepSync(2); // let a waiting writer in
          begin();
        }
      }
    }
    for (const e of extra) conn.prepare(e.sql).run(e.params.map(sqliteValue));
    const tc = performance.now();
    writeStats.insertMs += tc - t0;
    conn.exec('COMMIT');
    writeStats.commitMs += performance.now() - tc;
    writeStats.commits++;
    for (const s of steps) writeStats.rows += s.rows.length;
    open = false;
  } finally {
    if (open) conn.exec('ROLLBACK');
  }
}

/** Delete rows matching `where` (with its bindings) in short transactions of at most `chunk` rows. */
export async function deleteInShortTransactions(db: Knex, table: string, where: string, bindings: unknown[], chunk = 5000): Promise<number> {
  let total = 0;
  for (;;) {
    const r = await db.raw(`DELETE FROM "${table}" WHERE id IN (SELECT id FROM "${table}" WHERE ${where} LIMIT ${chunk})`, bindings as Knex.RawBinding[]);
    const n = isSqlite(db) ? Number((r as { changes?: number }).changes ?? 0) : Number((r as { rowCount?: number }).rowCount ?? 0);
    total += n;
    if (n < chunk) return total;
  }
}

/**
 * Reserve `n` consecutive ids of an AUTOINCREMENT table (a short write of its own), so a long
 * job can assign ids ahead of writing while other connections keep inserting. Returns the first.
 */
export async function reserveIds(db: Knex, table: string, n: number): Promise<number> {
  if (!isSqlite(db)) {
    const r = await db.raw(`SELECT nextval(pg_get_serial_sequence(?, 'id')) AS first, setval(pg_get_serial_sequence(?, 'id'), currval(pg_get_serial_sequence(?, 'id')) + ? - 1) AS last`, [table, table, table, n]);
    return Number((r as { rows: { first: number }[] }).rows[0].first);
  }
  return db.transaction(async (trx) => {
    const seq = await trx('sqlite_sequence').where({ name: table }).first('seq');
    const [{ m }] = await trx(table).max({ m: 'id' });
    const last = Math.max(Number(seq?.seq ?? 0), Number(m ?? 0));
    if (seq) await trx('sqlite_sequence').where({ name: table }).update({ seq: last + n });
    else await trx('sqlite_sequence').insert({ name: table, seq: last + n });
    return last + 1;
  });
}

/** Copy the WAL into the database file without waiting for anyone (SQLite; a no-op elsewhere). */
export async function checkpointPassive(db: Knex): Promise<void> {
  if (isSqlite(db)) await db.raw('PRAGMA wal_checkpoint(PASSIVE)');
}
