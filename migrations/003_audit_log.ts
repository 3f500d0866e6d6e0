import type { Knex } from 'knex';

// Append-only: the application inserts audit rows and never updates or deletes them.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('audit_log', (t) => {
    t.bigIncrements('id').primary();
    t.timestamp('at').notNullable();
    t.integer('actor_id').references('users.id');
    t.string('action', 60).notNullable();
    t.string('entity_type', 40).notNullable();
    t.string('entity_id', 64).notNullable();
    t.text('before_json');
    t.text('after_json');
    t.text('reason');
    t.index(['entity_type', 'entity_id']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('audit_log');
}
