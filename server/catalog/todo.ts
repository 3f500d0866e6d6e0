import type { Knex } from 'knex';
import { hasRole, type SessionUser } from '../auth/roles.js';

export interface TodoItem {
  /** stable key, e.g. needs_mapping */
  kind: string;
  count: number;
  /** plain sentence with the count, e.g. "1 batch needs your column mapping" */
  text: string;
  /** client path to act on it */
  link: string;
}

const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

/**
 * What waits for this person, for the Overview: an observer's counts are about their own batches
 * only; curators (and admins) see the review work of everyone.
 */
export async function todoFor(db: Knex, user: SessionUser): Promise<TodoItem[]> {
  const items: TodoItem[] = [];
  const byState = async (own: boolean) => {
    let q = db('batches').select('state').count({ n: '*' }).groupBy('state');
    if (own) q = q.where('uploaded_by', user.id);
    const out: Record<string, number> = {};
    for (const r of (await q) as { state: string; n: number }[]) out[r.state] = Number(r.n);
    return out;
  };
  const firstOf = async (state: string, own: boolean) => {
    let q = db('batches').where({ state }).orderBy('id');
    if (own) q = q.where('uploaded_by', user.id);
    return (await q.first('id'))?.id as number | undefined;
  };
  const batchLink = (n: number, id: number | undefined, list: string) => (n === 1 && id ? `/batches/${id}` : list);

  if (user.role === 'observer' || user.role === 'curator' || user.role === 'admin') {
    const own = await byState(true);
    const mapping = own.needs_mapping ?? 0;
    if (mapping) items.push({ kind: 'needs_mapping', count: mapping, text: `${plural(mapping, 'batch needs', 'batches need')} your column mapping`, link: batchLink(mapping, await firstOf('needs_mapping', true), '/batches') });
    const returned = own.returned ?? 0;
    if (returned) items.push({ kind: 'returned', count: returned, text: `${plural(returned, 'batch was', 'batches were')} returned to you: read the note and send a corrected file`, link: batchLink(returned, await firstOf('returned', true), '/batches') });
    const failed = own.failed ?? 0;
    if (failed) items.push({ kind: 'failed', count: failed, text: `${plural(failed, 'upload', 'uploads')} could not be checked`, link: batchLink(failed, await firstOf('failed', true), '/batches') });
    if (user.role === 'observer') {
      const waiting = own.awaiting_review ?? 0;
      if (waiting) items.push({ kind: 'awaiting_review', count: waiting, text: `${plural(waiting, 'of your batches waits', 'of your batches wait')} for a curator`, link: '/batches' });
    }
  }
  if (hasRole(user, ['curator'])) {
    const all = await byState(false);
    const waiting = all.awaiting_review ?? 0;
    if (waiting) items.push({ kind: 'review', count: waiting, text: `${plural(waiting, 'batch waits', 'batches wait')} for review`, link: '/review' });
    const held = await db('measurements as m').join('batches as b', 'b.id', 'm.batch_id').where('b.state', 'awaiting_review').whereIn('m.state', ['conflict', 'ambiguous']).count({ n: '*' }).first();
    const nHeld = Number(held?.n ?? 0);
    if (nHeld) items.push({ kind: 'held_rows', count: nHeld, text: `${plural(nHeld, 'row is', 'rows are')} held as conflicts or ambiguous matches in batches under review`, link: '/review' });
  }
  return items;
}
