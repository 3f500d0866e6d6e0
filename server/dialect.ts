import type { Knex } from 'knex';

/**
 * The one place that knows which SQL engine is underneath. Everything else uses portable Knex
 * query building; anything engine-specific (pragmas, upsert quirks, JSON functions) goes here.
 */
export function sqliteConnectionOptions(filename: string): Knex.Config {
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
        conn.pragma('busy_timeout = 5000');
        conn.pragma('synchronous = NORMAL');
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

/** Multi-row INSERTs in chunks that stay under the engine's bound-parameter limit. */
export async function bulkInsert(db: Knex | Knex.Transaction, table: string, rows: Record<string, unknown>[]): Promise<void> {
  if (!rows.length) return;
  const perRow = Object.keys(rows[0]).length;
  // SQLite compiles a multi-row insert as a compound SELECT, limited to 500 terms
  const chunk = Math.max(1, Math.min(isSqlite(db as Knex) ? 450 : 5000, Math.floor(MAX_BIND_PARAMS / perRow)));
  for (let i = 0; i < rows.length; i += chunk) await db(table).insert(rows.slice(i, i + chunk));
}
