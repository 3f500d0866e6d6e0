import type { Knex } from 'knex';

/** A corrected file sent for a returned batch names the batch it replaces. */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('batches', (t) => {
    t.integer('replaces_batch_id').references('batches.id');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('batches', (t) => {
    t.dropColumn('replaces_batch_id');
  });
}
