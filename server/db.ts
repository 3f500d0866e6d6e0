import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import knexFactory, { type Knex } from 'knex';
import { sqliteConnectionOptions } from './dialect.js';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
export const MIGRATIONS_DIR = path.join(root, 'migrations');

export type Db = Knex;

/** Open the embedded SQLite database (creating its folder). */
export function openDb(dbFile: string, opts: { role?: 'request' | 'background'; cacheMb?: number } = {}): Db {
  if (dbFile !== ':memory:') fs.mkdirSync(path.dirname(dbFile), { recursive: true });
  return knexFactory(sqliteConnectionOptions(dbFile, opts));
}

/**
 * Reads migrations/*.ts in name order and imports them ourselves, so the same source works
 * under tsx, under vitest and from the knex CLI config.
 */
export class FolderMigrationSource implements Knex.MigrationSource<string> {
  constructor(private readonly dir = MIGRATIONS_DIR) {}
  async getMigrations(): Promise<string[]> {
    return fs.readdirSync(this.dir).filter((f) => /^\d{3}_[\w-]+\.ts$/.test(f)).sort();
  }
  getMigrationName(name: string): string {
    return name;
  }
  async getMigration(name: string): Promise<Knex.Migration> {
    return import(pathToFileURL(path.join(this.dir, name)).href);
  }
}

export async function migrateLatest(db: Db): Promise<void> {
  await db.migrate.latest({ migrationSource: new FolderMigrationSource() });
}
