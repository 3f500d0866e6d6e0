import type { Knex } from 'knex';

// A large batch is approved or returned in short transactions on a worker thread. While that
// runs, `settling` names the decision being applied ('approved' | 'returned') and `settle_json`
// holds who decided, the note, where the batch came from and the progress. Readers of approved
// data skip a batch whose `settling` is set, so nobody reads it half-decided.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('batches', (t) => {
    t.string('settling', 16).nullable();
    t.text('settle_json').nullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('batches', (t) => {
    t.dropColumn('settle_json');
    t.dropColumn('settling');
  });
}
