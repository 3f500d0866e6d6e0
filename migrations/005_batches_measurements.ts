import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('batches', (t) => {
    t.increments('id').primary();
    t.integer('uploaded_by').notNullable().references('users.id');
    t.string('instrument', 40);
    t.string('filename', 255).notNullable();
    t.bigInteger('size_bytes').notNullable();
    t.string('sha256', 64).notNullable().unique();
    t.string('stored_path', 500).notNullable();
    t.string('state', 30).notNullable();
    t.text('mapping_json');
    t.text('proposal_json');
    t.text('counts_json');
    t.text('failure');
    t.bigInteger('bytes_done').notNullable().defaultTo(0);
    t.integer('rows_done').notNullable().defaultTo(0);
    t.timestamp('created_at').notNullable();
    t.timestamp('updated_at').notNullable();
    t.index(['state']);
    t.index(['uploaded_by']);
  });

  await knex.schema.createTable('batch_rows', (t) => {
    t.increments('id').primary();
    t.integer('batch_id').notNullable().references('batches.id');
    t.integer('line').notNullable();
    t.string('state', 20).notNullable(); // accepted | rejected | duplicate | conflict | ambiguous
    t.text('values_json').notNullable(); // the raw row, header → text, as received
    t.text('errors_json');
    t.text('warnings_json');
    t.text('candidates_json');
    t.string('star_match', 20); // source_id | position | new
    t.integer('star_id').references('stars.id');
    t.integer('measurement_id');
    t.integer('duplicate_of'); // measurement id this row repeats or conflicts with
    t.index(['batch_id', 'state']);
    t.unique(['batch_id', 'line']);
  });

  await knex.schema.createTable('measurements', (t) => {
    t.increments('id').primary();
    t.integer('star_id').references('stars.id'); // null while a position match is ambiguous
    t.integer('batch_id').notNullable().references('batches.id');
    t.integer('batch_row_id').notNullable().references('batch_rows.id');
    // pending (awaiting review) | conflict | ambiguous | approved | rejected
    t.string('state', 20).notNullable();
    t.integer('version').notNullable().defaultTo(1);
    t.string('band', 4).notNullable();
    t.string('instrument', 40).notNullable();
    t.double('mjd');
    t.double('ra_deg').notNullable();
    t.double('dec_deg').notNullable();
    // Stokes as fractions, IAU convention, equatorial reference (north through east)
    t.double('q').notNullable();
    t.double('u').notNullable();
    t.double('q_err').notNullable();
    t.double('u_err').notNullable();
    t.double('p').notNullable();
    t.double('p_err').notNullable();
    t.double('p_debiased').notNullable();
    t.double('theta_deg').notNullable();
    t.double('theta_err_deg').notNullable();
    // the same in the Galactic reference (IAU convention, from Galactic north)
    t.double('q_gal').notNullable();
    t.double('u_gal').notNullable();
    t.double('q_gal_err').notNullable();
    t.double('u_gal_err').notNullable();
    t.double('theta_gal_deg').notNullable();
    t.double('glon_deg').notNullable();
    t.double('glat_deg').notNullable();
    t.double('parallax_mas');
    t.double('parallax_err_mas');
    t.double('distance_pc');
    t.double('distance_lo_pc');
    t.double('distance_hi_pc');
    t.string('distance_method', 20);
    t.double('ebv');
    t.text('flags_json');
    t.integer('conflicts_with');
    t.bigInteger('hpx15').notNullable();
    t.timestamp('created_at').notNullable();
    t.timestamp('updated_at').notNullable();
    t.index(['star_id', 'band', 'instrument']);
    t.index(['batch_id']);
    t.index(['state']);
    t.index(['hpx15']);
  });

  await knex.schema.createTable('instrument_mappings', (t) => {
    t.increments('id').primary();
    t.string('instrument', 40).notNullable().unique();
    t.text('mapping_json').notNullable();
    t.integer('saved_by').references('users.id');
    t.timestamp('saved_at').notNullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('instrument_mappings');
  await knex.schema.dropTable('measurements');
  await knex.schema.dropTable('batch_rows');
  await knex.schema.dropTable('batches');
}
