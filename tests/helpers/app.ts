import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import type { Knex } from 'knex';
import { createApp } from '../../server/app.js';
import { loadConfig, randomSecret, type Config } from '../../server/config.js';
import { migrateLatest, openDb } from '../../server/db.js';
import { seedDemoIfEmpty } from '../../server/seed.js';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';

export interface TestApp {
  app: ReturnType<typeof createApp>;
  db: Knex;
  config: Config;
  dir: string;
  close: () => Promise<void>;
}

/** Each test app's PUBLIC_URL, so agents can send the Origin of this site. */
const publicUrls = new WeakMap<object, string>();

/** A fresh app on its own temporary SQLite file, migrated and seeded with the demo. */
export async function makeTestApp(overrides: Partial<Config> = {}, opts: { seed?: boolean; tomography?: boolean } = {}): Promise<TestApp> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-test-'));
  const config = loadConfig({ NODE_ENV: 'test' } as NodeJS.ProcessEnv, {
    dbFile: path.join(dir, 'test.sqlite'),
    dataDir: dir,
    sessionSecret: randomSecret(),
    distDir: path.join(dir, 'no-dist'),
    ...overrides,
  });
  const db = openDb(config.dbFile);
  await migrateLatest(db);
  if (opts.seed !== false) await seedDemoIfEmpty(db, config, { tomography: opts.tomography ?? false });
  const readDb = openDb(config.dbFile);
  const app = createApp({ db, readDb, config });
  publicUrls.set(app, config.publicUrl);
  return {
    app, db, config, dir,
    close: async () => {
      await app.services.intake.idle();
      await Promise.all([db.destroy(), readDb.destroy()]);
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

export const DEMO = {
  observer: 'observer@kestrel.example',
  curator: 'curator@kestrel.example',
  modeler: 'modeler@kestrel.example',
  admin: 'admin@kestrel.example',
} as const;

/**
 * A supertest agent that behaves like a page of this site: it keeps its cookie and sends
 * `Origin: PUBLIC_URL` on every request, as a browser does on writes (server/auth/origin.ts).
 */
export function browserLikeAgent(app: TestApp['app'], origin = publicUrls.get(app) ?? 'http://localhost:3000') {
  return request.agent(app).set('Origin', origin);
}

/** A supertest agent signed in as the given demo role (keeps its cookie, sends this site's Origin). */
export async function signedIn(app: TestApp['app'], role: keyof typeof DEMO) {
  const agent = browserLikeAgent(app);
  const res = await agent.post('/api/v1/auth/login').send({ email: DEMO[role], password: DEMO_PASSWORD });
  if (res.status !== 200) throw new Error(`sign-in as ${role} failed: ${res.status} ${JSON.stringify(res.body)}`);
  return agent;
}
