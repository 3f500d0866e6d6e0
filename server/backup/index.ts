import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';

/**
 * Online backup and restore of a Starveil installation: the SQLite database through SQLite's own
 * backup API (a consistent snapshot while the server keeps writing) and the uploads that snapshot
 * refers to, kept as received, with a manifest of sha256 checksums.
 *
 * Layout of a backup folder:
 *   manifest.json         written last: its presence marks a complete backup
 *   starveil.sqlite       the snapshot
 *   uploads/ab/<sha>.csv  every stored upload the snapshot's batches name, relative to the data folder
 */
export const MANIFEST = 'manifest.json';
export const DB_NAME = 'starveil.sqlite';
export const FORMAT = 'starveil-backup/1';

export interface ManifestFile {
  /** path inside the backup folder (and inside the data folder after a restore), with / separators */
  path: string;
  sha256: string;
  bytes: number;
}
export interface BackupManifest {
  format: typeof FORMAT;
  createdAt: string;
  source: { dbFile: string; dataDir: string };
  database: ManifestFile & { tables: Record<string, number>; migrations: string[] };
  uploads: (ManifestFile & { batchIds: number[] })[];
}

export class BackupError extends Error {}

export function sha256File(file: string): { sha256: string; bytes: number } {
  const hash = crypto.createHash('sha256');
  const fd = fs.openSync(file, 'r');
  const buf = Buffer.allocUnsafe(1 << 20);
  let bytes = 0;
  try {
    for (;;) {
      const n = fs.readSync(fd, buf, 0, buf.length, null);
      if (n === 0) break;
      hash.update(buf.subarray(0, n));
      bytes += n;
    }
  } finally {
    fs.closeSync(fd);
  }
  return { sha256: hash.digest('hex'), bytes };
}

function isEmptyOrMissing(dir: string): boolean {
  return !fs.existsSync(dir) || (fs.statSync(dir).isDirectory() && fs.readdirSync(dir).length === 0);
}

/** Row count of every table of a database file (the migration bookkeeping tables included). */
export function tableCounts(db: Database.Database): Record<string, number> {
  const names = db.prepare("SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name").pluck().all() as string[];
  return Object.fromEntries(names.map((n) => [n, Number(db.prepare(`SELECT count(*) FROM "${n.replace(/"/g, '""')}"`).pluck().get())]));
}

/** Where an upload lives inside a backup: its path relative to the data folder, or uploads/<name> when it lies elsewhere. */
function relativeUploadPath(storedPath: string, dataDir: string): string {
  const rel = path.relative(dataDir, storedPath);
  const inside = rel && !rel.startsWith('..') && !path.isAbsolute(rel);
  return (inside ? rel : path.join('uploads', 'elsewhere', path.basename(storedPath))).split(path.sep).join('/');
}

/**
 * Take an online, consistent backup into `outDir` (created; must be empty). Safe while the server
 * runs: SQLite's backup API copies a snapshot page by page between the server's writes, restarting
 * if a write lands mid-copy, and uploads are immutable files named by their sha256.
 */
export async function backup(opts: { dbFile: string; dataDir: string; outDir: string; log?: (line: string) => void }): Promise<BackupManifest> {
  const { dbFile, dataDir, outDir } = opts;
  const log = opts.log ?? (() => {});
  if (!fs.existsSync(dbFile)) throw new BackupError(`There is no database at ${dbFile} (STARVEIL_DB).`);
  if (!isEmptyOrMissing(outDir)) throw new BackupError(`The backup folder ${outDir} is not empty; give a new or empty folder.`);
  fs.mkdirSync(outDir, { recursive: true });

  const snapshotFile = path.join(outDir, DB_NAME);
  const source = new Database(dbFile, { fileMustExist: true });
  try {
    source.pragma('busy_timeout = 10000');
    await source.backup(snapshotFile);
  } finally {
    source.close();
  }

  const snap = new Database(snapshotFile);
  let tables: Record<string, number>;
  let migrations: string[];
  let batches: { id: number; stored_path: string; sha256: string }[];
  try {
    // the copy is a database file of its own: no WAL to carry along
    snap.pragma('journal_mode = DELETE');
    const check = snap.pragma('quick_check', { simple: true });
    if (check !== 'ok') throw new BackupError(`The snapshot failed SQLite's quick_check: ${String(check)}`);
    tables = tableCounts(snap);
    migrations = tables.knex_migrations !== undefined ? (snap.prepare('SELECT name FROM knex_migrations ORDER BY id').pluck().all() as string[]) : [];
    batches = tables.batches !== undefined ? (snap.prepare('SELECT id, stored_path, sha256 FROM batches ORDER BY id').all() as typeof batches) : [];
  } finally {
    snap.close();
  }
  log(`database: ${Object.values(tables).reduce((a, b) => a + b, 0)} rows in ${Object.keys(tables).length} tables`);

  // the uploads the snapshot names (content-addressed, so one file may serve several batch rows)
  const byPath = new Map<string, { from: string; sha256: string; batchIds: number[] }>();
  for (const b of batches) {
    const rel = relativeUploadPath(b.stored_path, dataDir);
    const entry = byPath.get(rel) ?? { from: b.stored_path, sha256: b.sha256, batchIds: [] };
    entry.batchIds.push(b.id);
    byPath.set(rel, entry);
  }
  const uploads: BackupManifest['uploads'] = [];
  for (const [rel, u] of byPath) {
    if (!fs.existsSync(u.from)) throw new BackupError(`Batch ${u.batchIds.join(', ')} names the stored upload ${u.from}, which is missing; the backup is incomplete.`);
    const to = path.join(outDir, rel);
    fs.mkdirSync(path.dirname(to), { recursive: true });
    fs.copyFileSync(u.from, to);
    const got = sha256File(to);
    if (got.sha256 !== u.sha256) throw new BackupError(`The stored upload ${u.from} no longer has the checksum its batch recorded (${u.sha256}); got ${got.sha256}.`);
    uploads.push({ path: rel, ...got, batchIds: u.batchIds });
  }
  log(`uploads: ${uploads.length} files, ${uploads.reduce((a, u) => a + u.bytes, 0)} bytes`);

  const manifest: BackupManifest = {
    format: FORMAT,
    createdAt: new Date().toISOString(),
    source: { dbFile: path.resolve(dbFile), dataDir: path.resolve(dataDir) },
    database: { path: DB_NAME, ...sha256File(snapshotFile), tables, migrations },
    uploads,
  };
  const tmp = path.join(outDir, `${MANIFEST}.partial`);
  fs.writeFileSync(tmp, JSON.stringify(manifest, null, 2) + '\n');
  fs.renameSync(tmp, path.join(outDir, MANIFEST));
  return manifest;
}

