import type { Knex } from 'knex';
import type { Config } from './config.js';
import { seed as seedDemo, type DemoSeedOptions } from '../seeds/demo.js';

/** Load the demo only into an empty database, so restarting never duplicates it. */
export async function seedDemoIfEmpty(db: Knex, config: Config, options?: DemoSeedOptions): Promise<boolean> {
  const [{ n }] = await db('users').count({ n: '*' });
  if (Number(n) > 0) return false;
  await seedDemo(db, config, options);
  return true;
}
