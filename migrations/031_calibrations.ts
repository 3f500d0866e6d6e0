import type { Knex } from 'knex';

/**
 * Calibrations derived from a batch's standard stars, per instrument, band and night, and their
 * application to measurements: the values before and after are kept per measurement, so a revert
 * restores exactly what was there. `measurements.calibration_id` names the applied calibration.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('calibrations', (t) => {
    t.increments('id').primary();
    t.integer('batch_id').notNullable().references('batches.id');
    t.string('instrument', 40).notNullable();
    t.string('band', 4).notNullable();
    t.string('night', 10); // ISO date of the evening (UTC noon to noon); null without an epoch
    t.double('zero_point_deg');
    t.double('zero_point_err_deg');
    t.double('instrumental_q');
    t.double('instrumental_u');
    t.double('instrumental_q_err');
    t.double('instrumental_u_err');
    t.text('standards_json').notNullable();
    t.string('state', 12).notNullable(); // applied | reverted
    t.integer('rows_calibrated').notNullable().defaultTo(0);
    t.integer('applied_by').notNullable().references('users.id');
    t.timestamp('applied_at').notNullable();
    t.integer('reverted_by').references('users.id');
    t.timestamp('reverted_at');
    t.index(['batch_id', 'state']);
    t.index(['instrument']);
  });
  await knex.schema.createTable('calibration_rows', (t) => {
    t.increments('id').primary();
    t.integer('calibration_id').notNullable().references('calibrations.id');
    t.integer('measurement_id').notNullable().references('measurements.id');
    t.text('before_json').notNullable();
    t.text('after_json').notNullable();
    t.index(['calibration_id']);
    t.index(['measurement_id']);
  });
  await knex.schema.alterTable('measurements', (t) => {
    t.integer('calibration_id');
  });
  // small key/value settings (e.g. the plausibility ceiling on p), changed through the API and audited
  await knex.schema.createTable('settings', (t) => {
    t.string('key', 60).primary();
    t.text('value_json').notNullable();
    t.integer('updated_by').references('users.id');
    t.timestamp('updated_at').notNullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('settings');
  await knex.schema.alterTable('measurements', (t) => {
    t.dropColumn('calibration_id');
  });
  await knex.schema.dropTable('calibration_rows');
  await knex.schema.dropTable('calibrations');
}
