import { describe, expect, it } from 'vitest';
import { placePopover, type Rect } from '../../src/features/review/components/grid/placePopover';
import { problemKey, problemText, type Problem } from '../../src/features/review/components/grid/problems';
import { estimateRow, ROW_H } from '../../src/features/review/components/grid/layout';
import type { ReviewRow } from '../../src/lib/api/types';

// Geometry worked by hand on the rectangles below (no outside reference applies: the rule is ours).
const area: Rect = { left: 0, top: 44, right: 800, bottom: 600 };
const pop = { w: 320, h: 80 };
const cellAt = (left: number, top: number): Rect => ({ left, top, right: left + 100, bottom: top + 34 });

describe('placePopover', () => {
  it('opens below the cell when there is room', () => {
    expect(placePopover(cellAt(100, 100), pop, area, null, false)).toEqual({ top: 36, left: 0 });
  });
  it('aligns to the cell’s right edge for a right-aligned (numeric) column', () => {
    expect(placePopover(cellAt(400, 100), pop, area, null, true)).toEqual({ top: 36, right: 0 });
  });
  it('opens above a cell near the bottom of the visible area', () => {
    // below would end at 560 + 34 + 2 + 80 = 676 > 600; above ends at 558 and starts at 478
    expect(placePopover(cellAt(100, 560), pop, area, null, false)).toEqual({ bottom: 36, left: 0 });
  });
  it('does not cover the active cell when another place fits', () => {
    const active = { left: 100, top: 140, right: 200, bottom: 174 }; // the row under the cell
    // below covers the active cell; above would stick out under the header (top 18 < 44); right fits wholly
    expect(placePopover(cellAt(100, 100), pop, area, active, false)).toEqual({ top: 0, left: 102 });
  });
  it('moves what still sticks out back inside the grid', () => {
    const narrow: Rect = { left: 0, top: 44, right: 300, bottom: 600 };
    // every place overflows the 300 px wide area; below overflows least (by 120 px on the right)
    expect(placePopover(cellAt(100, 100), pop, narrow, null, false)).toEqual({ top: 36, left: 0, transform: 'translate(-120px, 0px)' });
  });
});

describe('problemText', () => {
  it('names the line, the column header and what was typed', () => {
    const p: Problem = { kind: 'refused', line: 7, field: 'q', typed: '3', message: 'expected a value ≤ 1' };
    expect(problemText(p)).toBe('Line 7, q [fraction]: “3” was not saved — expected a value ≤ 1.');
    expect(problemText({ ...p, typed: '' })).toContain('“(empty)”');
  });
  it('says a stale edit met a newer version and shows the server’s value', () => {
    const p: Problem = { kind: 'stale', line: 2, field: 'mjd', typed: '60000', current: { id: 5, version: 4, state: 'pending', mjd: 59999.5 } };
    expect(problemText(p)).toBe('Line 2, MJD [d]: “60000” was not saved — someone else changed this measurement meanwhile (now version 4, mjd = 59999.5).');
    expect(problemText({ ...p, current: { id: 5, version: 4, state: 'pending', mjd: null } })).toContain('mjd = empty');
  });
  it('keys a problem by measurement and field', () => {
    expect(problemKey(12, 'q')).toBe('12:q');
  });
});

describe('estimateRow', () => {
  const row = (over: Partial<ReviewRow>) => ({ state: 'pending', candidates: [], competing: null, ...over }) as ReviewRow;
  it('gives plain rows one line and held rows room for their second line or candidates', () => {
    expect(estimateRow(undefined)).toBe(ROW_H);
    expect(estimateRow(row({}))).toBe(ROW_H);
    expect(estimateRow(row({ state: 'conflict', competing: {} as ReviewRow['competing'] }))).toBe(48);
    const three = [{}, {}, {}] as ReviewRow['candidates'];
    expect(estimateRow(row({ state: 'ambiguous', candidates: three }))).toBe(22 + 16 * 3);
    expect(estimateRow(row({ state: 'ambiguous', candidates: [] }))).toBe(ROW_H);
  });
});
