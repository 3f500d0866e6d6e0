import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('instruments', (t) => {
    t.increments('id').primary();
    t.string('code', 40).notNullable().unique();
    t.string('name', 200).notNullable();
    t.string('bands', 40).notNullable(); // comma-separated band names, e.g. "R,V"
    t.text('description');
    t.timestamp('created_at').notNullable();
  });
  await knex.schema.createTable('stars', (t) => {
    t.increments('id').primary();
    t.string('name', 100);
    // 64-bit astrometric identifiers are text end to end, never numbers.
    t.string('source_id', 32).unique();
    t.double('ra_deg').notNullable();
    t.double('dec_deg').notNullable();
    t.double('glon_deg').notNullable();
    t.double('glat_deg').notNullable();
    t.double('parallax_mas');
    t.double('parallax_err_mas');
    // HEALPix nested index at order 15 (NSIDE 32768), ICRS; coarser cells are hpx15 >> 2(15 − order).
    t.bigInteger('hpx15').notNullable().index();
    t.timestamp('created_at').notNullable();
    t.integer('created_by').references('users.id');
    t.index(['ra_deg', 'dec_deg']);
    t.index(['name']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('stars');
  await knex.schema.dropTable('instruments');
}
