import type { Knex } from 'knex';
import type { OutboxStatus } from './transport.js';

/** Data access of mail: who gets a message, the figures it reports, the outbox as admins read it. */

/** Enabled curators and admins, by id: who is told that a batch waits for review. */
export function enabledReviewers(db: Knex): Promise<{ email: string; name: string }[]> {
  return db('users').whereIn('role', ['curator', 'admin']).andWhere({ disabled: false }).orderBy('id').select('email', 'name');
}

/** Whether an account with this e-mail exists and is enabled (a message to a removed or disabled account is skipped). */
export async function accountEnabled(db: Knex, email: string): Promise<boolean> {
  const account = await db('users').where({ email: email.trim().toLowerCase() }).first('disabled');
  return Boolean(account) && !account.disabled;
}

/** A batch's measurements by state (state → count). */
export async function measurementsByState(db: Knex, batchId: number): Promise<Map<string, number>> {
  const rows = (await db('measurements').where({ batch_id: batchId }).select('state').count({ n: '*' }).groupBy('state')) as { state: string; n: number }[];
  return new Map(rows.map((r) => [r.state, Number(r.n)]));
}

/** The uploader of a decided batch (name and e-mail) and the row counts intake stored for it. */
export async function decidedBatch(db: Knex, batch: { id: number; uploaded_by: number }) {
  const uploader = (await db('users').where({ id: batch.uploaded_by }).first('name', 'email')) as { name: string; email: string } | undefined;
  const row = await db('batches').where({ id: batch.id }).first('counts_json');
  const counts = (row?.counts_json ? JSON.parse(row.counts_json) : {}) as Record<string, number>;
  return { uploader, counts };
}

export interface OutboxRow {
  id: number;
  to_address: string;
  from_address: string;
  subject: string;
  text_body: string;
  html_body: string | null;
  transport: string;
  status: OutboxStatus;
  error: string | null;
  created_at: string;
  sent_at: string | null;
}

/** The outbox, newest first. */
export async function listOutbox(db: Knex, page: { limit: number; offset: number }) {
  const [{ n }] = await db('outbox').count({ n: '*' });
  const rows: OutboxRow[] = await db('outbox').orderBy('id', 'desc').limit(page.limit).offset(page.offset);
  return {
    messages: rows.map((r) => ({
      id: r.id,
      to: r.to_address,
      from: r.from_address,
      subject: r.subject,
      text: r.text_body,
      createdAt: r.created_at,
      transport: r.transport,
      status: r.status,
      error: r.error,
    })),
    total: Number(n),
  };
}
