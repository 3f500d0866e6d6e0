import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('tomography_runs', (t) => {
    t.increments('id').primary();
    t.string('state', 20).notNullable(); // queued | running | done | cancelled | failed
    t.text('params_json').notNullable();
    // sha256 over the exact inputs: every measurement id and version used, star distances, parameters
    t.string('fingerprint', 64);
    t.integer('cells_total').notNullable().defaultTo(0);
    t.integer('cells_done').notNullable().defaultTo(0);
    t.integer('stars_used').notNullable().defaultTo(0);
    t.integer('measurements_used').notNullable().defaultTo(0);
    t.integer('started_by').references('users.id');
    t.timestamp('created_at').notNullable();
    t.timestamp('started_at');
    t.timestamp('finished_at');
    t.text('error');
    t.index(['state']);
  });
  await knex.schema.createTable('tomography_cells', (t) => {
    t.increments('id').primary();
    t.integer('run_id').notNullable().references('tomography_runs.id');
    t.integer('nside').notNullable();
    t.bigInteger('ipix').notNullable(); // nested, in the run's coordinate system
    t.double('lon_deg').notNullable(); // pixel centre in the run's coordinate system
    t.double('lat_deg').notNullable();
    t.double('ra_deg').notNullable(); // pixel centre, ICRS
    t.double('dec_deg').notNullable();
    t.integer('n_stars').notNullable();
    t.integer('n_layers').notNullable();
    t.double('layer_support').notNullable();
    t.boolean('complex').notNullable();
    t.double('max_jump_deg'); // largest |Δθ| between successive layers
    t.double('max_jump_significance');
    t.double('nearest_layer_pc');
    t.double('farthest_layer_pc');
    t.text('result_json').notNullable(); // layers, jumps, segments, star order
    t.unique(['run_id', 'ipix']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('tomography_cells');
  await knex.schema.dropTable('tomography_runs');
}
