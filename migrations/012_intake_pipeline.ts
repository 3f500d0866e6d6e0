import type { Knex } from 'knex';

// Intake writes a batch in short transactions while it is checked; its rows stay invisible until
// the batch leaves `checking`. Stars therefore remember the batch that created them (null: the
// catalog seed or a curator), so readers can hide stars of batches nobody may see yet.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('stars', (t) => {
    t.integer('batch_id'); // batches.id (no constraint: SQLite cannot add one to an existing table)
    t.index(['batch_id'], 'stars_batch_id_index');
  });
  // stars made by intake before this change: the batch whose row created them
  await knex.raw(`UPDATE stars SET batch_id = (SELECT min(r.batch_id) FROM batch_rows r WHERE r.star_id = stars.id AND r.star_match = 'new') WHERE EXISTS (SELECT 1 FROM batch_rows r WHERE r.star_id = stars.id AND r.star_match = 'new')`);
  await knex.schema.alterTable('batches', (t) => {
    t.integer('rows_total');
    t.integer('check_attempts').notNullable().defaultTo(0);
    t.text('check_note');
  });
  await knex.schema.alterTable('batch_rows', (t) => {
    // for curators only: e.g. another observer's pending star within the match radius
    t.text('curator_note');
  });
  await knex.schema.alterTable('instruments', (t) => {
    t.timestamp('updated_at');
    t.integer('updated_by');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('instruments', (t) => {
    t.dropColumn('updated_by');
    t.dropColumn('updated_at');
  });
  await knex.schema.alterTable('batch_rows', (t) => {
    t.dropColumn('curator_note');
  });
  await knex.schema.alterTable('batches', (t) => {
    t.dropColumn('check_note');
    t.dropColumn('check_attempts');
    t.dropColumn('rows_total');
  });
  await knex.schema.alterTable('stars', (t) => {
    t.dropIndex(['batch_id'], 'stars_batch_id_index');
    t.dropColumn('batch_id');
  });
}
