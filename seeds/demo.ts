// Knex seed for the invented demo (see demo-scenario.ts). Deterministic; run only on an empty database.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Knex } from 'knex';
import { loadConfig, type Config } from '../server/config.js';
import { intakeService } from '../server/intake/service.js';
import { reviewService } from '../server/review/service.js';
import { tomographyService } from '../server/tomography/service.js';
import { hashPassword, DEMO_PASSWORD } from '../server/auth/passwords.js';
import { icrsToGalactic } from '../server/science/frames.js';
import { ang2pixNest } from '../server/science/healpix.js';
import { recordAudit } from '../server/audit/service.js';
import { DEMO_ACCOUNTS, DEMO_INSTRUMENTS } from './demo-scenario.js';
import { buildDemoSky, demoCloudAgreement } from './demo-sky.js';

export const INDEX_NSIDE = 32768; // HEALPix order 15

const BATCH_DIR = path.resolve(path.dirname(fileURLToPath(import.meta.url)), 'demo-batches');

/** The demo batches, uploaded by the demo observer through the intake code itself. */
export const DEMO_BATCHES = [
  { file: 'kestrel-night-hawk-R.csv', instrument: 'KR-HAWK' },
  { file: 'kestrel-night-messy.csv', instrument: 'KR-OWL' }, // left needing its column mapping
  // standard stars (values of METHODS.md, from memory) and 12 stars of the R night observed in V, through an
  // invented zero-point of 2.4° and instrumental (q, u) = (0.18 %, −0.11 %): waits for review with its calibration
  { file: 'kestrel-standards-V.csv', instrument: 'KR-HAWK' },
];

export interface DemoSeedOptions {
  /** approve the R-band night and run tomography on it, so the sky map has results on first start */
  tomography?: boolean;
}

export async function seed(knex: Knex, config: Config = loadConfig(), options: DemoSeedOptions = { tomography: true }): Promise<void> {
  const now = new Date().toISOString();
  await knex.transaction(async (trx) => {
    const hash = await hashPassword(DEMO_PASSWORD);
    for (const a of DEMO_ACCOUNTS) {
      await trx('users').insert({ email: a.email, name: a.name, role: a.role, password_hash: hash, disabled: false, created_at: now, updated_at: now });
    }
    const admin = await trx('users').where({ role: 'admin' }).first();
    for (const i of DEMO_INSTRUMENTS) await trx('instruments').insert({ ...i, created_at: now });
    const { stars } = buildDemoSky();
    const rows = stars.map((s) => {
      const g = icrsToGalactic(s.raDeg, s.decDeg);
      return {
        name: s.name,
        source_id: s.sourceId,
        ra_deg: s.raDeg,
        dec_deg: s.decDeg,
        glon_deg: g.lDeg,
        glat_deg: g.bDeg,
        parallax_mas: s.parallaxMas,
        parallax_err_mas: s.parallaxErrMas,
        hpx15: ang2pixNest(INDEX_NSIDE, s.raDeg, s.decDeg),
        created_at: now,
        created_by: admin.id,
      };
    });
    await trx.batchInsert('stars', rows, 500);
    await recordAudit(trx, { actorId: admin.id, action: 'demo.seed', entityType: 'database', entityId: 'demo', after: { users: DEMO_ACCOUNTS.length, instruments: DEMO_INSTRUMENTS.length, stars: rows.length } });
  });

  const observer = await knex('users').where({ email: 'observer@kestrel.example' }).first();
  const intake = intakeService(knex, config, config.intake);
  for (const b of DEMO_BATCHES) {
    const tmp = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-seed-')), b.file);
    fs.copyFileSync(path.join(BATCH_DIR, b.file), tmp);
    await intake.upload({ id: observer.id, email: observer.email, name: observer.name, role: 'observer' }, { path: tmp, originalname: b.file }, { instrument: b.instrument });
  }
  await intake.idle();

  // The curator approves the clean R-band night, then runs tomography over the whole sky.
  const curator = await knex('users').where({ email: 'curator@kestrel.example' }).first();
  const night = await knex('batches').where({ filename: 'kestrel-night-hawk-R.csv' }).first();
  await reviewService(knex).decide(curator.id, night.id, 'approved', 'Clean night; approved for the demo.');
  if (options.tomography) {
    const { id, done } = await tomographyService(knex).start(curator.id, DEMO_TOMOGRAPHY);
    await done;
    // How well the run finds the demo's own clouds (seeds/demo-sky.ts), said in the log.
    const cells = await knex('tomography_cells').where({ run_id: id }).select('ipix', 'n_layers');
    const a = demoCloudAgreement(buildDemoSky().fields, new Map(cells.map((c) => [Number(c.ipix), Number(c.n_layers)])), DEMO_TOMOGRAPHY.nside);
    console.log(`demo tomography run ${id}: layer count agrees with the demo's cloud list in ${a.agree} of ${a.fields} fields (${((100 * a.agree) / a.fields).toFixed(1)} %; ${a.over} over-split, ${a.under} under-split, ${a.missing} without a cell)`);
  }
}

/** The demo's tomography run: cells a little larger than the demo fields. */
export const DEMO_TOMOGRAPHY = { nside: 32, coordsys: 'G' as const, band: 'R', minStars: 10, draws: 50, jumpThresholdDeg: 30, minSegmentLength: 3 };
