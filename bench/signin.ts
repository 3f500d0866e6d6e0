// Sign-in refusal timing (prints figures; not a test).
//   npm run bench:signin -- [--rounds 40]
// Refusals for a known e-mail (wrong password) and an unknown e-mail should take the same time:
// both run one bcrypt comparison at the production cost (10). Alternates the two kinds, in process
// through the whole Express stack, and prints the median and p90 of each and their ratio.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { performance } from 'node:perf_hooks';
import request from 'supertest';
import { createApp } from '../server/app.js';
import { loadConfig, randomSecret } from '../server/config.js';
import { migrateLatest, openDb } from '../server/db.js';
import { COST } from '../server/auth/passwords.js';
import { authService } from '../server/auth/service.js';

const i = process.argv.indexOf('--rounds');
const ROUNDS = i > 0 ? Number(process.argv[i + 1]) : 40;
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-signin-bench-'));
const config = loadConfig({ NODE_ENV: 'development' } as NodeJS.ProcessEnv, {
  dbFile: path.join(dir, 'bench.sqlite'), dataDir: dir, sessionSecret: randomSecret(), distDir: path.join(dir, 'no-dist'),
  loginRateLimit: { windowMs: 60_000, max: 1_000_000 },
});
const db = openDb(config.dbFile);
await migrateLatest(db);
await authService(db, { allowDemoPassword: true }).create(null, { email: 'known@kestrel.example', name: 'Known', role: 'modeler', password: 'the-right-password' });
const app = createApp({ db, config });

const times = { known: [] as number[], unknown: [] as number[] };
const attempt = async (email: string) => {
  const t0 = performance.now();
  const res = await request(app).post('/api/v1/auth/login').send({ email, password: 'a-wrong-password' });
  const ms = performance.now() - t0;
  if (res.status !== 401) throw new Error(`expected 401, got ${res.status}`);
  return ms;
};
await attempt('known@kestrel.example'); // warm-up
await attempt('nobody@kestrel.example');
for (let r = 0; r < ROUNDS; r++) {
  times.known.push(await attempt('known@kestrel.example'));
  times.unknown.push(await attempt(`nobody-${r}@kestrel.example`));
}
const q = (xs: number[], p: number) => [...xs].sort((a, b) => a - b)[Math.min(xs.length - 1, Math.floor(p * xs.length))];
const fmt = (x: number) => `${x.toFixed(1)} ms`;
console.log(`bcrypt cost ${COST}, ${ROUNDS} refusals of each kind, alternating`);
console.log(`known e-mail, wrong password: median ${fmt(q(times.known, 0.5))}, p90 ${fmt(q(times.known, 0.9))}`);
console.log(`unknown e-mail:               median ${fmt(q(times.unknown, 0.5))}, p90 ${fmt(q(times.unknown, 0.9))}`);
console.log(`ratio unknown/known (median): ${(q(times.unknown, 0.5) / q(times.known, 0.5)).toFixed(3)}`);
await db.destroy();
fs.rmSync(dir, { recursive: true, force: true });
