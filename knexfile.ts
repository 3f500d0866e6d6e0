// Knex configuration for the knex CLI and scripts (`npm run migrate`). The app itself reads the same
// settings through server/config.ts and server/db.ts.
import { loadConfig } from './server/config.js';
import { sqliteConnectionOptions } from './server/dialect.js';
import { FolderMigrationSource } from './server/db.js';

const config = loadConfig();

export default {
  ...sqliteConnectionOptions(config.dbFile),
  migrations: { migrationSource: new FolderMigrationSource() },
};
