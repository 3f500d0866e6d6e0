import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('batches', (t) => {
    t.integer('reviewed_by').references('users.id');
    t.timestamp('reviewed_at');
    t.text('review_note');
  });
  await knex.schema.alterTable('measurements', (t) => {
    t.integer('updated_by').references('users.id');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('measurements', (t) => {
    t.dropColumn('updated_by');
  });
  await knex.schema.alterTable('batches', (t) => {
    t.dropColumn('review_note');
    t.dropColumn('reviewed_at');
    t.dropColumn('reviewed_by');
  });
}
