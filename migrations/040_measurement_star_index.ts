import type { Knex } from 'knex';

// Two indexes began with star_id: (star_id, band, instrument) for the de-duplication of a star's
// repeats and (star_id, state) for a star's approved values. One index (star_id, state, band,
// instrument) answers both (a star has a handful of measurements), and intake maintains one
// index per row instead of two.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('measurements', (t) => {
    t.index(['star_id', 'state', 'band', 'instrument'], 'measurements_star_state_band_instrument_index');
  });
  await knex.raw('DROP INDEX IF EXISTS measurements_star_id_band_instrument_index');
  await knex.raw('DROP INDEX IF EXISTS measurements_star_id_state_index');
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('measurements', (t) => {
    t.index(['star_id', 'band', 'instrument'], 'measurements_star_id_band_instrument_index');
    t.index(['star_id', 'state'], 'measurements_star_id_state_index');
  });
  await knex.raw('DROP INDEX IF EXISTS measurements_star_state_band_instrument_index');
}
