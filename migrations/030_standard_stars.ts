import type { Knex } from 'knex';

/**
 * Reference polarization of standard stars per band, each value with its source. Seeded with the
 * polarized and unpolarized standards of Schmidt, Elston & Lupie 1992 (AJ 104, 1563) as listed in
 * METHODS.md — values from memory, marked so in `note`. Positions are left empty for the seeded stars
 * (no offline catalog to check them against): they are recognised by name; a curator who records a
 * position also enables the 5″ position match.
 */
export const SEEDED_STANDARDS = [
  { name: 'HD 204827', band: 'V', p_pct: 5.32, theta_deg: 58.7 },
  { name: 'HD 204827', band: 'R', p_pct: 4.89, theta_deg: 59.1 },
  { name: 'BD+59 389', band: 'V', p_pct: 6.7, theta_deg: 98.1 },
  { name: 'HD 212311', band: 'V', p_pct: 0.03, theta_deg: null },
  { name: 'HD 21447', band: 'V', p_pct: 0.05, theta_deg: null },
];

const nameKey = (n: string) => n.normalize('NFKC').replace(/[\s_]+/g, '').toUpperCase();

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('standard_stars', (t) => {
    t.increments('id').primary();
    t.string('name', 100).notNullable();
    // name without spaces, upper case: HD 204827 and hd204827 are the same star
    t.string('name_key', 100).notNullable();
    t.string('band', 4).notNullable();
    // 'polarized' (p and θ known) or 'unpolarized' (p only, an upper value; no angle)
    t.string('kind', 12).notNullable();
    t.double('p').notNullable(); // fraction
    t.double('p_err');
    t.double('theta_deg'); // IAU, equatorial, [0, 180); null for unpolarized standards
    t.double('theta_err_deg');
    t.double('ra_deg'); // ICRS; null when no position is recorded (recognised by name only)
    t.double('dec_deg');
    t.text('source').notNullable();
    t.boolean('from_memory').notNullable().defaultTo(false);
    t.text('note');
    t.integer('created_by').references('users.id');
    t.timestamp('created_at').notNullable();
    t.unique(['name_key', 'band']);
  });
  const now = new Date().toISOString();
  await knex('standard_stars').insert(
    SEEDED_STANDARDS.map((s) => ({
      name: s.name,
      name_key: nameKey(s.name),
      band: s.band,
      kind: s.theta_deg === null ? 'unpolarized' : 'polarized',
      p: s.p_pct / 100,
      p_err: null,
      theta_deg: s.theta_deg,
      theta_err_deg: null,
      ra_deg: null,
      dec_deg: null,
      source: 'Schmidt, Elston & Lupie 1992, AJ 104, 1563',
      from_memory: true,
      note: 'value from memory (METHODS.md); check against the paper before relying on it',
      created_by: null,
      created_at: now,
    })),
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('standard_stars');
}
