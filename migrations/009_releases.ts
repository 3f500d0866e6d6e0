import type { Knex } from 'knex';

// A frozen release: a tag, its tomography run, and copies of the approved stars and measurements
// as they were at freezing, so released answers never change when the live catalog does.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('releases', (t) => {
    t.increments('id').primary();
    t.string('tag', 60).notNullable().unique();
    t.text('notes');
    t.integer('run_id').notNullable().references('tomography_runs.id');
    t.text('counts_json').notNullable();
    t.string('fingerprint', 64).notNullable(); // the run's data fingerprint
    t.integer('frozen_by').notNullable().references('users.id');
    t.timestamp('frozen_at').notNullable();
  });
  await knex.schema.createTable('release_measurements', (t) => {
    t.integer('release_id').notNullable().references('releases.id');
    t.integer('measurement_id').notNullable();
    t.integer('version').notNullable();
    t.integer('star_id').notNullable();
    t.string('band', 4).notNullable();
    t.string('instrument', 40).notNullable();
    t.double('mjd');
    t.double('q').notNullable();
    t.double('u').notNullable();
    t.double('q_err').notNullable();
    t.double('u_err').notNullable();
    t.double('q_gal').notNullable();
    t.double('u_gal').notNullable();
    t.double('q_gal_err').notNullable();
    t.double('u_gal_err').notNullable();
    t.double('p_debiased').notNullable();
    t.double('theta_deg').notNullable();
    t.double('theta_gal_deg').notNullable();
    t.double('distance_pc');
    t.double('distance_lo_pc');
    t.double('distance_hi_pc');
    t.primary(['release_id', 'measurement_id']);
    t.index(['release_id', 'star_id']);
  });
  await knex.schema.createTable('release_stars', (t) => {
    t.integer('release_id').notNullable().references('releases.id');
    t.integer('star_id').notNullable();
    t.string('name', 100);
    t.string('source_id', 32);
    t.double('ra_deg').notNullable();
    t.double('dec_deg').notNullable();
    t.double('glon_deg').notNullable();
    t.double('glat_deg').notNullable();
    t.bigInteger('hpx15').notNullable();
    t.double('parallax_mas');
    t.double('parallax_err_mas');
    t.primary(['release_id', 'star_id']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('release_stars');
  await knex.schema.dropTable('release_measurements');
  await knex.schema.dropTable('releases');
}
