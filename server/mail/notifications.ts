import type { Knex } from 'knex';
import type { Mailer, SendResult } from './transport.js';
import { accountEnabled, decidedBatch, enabledReviewers, measurementsByState } from './queries.js';

/** A batch's row counts as intake reports them (structurally the same as intake's BatchCounts). */
export interface MailBatchCounts {
  rows?: number;
  accepted?: number;
  rejected?: number;
  duplicates?: number;
  conflicts?: number;
  ambiguous?: number;
  newStars?: number;
  matchedStars?: number;
  warnings?: number;
}

export interface MailBatch {
  id: number;
  filename: string;
  uploadedBy: { name: string; email: string };
}

export interface Notified extends SendResult {
  to: string;
}

const COUNT_LINES: [keyof MailBatchCounts, string][] = [
  ['rows', 'rows read'],
  ['accepted', 'accepted'],
  ['rejected', 'rejected'],
  ['duplicates', 'duplicates'],
  ['conflicts', 'conflicts'],
  ['ambiguous', 'ambiguous star match'],
  ['newStars', 'new stars'],
  ['matchedStars', 'known stars matched'],
  ['warnings', 'rows with warnings'],
];

/** The counts as an aligned plain-text table, skipping figures intake did not report. */
export function countsTable(counts: MailBatchCounts | null | undefined): string {
  const lines = COUNT_LINES.filter(([k]) => typeof counts?.[k] === 'number').map(([k, label]) => [label, counts![k]!.toLocaleString('en-US')] as const);
  if (!lines.length) return '  (no row counts yet)';
  const labelWidth = Math.max(...lines.map(([l]) => l.length));
  const numWidth = Math.max(...lines.map(([, n]) => n.length));
  return lines.map(([l, n]) => `  ${l.padEnd(labelWidth)}  ${n.padStart(numWidth)}`).join('\n');
}

const DECISION_LINES: [string, string][] = [
  ['approved', 'approved'],
  ['rejected', 'rejected'],
  ['withdrawn', 'withdrawn from the catalog'],
  ['conflict', 'still held: conflicts'],
  ['ambiguous', 'still held: ambiguous star match'],
  ['pending', 'pending'],
];

/** The batch's measurements by state after the decision, as an aligned table; null when there are none. */
async function decisionTable(db: Knex, batchId: number): Promise<string | null> {
  try {
    const by = await measurementsByState(db, batchId);
    const lines = DECISION_LINES.filter(([k]) => by.get(k)).map(([k, label]) => [label, by.get(k)!.toLocaleString('en-US')] as const);
    if (!lines.length) return null;
    const w = Math.max(...lines.map(([l]) => l.length));
    const nw = Math.max(...lines.map(([, n]) => n.length));
    return lines.map(([l, n]) => `  ${l.padEnd(w)}  ${n.padStart(nw)}`).join('\n');
  } catch (e) {
    console.error(`mail: could not count the decision of batch ${batchId}: ${e instanceof Error ? e.message : e}`);
    return null;
  }
}

const FOOTER = '\n\n-- \nStarveil · sent automatically, replies are not read.';

/**
 * Tell every enabled curator and admin that a batch has been checked and waits for review.
 * One message per person, so nobody sees the others' addresses. Never throws.
 */
export async function notifyCuratorsOfNewBatch(
  mailer: Mailer,
  db: Knex,
  batch: MailBatch & { counts: MailBatchCounts | null },
): Promise<Notified[]> {
  let people: { email: string; name: string }[];
  try {
    people = await enabledReviewers(db);
  } catch (e) {
    console.error(`mail: could not list curators for batch ${batch.id}: ${e instanceof Error ? e.message : e}`);
    return [];
  }
  const link = mailer.link(`/batches/${batch.id}`);
  const subject = `Batch #${batch.id} waits for review: ${batch.filename}`;
  const results: Notified[] = [];
  for (const person of people) {
    const text =
      `Hello ${person.name},\n\n` +
      `${batch.uploadedBy.name} <${batch.uploadedBy.email}> uploaded "${batch.filename}" (batch #${batch.id}). ` +
      `Starveil has checked every row and the batch now waits for a curator's review.\n\n` +
      `${countsTable(batch.counts)}\n\n` +
      `Review it here:\n${link}\n\n` +
      `You get this message because you are a curator or admin on Starveil.` +
      FOOTER;
    results.push({ to: person.email, ...(await mailer.send({ to: person.email, subject, text })) });
  }
  return results;
}

/**
 * Tell the uploader what the curator decided, with the counts, the curator's note and a link to
 * the batch. Skipped (null) when the uploader's account no longer exists or is disabled. Never throws.
 */
export async function notifyObserverOfReview(
  mailer: Mailer,
  db: Knex,
  batch: MailBatch,
  decision: 'approved' | 'returned',
  note: string | null,
  counts: MailBatchCounts | null,
): Promise<Notified | null> {
  try {
    if (!(await accountEnabled(db, batch.uploadedBy.email))) return null;
  } catch (e) {
    console.error(`mail: could not look up the uploader of batch ${batch.id}: ${e instanceof Error ? e.message : e}`);
    return null;
  }
  const link = mailer.link(`/batches/${batch.id}`);
  const subject = decision === 'approved'
    ? `Batch #${batch.id} approved: ${batch.filename}`
    : `Batch #${batch.id} returned for changes: ${batch.filename}`;
  const what = decision === 'approved'
    ? 'has been approved by a curator.'
    : 'has been returned to you by a curator for changes. The note below and the batch page say what needs fixing.';
  const noteText = note && note.trim() ? note.trim().split('\n').map((l) => `  ${l}`).join('\n') : '  (the curator left no note)';
  const decided = await decisionTable(db, batch.id);
  const text =
    `Hello ${batch.uploadedBy.name},\n\n` +
    `Your batch "${batch.filename}" (batch #${batch.id}) ${what}\n\n` +
    `Curator's note:\n${noteText}\n\n` +
    (decided ? `The decision, measurement by measurement:\n${decided}\n\n` : '') +
    `Row counts at intake:\n${countsTable(counts)}\n\n` +
    `See the batch:\n${link}` +
    FOOTER;
  return { to: batch.uploadedBy.email, ...(await mailer.send({ to: batch.uploadedBy.email, subject, text })) };
}

/**
 * The review service's decision hook: look up the uploader and the stored row counts, then tell
 * the uploader (notifyObserverOfReview). Runs after the decision has committed and never holds up
 * the request; a failure is logged.
 */
export function notifyUploaderOfDecision(mailer: Mailer, db: Knex) {
  return (batch: { id: number; filename: string; uploaded_by: number }, decision: 'approved' | 'returned', note: string | null, counts: Record<string, number>): void => {
    void (async () => {
      const { uploader, counts: stored } = await decidedBatch(db, batch);
      await notifyObserverOfReview(mailer, db, { id: batch.id, filename: batch.filename, uploadedBy: uploader! }, decision, note, { ...stored, ...counts });
    })().catch((e) => console.error('review notification', e));
  };
}