/** Read a backup's manifest and check every file in it against its sha256 (before anything is written). */
export function verifyBackup(backupDir: string): BackupManifest {
  const file = path.join(backupDir, MANIFEST);
  if (!fs.existsSync(file)) throw new BackupError(`${backupDir} holds no ${MANIFEST}: not a Starveil backup, or one that did not finish.`);
  const manifest = JSON.parse(fs.readFileSync(file, 'utf8')) as BackupManifest;
  if (manifest.format !== FORMAT) throw new BackupError(`${file} is format ${JSON.stringify(manifest.format)}; this version restores ${FORMAT}.`);
  for (const f of [manifest.database, ...manifest.uploads]) {
    if (path.isAbsolute(f.path) || f.path.split('/').includes('..')) throw new BackupError(`The manifest names ${f.path}, outside the backup folder.`);
    const full = path.join(backupDir, f.path);
    if (!fs.existsSync(full)) throw new BackupError(`The backup is missing ${f.path}.`);
    const got = sha256File(full);
    if (got.sha256 !== f.sha256 || got.bytes !== f.bytes) throw new BackupError(`${f.path} does not match the manifest (sha256 ${got.sha256}, ${got.bytes} bytes; expected ${f.sha256}, ${f.bytes} bytes): the backup is damaged.`);
  }
  return manifest;
}

/**
 * Restore a backup onto an empty data folder: refuses a database file that exists or a data folder
 * with anything in it, verifies every checksum first, copies, points the batches at their uploads'
 * new place and checks the table counts against the manifest.
 */
export function restore(opts: { backupDir: string; dbFile: string; dataDir: string; log?: (line: string) => void }): { tables: Record<string, number>; uploads: number } {
  const { backupDir, dbFile, dataDir } = opts;
  const log = opts.log ?? (() => {});
  for (const f of [dbFile, `${dbFile}-wal`, `${dbFile}-shm`]) {
    if (fs.existsSync(f)) throw new BackupError(`${f} already exists; restore only onto an empty data folder (set STARVEIL_DB and STARVEIL_DATA_DIR to new places).`);
  }
  if (!isEmptyOrMissing(dataDir)) throw new BackupError(`The data folder ${dataDir} is not empty; restore only onto an empty data folder.`);
  const manifest = verifyBackup(backupDir);
  log(`verified ${1 + manifest.uploads.length} files against ${MANIFEST}`);

  fs.mkdirSync(dataDir, { recursive: true });
  for (const u of manifest.uploads) {
    const to = path.join(dataDir, u.path);
    fs.mkdirSync(path.dirname(to), { recursive: true });
    fs.copyFileSync(path.join(backupDir, u.path), to, fs.constants.COPYFILE_EXCL);
    if (sha256File(to).sha256 !== u.sha256) throw new BackupError(`Copying ${u.path} changed its bytes.`);
  }
  fs.mkdirSync(path.dirname(dbFile), { recursive: true });
  const partial = `${dbFile}.restoring`;
  fs.copyFileSync(path.join(backupDir, manifest.database.path), partial, fs.constants.COPYFILE_EXCL);
  const db = new Database(partial);
  let tables: Record<string, number>;
  try {
    const setPath = db.prepare('UPDATE batches SET stored_path = ? WHERE id = ?');
    db.transaction(() => {
      for (const u of manifest.uploads) for (const id of u.batchIds) setPath.run(path.resolve(dataDir, u.path), id);
    })();
    tables = tableCounts(db);
  } finally {
    db.close();
  }
  for (const [name, n] of Object.entries(manifest.database.tables)) {
    if (tables[name] !== n) throw new BackupError(`After the restore table ${name} holds ${tables[name]} rows; the manifest says ${n}.`);
  }
  fs.renameSync(partial, dbFile);
  log(`restored ${Object.keys(tables).length} tables and ${manifest.uploads.length} uploads to ${dbFile} and ${dataDir}`);
  return { tables, uploads: manifest.uploads.length };
}
