import type { Knex } from 'knex';

// "Does this star have a measurement I may see?" is asked per star (catalog, visibility);
// without this index SQLite answered it through the state index, scanning every approved row.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('measurements', (t) => {
    t.index(['star_id', 'state'], 'measurements_star_id_state_index');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('measurements', (t) => {
    t.dropIndex(['star_id', 'state'], 'measurements_star_id_state_index');
  });
}
