// `npm run restore -- DIR`: restore a backup made by `npm run backup` onto an EMPTY data folder
// (STARVEIL_DATA_DIR, and STARVEIL_DB which must not exist yet). Every checksum is verified first.
import path from 'node:path';
import { loadConfig } from '../server/config.js';
import { restore, BackupError } from '../server/backup/index.js';

const dir = process.argv[2];
if (!dir || process.argv.length > 3) {
  console.error('usage: STARVEIL_DATA_DIR=/new/folder npm run restore -- DIR');
  process.exit(2);
}
const config = loadConfig();
try {
  const r = restore({ backupDir: path.resolve(dir), dbFile: config.dbFile, dataDir: config.dataDir, log: (l) => console.log(l) });
  console.log(`restored: ${Object.values(r.tables).reduce((a, b) => a + b, 0)} rows, ${r.uploads} uploads; start Starveil with the same STARVEIL_DB and STARVEIL_DATA_DIR`);
} catch (e) {
  console.error(e instanceof BackupError ? `restore refused: ${e.message}` : e);
  process.exit(1);
}
