import type { Knex } from 'knex';

// Every e-mail Starveil composes, whatever the transport, and the one-time password-reset links.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('outbox', (t) => {
    t.increments('id').primary();
    t.string('to_address', 254).notNullable();
    t.string('from_address', 320).notNullable();
    t.string('subject', 300).notNullable();
    t.text('text_body').notNullable();
    t.text('html_body');
    // the message as nodemailer's JSON transport composed it
    t.text('message_json');
    t.string('transport', 10).notNullable(); // outbox | smtp
    // stored (kept here only, outbox transport) | sending | sent | failed
    t.string('status', 10).notNullable();
    t.text('error');
    t.string('message_id', 300);
    t.timestamp('created_at').notNullable().index();
    t.timestamp('sent_at');
  });

  await knex.schema.createTable('password_resets', (t) => {
    t.increments('id').primary();
    t.integer('user_id').notNullable().references('users.id').index();
    // sha256 (hex) of the token sent by e-mail; the token itself is never stored
    t.string('token_hash', 64).notNullable().unique();
    t.timestamp('created_at').notNullable();
    t.timestamp('expires_at').notNullable();
    t.timestamp('used_at');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('password_resets');
  await knex.schema.dropTable('outbox');
}
