import type { Knex } from 'knex';

/**
 * Calibrations are applied and reverted in short transactions: a calibration is `applying` or
 * `reverting` while its rows are written, and `failed` when an interrupted apply was rolled back
 * (the reason kept here). `state` already takes any short text; only the reason is new.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('calibrations', (t) => {
    t.text('failure_reason');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('calibrations', (t) => {
    t.dropColumn('failure_reason');
  });
}
