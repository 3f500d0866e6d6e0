import type { Knex } from 'knex';

// Every spatial query (cone searches, tomography regions, the cross-match) goes through
// stars.hpx15; no query reads measurements by their own hpx15. Its index only cost intake: one
// insert at a random place per measurement, a page rewritten at every short COMMIT. The column
// stays (it is stored and recomputed with the star's position).
export async function up(knex: Knex): Promise<void> {
  await knex.raw('DROP INDEX IF EXISTS measurements_hpx15_index');
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('measurements', (t) => {
    t.index(['hpx15'], 'measurements_hpx15_index');
  });
}
