import type { Virtualizer } from '@tanstack/react-virtual';
import { useCallback, useEffect, useState, type KeyboardEvent, type RefObject } from 'react';
import { cellId, ROW_H, type Cell } from './layout';

/**
 * The grid's active cell and how the keyboard moves it (arrows, Page Up/Down, Home/End with or
 * without Ctrl, Tab inside the row), kept in view: rows through the virtualiser, columns through
 * the browser. `navigable` lists the visible columns the keyboard stops on, in order.
 */
export function useGridNavigation({ navigable, count, batchId, virtualizer, scroller }: { navigable: string[]; count: number; batchId: number; virtualizer: Virtualizer<HTMLDivElement, Element>; scroller: RefObject<HTMLDivElement | null> }) {
  const [active, setActive] = useState<Cell>({ row: 0, col: 'line' });

  useEffect(() => {
    virtualizer.scrollToIndex(active.row, { align: 'auto' });
    const id = requestAnimationFrame(() => document.getElementById(cellId(batchId, active.row, active.col))?.scrollIntoView({ block: 'nearest', inline: 'nearest' }));
    return () => cancelAnimationFrame(id);
  }, [active, virtualizer, batchId]);

  const move = useCallback(
    (dRow: number, dCol: number, from?: Cell) => {
      setActive((a0) => {
        const a = from ?? a0;
        const ci = Math.max(0, navigable.indexOf(a.col));
        const col = navigable[Math.min(navigable.length - 1, Math.max(0, ci + dCol))] ?? a.col;
        const row = Math.min(Math.max(0, count - 1), Math.max(0, a.row + dRow));
        return { row, col };
      });
    },
    [navigable, count],
  );

  /** Handle a movement key on the grid; true when the key was one (Tab at the row's end lets the focus leave). */
  const onNavigationKey = (e: KeyboardEvent<HTMLDivElement>): boolean => {
    const page = Math.max(1, Math.floor((scroller.current?.clientHeight ?? 400) / ROW_H) - 2);
    const jump = e.ctrlKey || e.metaKey;
    switch (e.key) {
      case 'ArrowDown':
        e.preventDefault();
        move(1, 0);
        return true;
      case 'ArrowUp':
        e.preventDefault();
        move(-1, 0);
        return true;
      case 'ArrowRight':
        e.preventDefault();
        move(0, 1);
        return true;
      case 'ArrowLeft':
        e.preventDefault();
        move(0, -1);
        return true;
      case 'PageDown':
        e.preventDefault();
        move(page, 0);
        return true;
      case 'PageUp':
        e.preventDefault();
        move(-page, 0);
        return true;
      case 'Home':
        e.preventDefault();
        setActive(jump ? { row: 0, col: active.col } : { row: active.row, col: navigable[0] });
        return true;
      case 'End':
        e.preventDefault();
        setActive(jump ? { row: count - 1, col: active.col } : { row: active.row, col: navigable[navigable.length - 1] });
        return true;
      case 'Tab': {
        const ci = navigable.indexOf(active.col);
        if ((e.shiftKey && ci <= 0) || (!e.shiftKey && ci >= navigable.length - 1)) return true; // let the focus leave the grid
        e.preventDefault();
        move(0, e.shiftKey ? -1 : 1);
        return true;
      }
    }
    return false;
  };

  return { active, setActive, move, onNavigationKey };
}
