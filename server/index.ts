// Start Starveil: migrate, seed the demo into an empty database, serve the API and the built client.
import { loadConfig } from './config.js';
import { openDb, migrateLatest } from './db.js';
import { checkpointPassive } from './dialect.js';
import { seedDemoIfEmpty } from './seed.js';
import { createApp } from './app.js';
import { DEMO_ACCOUNTS } from '../seeds/demo-scenario.js';
import { DEMO_PASSWORD } from './auth/passwords.js';

// No error inside a store, a pool or a worker may end the process: it is logged and the server stays up.
process.on('unhandledRejection', (e) => console.error('unhandled rejection (the server stays up):', e));
process.on('uncaughtException', (e) => console.error('uncaught exception (the server stays up):', e));

const config = loadConfig();
const db = openDb(config.dbFile);
await migrateLatest(db);
const seeded = config.seedDemo ? await seedDemoIfEmpty(db, config) : false;
const readDb = openDb(config.dbFile);
const app = createApp({ db, readDb, config });
const resumed = await app.services.intake.resumeInterrupted();
// large approves or returns a restart interrupted go on from where they stopped
const settling = await app.services.review.resumeSettling();
if (settling) console.log(`applying ${settling} batch decision(s) again that a restart interrupted`);
// The request thread's connections never checkpoint inside a COMMIT (server/dialect.ts); the
// small WAL left by ordinary work is copied into the database file here while no check runs.
setInterval(() => {
  if (!app.services.intake.busy()) void checkpointPassive(db).catch((e) => console.error('checkpoint', e));
}, 20_000).unref();
if (resumed) console.log(`checking ${resumed} batch(es) again that a restart interrupted`);
const server = app.listen(config.port, () => {
  const addr = server.address();
  const port = typeof addr === 'object' && addr ? addr.port : config.port;
  console.log(`Starveil is running at http://localhost:${port}  (database ${config.dbFile}${seeded ? ', demo data loaded' : ''})`);
  if (config.allowDemoPassword) {
    console.log(`Demo sign-ins (password "${DEMO_PASSWORD}"):`);
    for (const a of DEMO_ACCOUNTS) console.log(`  ${a.role.padEnd(9)} ${a.email}`);
  }
});

const stop = () => {
  server.close(() => void Promise.all([app.services.close(), db.destroy(), readDb.destroy()]).then(() => process.exit(0)));
  setTimeout(() => process.exit(0), 3000).unref();
};
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
