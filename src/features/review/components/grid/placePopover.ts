import type { CSSProperties } from 'react';

export type Rect = { left: number; top: number; right: number; bottom: number };
const overlaps = (a: Rect, b: Rect) => a.left < b.right && b.left < a.right && a.top < b.bottom && b.top < a.bottom;

/**
 * Where a refusal opens: below, above, right or left of its cell — the first place that lies wholly inside
 * the grid's visible area (under the sticky header) and does not cover the active cell.
 */
export function placePopover(cell: Rect, pop: { w: number; h: number }, area: Rect, avoid: Rect | null, alignRight: boolean): CSSProperties {
  const gap = 2;
  const cw = cell.right - cell.left, ch = cell.bottom - cell.top;
  const xAligned = alignRight ? cell.right - pop.w : cell.left;
  const candidates: [CSSProperties, Rect][] = [
    [{ top: ch + gap, [alignRight ? 'right' : 'left']: 0 }, { left: xAligned, top: cell.bottom + gap, right: xAligned + pop.w, bottom: cell.bottom + gap + pop.h }],
    [{ bottom: ch + gap, [alignRight ? 'right' : 'left']: 0 }, { left: xAligned, top: cell.top - gap - pop.h, right: xAligned + pop.w, bottom: cell.top - gap }],
    [{ top: 0, left: cw + gap }, { left: cell.right + gap, top: cell.top, right: cell.right + gap + pop.w, bottom: cell.top + pop.h }],
    [{ top: 0, right: cw + gap }, { left: cell.left - gap - pop.w, top: cell.top, right: cell.left - gap, bottom: cell.top + pop.h }],
  ];
  // how far a place reaches outside the visible area (0: wholly inside)
  const overflow = (r: Rect) => Math.max(0, area.left - r.left) + Math.max(0, r.right - area.right) + Math.max(0, area.top - r.top) + Math.max(0, r.bottom - area.bottom);
  const free = candidates.filter(([, r]) => !(avoid && overlaps(r, avoid)));
  const [style, r] = (free.length ? free : candidates).reduce((best, c) => (overflow(c[1]) < overflow(best[1]) ? c : best));
  // what still sticks out is moved back inside the grid
  const dx = r.right > area.right ? area.right - r.right : r.left < area.left ? area.left - r.left : 0;
  const dy = r.bottom > area.bottom ? area.bottom - r.bottom : r.top < area.top ? area.top - r.top : 0;
  return dx || dy ? { ...style, transform: `translate(${dx}px, ${dy}px)` } : style;
}
