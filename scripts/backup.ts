// `npm run backup -- DIR`: an online, consistent copy of the Starveil named by STARVEIL_DB and
// STARVEIL_DATA_DIR (safe while the server runs): the database through SQLite's backup API, the
// stored uploads it refers to, and DIR/manifest.json with sha256 checksums. DIR must be new or empty.
import path from 'node:path';
import { loadConfig } from '../server/config.js';
import { backup, BackupError } from '../server/backup/index.js';

const dir = process.argv[2];
if (!dir || process.argv.length > 3) {
  console.error('usage: npm run backup -- DIR   (DIR new or empty; reads STARVEIL_DB and STARVEIL_DATA_DIR)');
  process.exit(2);
}
const config = loadConfig();
const started = Date.now();
try {
  const m = await backup({ dbFile: config.dbFile, dataDir: config.dataDir, outDir: path.resolve(dir), log: (l) => console.log(l) });
  const rows = Object.values(m.database.tables).reduce((a, b) => a + b, 0);
  console.log(`backup of ${config.dbFile} written to ${path.resolve(dir)} in ${((Date.now() - started) / 1000).toFixed(1)} s: ${rows} rows, ${m.uploads.length} uploads; checksums in manifest.json`);
} catch (e) {
  console.error(e instanceof BackupError ? `backup failed: ${e.message}` : e);
  process.exit(1);
}
