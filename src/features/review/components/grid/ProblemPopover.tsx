import { useLayoutEffect, useRef, useState, type CSSProperties } from 'react';
import { FIELD_BY_KEY } from '../../fields';
import { formatField } from '../gridColumns';
import { placePopover } from './placePopover';
import type { Problem } from './problems';

/** A refused or stale edit, opened beside its cell inside the grid. */
export function ProblemPopover({ problem, alignRight, onDismiss, onReload }: { problem: Problem; alignRight: boolean; onDismiss: () => void; onReload: () => void }) {
  const spec = FIELD_BY_KEY.get(problem.field);
  const ref = useRef<HTMLDivElement>(null);
  const [place, setPlace] = useState<CSSProperties>({ top: '100%', visibility: 'hidden' });
  useLayoutEffect(() => {
    const el = ref.current;
    const cellEl = el?.parentElement;
    const grid = el?.closest('[role="grid"]');
    if (!el || !cellEl || !grid) return;
    const g = grid.getBoundingClientRect();
    const header = grid.querySelector('[role="rowgroup"]')?.getBoundingClientRect();
    const area = { left: g.left + 1, right: g.left + grid.clientWidth - 1, top: (header?.bottom ?? g.top) - 1, bottom: g.top + grid.clientHeight - 1 };
    const cell = cellEl.getBoundingClientRect();
    const id = grid.getAttribute('aria-activedescendant');
    const activeEl = id ? document.getElementById(id) : null;
    const avoid = activeEl && activeEl !== cellEl ? activeEl.getBoundingClientRect() : null;
    setPlace(placePopover(cell, { w: el.offsetWidth, h: el.offsetHeight }, area, avoid, alignRight));
  }, [alignRight, problem]);
  return (
    <div
      ref={ref}
      role="alert"
      data-testid="cell-problem"
      data-kind={problem.kind}
      onClick={(e) => e.stopPropagation()}
      style={place}
      className="absolute z-30 w-80 max-w-[min(20rem,80vw)] whitespace-normal rounded-md border border-bad/50 bg-card p-2.5 text-left text-xs not-italic leading-snug text-ink shadow-lg"
    >
      {problem.kind === 'refused' ? (
        <p>
          <b className="text-bad">Not saved.</b> Line {problem.line}, {spec?.header ?? problem.field}: “{problem.typed === '' ? '(empty)' : problem.typed}” — {problem.message}.
        </p>
      ) : (
        <p>
          <b className="text-bad">Not saved: changed by someone else.</b> Line {problem.line} is now at version {problem.current.version}; the server has {spec?.header ?? problem.field} ={' '}
          <span className="num font-mono font-semibold">{spec ? formatField(spec, (problem.current as Record<string, unknown>)[problem.field]) : String((problem.current as Record<string, unknown>)[problem.field])}</span>. Your “{problem.typed}” was not written.
        </p>
      )}
      <div className="mt-2 flex gap-2">
        {problem.kind === 'stale' && (
          <button type="button" onClick={onReload} className="rounded bg-night px-2 py-0.5 text-white hover:bg-night-2">
            Load the current values
          </button>
        )}
        <button type="button" onClick={onDismiss} className="rounded border border-line px-2 py-0.5 text-night hover:bg-veil-soft">
          Dismiss
        </button>
      </div>
    </div>
  );
}
