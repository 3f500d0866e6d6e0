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
