import type { Knex } from 'knex';
import { seed as seedDemo } from '../seeds/demo.js';

/** Load the demo only into an empty database, so restarting never duplicates it. */
export async function seedDemoIfEmpty(db: Knex): Promise<boolean> {
  const [{ n }] = await db('users').count({ n: '*' });
  if (Number(n) > 0) return false;
  await seedDemo(db);
  return true;
}
