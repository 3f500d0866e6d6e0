import type { Knex } from 'knex';
import type { Config } from './config.js';
import { seed as seedDemo } from '../seeds/demo.js';

/** Load the demo only into an empty database, so restarting never duplicates it. */
export async function seedDemoIfEmpty(db: Knex, config: Config): Promise<boolean> {
  const [{ n }] = await db('users').count({ n: '*' });
  if (Number(n) > 0) return false;
  await seedDemo(db, config);
  return true;
}
