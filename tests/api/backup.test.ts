import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { browserLikeAgent, makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { backup, restore, tableCounts, verifyBackup, BackupError, MANIFEST } from '../../server/backup/index.js';
import { createApp } from '../../server/app.js';
import { loadConfig, randomSecret } from '../../server/config.js';
import { openDb, migrateLatest } from '../../server/db.js';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';

const run = promisify(execFile);
let t: TestApp;
let scratch: string;
const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';

beforeAll(async () => {
  t = await makeTestApp();
  scratch = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-backup-test-'));
});
afterAll(async () => {
  await t.close();
  fs.rmSync(scratch, { recursive: true, force: true });
});

const liveCounts = () => {
  const db = new Database(t.config.dbFile, { readonly: true });
  try {
    return tableCounts(db);
  } finally {
    db.close();
  }
};

describe('backup while the app is serving, restore into a fresh folder', () => {
  let manifestDir: string;

  it('takes a consistent copy while uploads and edits keep arriving', async () => {
    const observer = await signedIn(t.app, 'observer');
    const curator = await signedIn(t.app, 'curator');
    let stop = false;
    let writes = 0;
    const writer = (async () => {
      for (let i = 0; !stop; i++) {
        const csv = `${HEADER}\nbackup probe ${i},,${(30 + i * 0.01).toFixed(4)},12.5,R,0.01,0.002,0.001,0.001,1.5,0.05,${61300 + i},KR-HAWK\n`;
        expect((await observer.post('/api/v1/batches').attach('file', Buffer.from(csv), `probe-${i}.csv`)).status).toBeLessThan(300);
        const m = await t.db('measurements').orderBy('id').first();
        expect((await curator.patch(`/api/v1/measurements/${m.id}`).send({ changes: { q: 0.01 + i * 1e-6 }, version: m.version })).status).toBe(200);
        writes += 2;
      }
    })();
    // let a few writes land first, then back up in the middle of them
    while (writes < 4) await new Promise((r) => setTimeout(r, 20));
    manifestDir = path.join(scratch, 'online');
    const manifest = await backup({ dbFile: t.config.dbFile, dataDir: t.config.dataDir, outDir: manifestDir });
    const writesDuring = writes;
    stop = true;
    await writer;
    await t.app.services.intake.idle();

    expect(fs.existsSync(path.join(manifestDir, MANIFEST))).toBe(true);
    expect(manifest.uploads.length).toBeGreaterThanOrEqual(2 + 2); // the demo batches and some probes
    expect(manifest.database.migrations.length).toBeGreaterThan(10);
    // the snapshot is consistent in itself: every measurement's batch and every batch's upload are in it
    const snap = new Database(path.join(manifestDir, 'starveil.sqlite'), { readonly: true });
    try {
      expect(snap.pragma('integrity_check', { simple: true })).toBe('ok');
      expect(snap.prepare('SELECT count(*) FROM measurements m LEFT JOIN batches b ON b.id = m.batch_id WHERE b.id IS NULL').pluck().get()).toBe(0);
      const batchIds = snap.prepare('SELECT id FROM batches').pluck().all() as number[];
      expect(manifest.uploads.flatMap((u) => u.batchIds).sort((a, b) => a - b)).toEqual(batchIds.sort((a, b) => a - b));
      expect(tableCounts(snap)).toEqual(manifest.database.tables);
    } finally {
      snap.close();
    }
    // and the server kept answering during the backup
    expect(writes).toBeGreaterThanOrEqual(writesDuring);
  }, 120_000);

  it('restores onto an empty folder: same table counts, same raw upload bytes, and a working app', async () => {
    const dataDir = path.join(scratch, 'restored-data');
    const dbFile = path.join(dataDir, 'starveil.sqlite');
    const result = restore({ backupDir: manifestDir, dbFile, dataDir });
    const manifest = verifyBackup(manifestDir);
    expect(result.tables).toEqual(manifest.database.tables);

    const restored = openDb(dbFile);
    await migrateLatest(restored); // nothing to do: the snapshot carries its migrations
    const config = loadConfig({ NODE_ENV: 'test' } as NodeJS.ProcessEnv, { dbFile, dataDir, sessionSecret: randomSecret(), distDir: path.join(scratch, 'no-dist') });
    const app = createApp({ db: restored, config });
    try {
      const batches = await restored('batches').select('id', 'stored_path', 'sha256');
      expect(batches.length).toBe(manifest.database.tables.batches);
      const agent = browserLikeAgent(app, config.publicUrl);
      expect((await agent.post('/api/v1/auth/login').send({ email: 'curator@kestrel.example', password: DEMO_PASSWORD })).status).toBe(200);
      for (const b of batches) {
        expect(b.stored_path.startsWith(dataDir)).toBe(true);
        const original = await t.db('batches').where({ id: b.id }).first('stored_path');
        const bytes = fs.readFileSync(b.stored_path);
        expect(bytes.equals(fs.readFileSync(original.stored_path))).toBe(true);
        const raw = await agent.get(`/api/v1/batches/${b.id}/raw`).buffer(true).parse((res, cb) => {
          const chunks: Buffer[] = [];
          res.on('data', (c: Buffer) => chunks.push(c));
          res.on('end', () => cb(null, Buffer.concat(chunks)));
        });
        expect(raw.status).toBe(200);
        expect((raw.body as Buffer).equals(bytes)).toBe(true);
      }
      expect((await agent.get('/api/v1/overview')).body.counts.stars).toBe(manifest.database.tables.stars);
    } finally {
      await app.services.intake.idle();
      await restored.destroy();
    }
  }, 120_000);

  it('a backup of the idle app matches the live database exactly', async () => {
    const dir = path.join(scratch, 'idle');
    const manifest = await backup({ dbFile: t.config.dbFile, dataDir: t.config.dataDir, outDir: dir });
    const live = liveCounts();
    delete live.sessions; // sign-ins of this test may touch the session table in between
    const copied = { ...manifest.database.tables };
    delete copied.sessions;
    expect(copied).toEqual(live);
  });

  it('refuses a non-empty target, a used backup folder and a damaged backup', async () => {
    const busy = path.join(scratch, 'busy');
    fs.mkdirSync(busy);
    fs.writeFileSync(path.join(busy, 'something'), 'x');
    expect(() => restore({ backupDir: manifestDir, dbFile: path.join(scratch, 'new.sqlite'), dataDir: busy })).toThrow(/not empty/);
    const existing = path.join(scratch, 'exists.sqlite');
    fs.writeFileSync(existing, '');
    expect(() => restore({ backupDir: manifestDir, dbFile: existing, dataDir: path.join(scratch, 'empty-1') })).toThrow(/already exists/);
    await expect(backup({ dbFile: t.config.dbFile, dataDir: t.config.dataDir, outDir: busy })).rejects.toThrow(BackupError);

    const damaged = path.join(scratch, 'damaged');
    fs.cpSync(manifestDir, damaged, { recursive: true });
    const m = verifyBackup(damaged);
    const victim = path.join(damaged, m.uploads[0].path);
    const bytes = fs.readFileSync(victim);
    bytes[0] ^= 1;
    fs.writeFileSync(victim, bytes);
    const target = path.join(scratch, 'from-damaged');
    expect(() => restore({ backupDir: damaged, dbFile: path.join(target, 'db.sqlite'), dataDir: target })).toThrow(/damaged/);
    expect(fs.existsSync(target)).toBe(false); // nothing written before the checksums pass
  });

  it('npm run backup / npm run restore work from the command line', async () => {
    const out = path.join(scratch, 'cli');
    const env = { ...process.env, STARVEIL_DB: t.config.dbFile, STARVEIL_DATA_DIR: t.config.dataDir, STARVEIL_SEED: '0' };
    const b = await run('npx', ['tsx', 'scripts/backup.ts', out], { env });
    expect(b.stdout).toMatch(/backup of .* written to/);
    const target = path.join(scratch, 'cli-restored');
    const r = await run('npx', ['tsx', 'scripts/restore.ts', out], { env: { ...process.env, STARVEIL_DATA_DIR: target, STARVEIL_DB: path.join(target, 'starveil.sqlite') } });
    expect(r.stdout).toMatch(/restored: \d+ rows/);
    const again = await run('npx', ['tsx', 'scripts/restore.ts', out], { env: { ...process.env, STARVEIL_DATA_DIR: target } }).catch((e) => e);
    expect(again.code).toBe(1);
    expect(again.stderr).toMatch(/restore refused/);
  }, 120_000);
});
