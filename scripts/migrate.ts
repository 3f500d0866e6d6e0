// Bring the database named by STARVEIL_DB (default data/starveil.sqlite) to the latest migration.
import { loadConfig } from '../server/config.js';
import { openDb, migrateLatest } from '../server/db.js';

const config = loadConfig();
const db = openDb(config.dbFile);
await migrateLatest(db);
console.log(`migrated ${config.dbFile}`);
await db.destroy();
