import type { Knex } from 'knex';

export interface AuditEntry {
  actorId: number | null;
  action: string;
  entityType: string;
  entityId: string | number;
  before?: unknown;
  after?: unknown;
  reason?: string | null;
}

/** Record who changed what; call inside the same transaction as the change. Never updates or deletes. */
export async function recordAudit(trx: Knex | Knex.Transaction, entry: AuditEntry | AuditEntry[]): Promise<void> {
  const rows = (Array.isArray(entry) ? entry : [entry]).map((e) => ({
    at: new Date().toISOString(),
    actor_id: e.actorId,
    action: e.action,
    entity_type: e.entityType,
    entity_id: String(e.entityId),
    before_json: e.before === undefined ? null : JSON.stringify(e.before),
    after_json: e.after === undefined ? null : JSON.stringify(e.after),
    reason: e.reason ?? null,
  }));
  if (rows.length) await trx.batchInsert('audit_log', rows, 500);
}

export async function auditFor(db: Knex, entityType: string, entityId: string | number) {
  return db('audit_log')
    .leftJoin('users', 'users.id', 'audit_log.actor_id')
    .where({ entity_type: entityType, entity_id: String(entityId) })
    .orderBy('audit_log.id', 'asc')
    .select('audit_log.*', 'users.email as actor_email', 'users.name as actor_name');
}
