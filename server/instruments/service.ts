import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import { conflict, notFound } from '../errors.js';

const BAND_ORDER = ['U', 'B', 'V', 'R', 'I'];
const sortBands = (bands: string[]) => [...new Set(bands)].sort((a, b) => BAND_ORDER.indexOf(a) - BAND_ORDER.indexOf(b));

export interface InstrumentInput {
  code: string;
  name: string;
  bands: string[];
  description?: string | null;
}

/** The instrument registry: every upload names one of these codes, and only its bands. */
export function instrumentService(db: Knex, readDb: Knex = db) {
  function present(i: Record<string, any>, counts: Map<string, number>) {
    return {
      id: i.id, code: i.code, name: i.name, bands: String(i.bands).split(',').filter(Boolean), description: i.description ?? null,
      createdAt: i.created_at, updatedAt: i.updated_at ?? null, measurements: counts.get(i.code) ?? 0,
    };
  }
  async function counts(via: Knex | Knex.Transaction, code?: string) {
    const q = via('measurements').select('instrument').count({ n: '*' }).groupBy('instrument');
    if (code) q.where({ instrument: code });
    return new Map(((await q) as { instrument: string; n: number }[]).map((r) => [String(r.instrument), Number(r.n)]));
  }
  async function byCode(via: Knex | Knex.Transaction, code: string) {
    return via('instruments').whereRaw('lower(code) = ?', [code.trim().toLowerCase()]).first();
  }

  return {
    async list() {
      const rows = await readDb('instruments').orderBy('code');
      const c = await counts(readDb);
      return rows.map((r) => present(r, c));
    },

    async get(code: string) {
      const i = await byCode(readDb, code);
      if (!i) throw notFound(`Instrument ${code}`);
      return present(i, await counts(readDb, i.code));
    },

    async create(actorId: number, input: InstrumentInput) {
      const now = new Date().toISOString();
      return db.transaction(async (trx) => {
        const clash = await byCode(trx, input.code);
        if (clash) throw conflict(`The code ${clash.code} is already registered (${clash.name}); choose another code or change that instrument.`, { fields: [{ field: 'code', message: 'in use' }] });
        const row = { code: input.code.trim(), name: input.name.trim(), bands: sortBands(input.bands).join(','), description: input.description ?? null, created_at: now };
        const [id] = await trx('instruments').insert(row);
        await recordAudit(trx, { actorId, action: 'instrument.create', entityType: 'instrument', entityId: row.code, after: { ...row, bands: row.bands.split(',') } });
        return present({ id, ...row, updated_at: null }, new Map());
      });
    },

    async update(actorId: number, code: string, changes: Partial<Omit<InstrumentInput, 'code'>>) {
      return db.transaction(async (trx) => {
        const i = await byCode(trx, code);
        if (!i) throw notFound(`Instrument ${code}`);
        const patch: Record<string, unknown> = { updated_at: new Date().toISOString(), updated_by: actorId };
        const before: Record<string, unknown> = {};
        const after: Record<string, unknown> = {};
        if (changes.name !== undefined) [patch.name, before.name, after.name] = [changes.name.trim(), i.name, changes.name.trim()];
        if (changes.bands !== undefined) [patch.bands, before.bands, after.bands] = [sortBands(changes.bands).join(','), String(i.bands).split(','), sortBands(changes.bands)];
        if (changes.description !== undefined) [patch.description, before.description, after.description] = [changes.description, i.description, changes.description];
        await trx('instruments').where({ id: i.id }).update(patch);
        await recordAudit(trx, { actorId, action: 'instrument.update', entityType: 'instrument', entityId: i.code, before, after });
        return present(await trx('instruments').where({ id: i.id }).first(), await counts(trx, i.code));
      });
    },
  };
}
export type InstrumentService = ReturnType<typeof instrumentService>;
