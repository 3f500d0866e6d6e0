/**
 * A batch being approved or returned in short transactions (server/review/approve.ts) carries
 * `settling` (the decision) and `settle_json` (who, the note, where it came from, progress).
 * Shared by review, which writes it, and by every answer that shows a batch.
 */
export type Decision = 'approved' | 'returned';

export interface Settle {
  decision: Decision;
  actorId: number;
  note: string | null;
  /** the batch's state before the decision */
  from: string;
  /** measurements to change in all */
  total: number;
  /** pending measurements approved (or rejected) so far */
  changed: number;
  /** withdrawn ones restored (approving) or approved ones withdrawn (returning) so far */
  moved: number;
  /** keyset cursors: the last measurement id changed in each step (each chunk seeks past it instead of scanning the rows done) */
  afterPending?: number;
  afterMoved?: number;
  startedAt: string;
}

/** Progress of a settling batch for its answer (null when it is not settling). */
export function settlingOf(b: { settling?: string | null; settle_json?: string | null }): { decision: Decision; done: number; total: number; startedAt: string } | null {
  if (!b.settling || !b.settle_json) return null;
  const s = JSON.parse(b.settle_json) as Settle;
  return { decision: s.decision, done: s.changed + s.moved, total: s.total, startedAt: s.startedAt };
}
