/** Sizes and small helpers the measurement grid's parts share. */
import type { ReviewRow } from '../../types';

/** Height of the sticky header row, px (the virtualiser keeps rows from hiding under it). */
export const HEADER_H = 44;
export const ROW_H = 34;

/** A cell of the grid: row index among the loaded rows, column id. */
export interface Cell {
  row: number;
  col: string;
}

/** The cell being typed in: where, the text the editor starts from, and whether it starts selected. */
export type EditingCell = Cell & { text: string; selectAll: boolean };

/** Rough height before a row is measured: held rows carry a second line or their candidates. */
export function estimateRow(r: ReviewRow | undefined): number {
  if (!r) return ROW_H;
  if (r.state === 'ambiguous') return Math.max(ROW_H, 22 + 16 * r.candidates.length);
  if (r.competing) return 48;
  return ROW_H;
}

/** The DOM id of a cell (aria-activedescendant points at it). */
export const cellId = (batchId: number, row: number, col: string) => `b${batchId}-r${row}-${col}`;

/** Opaque grounds for frozen cells (the row's tint composed on white), so scrolled cells never show through. */
export function frozenGround(m: ReviewRow, index: number, selected: boolean, active: boolean, problem: boolean): string {
  if (problem) return '#f7ebed';
  if (active) return '#eeeffc';
  if (selected) return '#fef8ec';
  if (m.state === 'conflict') return '#fcfaf6';
  if (m.state === 'ambiguous') return '#fefbf4';
  return index % 2 ? '#fbfaf7' : '#ffffff';
}
export const FROZEN_EDGE = '6px 0 6px -4px rgba(19, 24, 58, 0.18)';
