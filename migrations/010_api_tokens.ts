import type { Knex } from 'knex';

// Personal API tokens: only the sha256 of the secret is stored; the secret is shown once.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('api_tokens', (t) => {
    t.increments('id').primary();
    t.integer('user_id').notNullable().references('users.id');
    t.string('name', 100).notNullable();
    t.string('token_hash', 64).notNullable().unique(); // hex sha256 of the whole secret
    t.timestamp('created_at').notNullable();
    t.timestamp('last_used_at');
    t.timestamp('revoked_at');
    t.index(['user_id']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('api_tokens');
}
