import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('users', (t) => {
    t.increments('id').primary();
    t.string('email', 254).notNullable().unique();
    t.string('name', 200).notNullable();
    t.string('role', 20).notNullable();
    t.string('password_hash', 100).notNullable();
    t.boolean('disabled').notNullable().defaultTo(false);
    t.timestamp('created_at').notNullable();
    t.timestamp('updated_at').notNullable();
    t.timestamp('last_sign_in_at');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('users');
}
