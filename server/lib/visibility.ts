import type { Knex } from 'knex';

/**
 * The states of an upload batch, in the order of its life: received → needs_mapping (when the
 * columns need a person) → checking → awaiting_review (or failed) → approved or returned.
 * The one list: the routes' schemas, the client's generated types and every reader use it.
 */
export const BATCH_STATES = ['received', 'needs_mapping', 'checking', 'awaiting_review', 'failed', 'approved', 'returned'] as const;
export type BatchState = (typeof BATCH_STATES)[number];

/**
 * A batch is checked in many short transactions; its rows exist in the tables while it is
 * `checking` (or after it `failed`, until they are cleared) but nobody may see them. Every
 * reader of stars, measurements and batch rows keeps to batches in the visible states.
 */
export const VISIBLE_BATCH_STATES = ['awaiting_review', 'approved', 'returned'] as const satisfies readonly BatchState[];
export const HIDDEN_BATCH_STATES = ['received', 'needs_mapping', 'checking', 'failed'] as const satisfies readonly BatchState[];

/** Subquery: ids of batches whose rows are not visible (few rows; SQLite builds it once per query). */
export function hiddenBatchIds(db: Knex | Knex.Transaction) {
  return db('batches').whereIn('state', HIDDEN_BATCH_STATES as unknown as string[]).select('id');
}

/** Restrict a query over `stars` (or an alias) to stars of visible batches or of no batch. */
export function whereStarVisible<T extends Knex.QueryBuilder>(q: T, db: Knex | Knex.Transaction, table = 'stars'): T {
  return q.where((w) => w.whereNull(`${table}.batch_id`).orWhereNotIn(`${table}.batch_id`, hiddenBatchIds(db))) as T;
}

/** Restrict a query over `measurements` (or an alias) to measurements of visible batches. */
export function whereMeasurementVisible<T extends Knex.QueryBuilder>(q: T, db: Knex | Knex.Transaction, table = 'measurements'): T {
  return q.whereNotIn(`${table}.batch_id`, hiddenBatchIds(db)) as T;
}

/** Subquery: ids of batches being approved or returned in short transactions right now (`batches.settling`, migration 041). */
export function settlingBatchIds(db: Knex | Knex.Transaction) {
  return db('batches').whereNotNull('settling').select('id');
}

/**
 * Restrict a query over `measurements` (or an alias) to approved measurements that readers of
 * approved data may use: a batch being approved or returned in short transactions shows none of
 * its rows as approved until its final flip, so nobody reads it half-decided.
 */
export function whereApprovedSettled<T extends Knex.QueryBuilder>(q: T, db: Knex | Knex.Transaction, table = 'measurements'): T {
  return q.where(`${table}.state`, 'approved').whereNotIn(`${table}.batch_id`, settlingBatchIds(db)) as T;
}
