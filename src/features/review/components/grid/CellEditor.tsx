import { useEffect, useRef } from 'react';

/** The text input over a cell while it is edited: Enter and Tab save and move, Esc cancels, leaving it saves. */
export function CellEditor({ initial, selectAll, label, numeric, onCommit, onCancel }: { initial: string; selectAll: boolean; label: string; numeric: boolean; onCommit: (text: string, dRow: number, dCol: number, refocus?: boolean) => void; onCancel: () => void }) {
  const ref = useRef<HTMLInputElement>(null);
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    el.focus({ preventScroll: true });
    if (selectAll) el.select();
    else el.setSelectionRange(el.value.length, el.value.length);
  }, [selectAll]);
  return (
    <input
      ref={ref}
      defaultValue={initial}
      aria-label={label}
      data-testid="cell-editor"
      inputMode={numeric ? 'decimal' : 'text'}
      spellCheck={false}
      onClick={(e) => e.stopPropagation()}
      onKeyDown={(e) => {
        e.stopPropagation();
        if (e.key === 'Enter') {
          e.preventDefault();
          onCommit(e.currentTarget.value, e.shiftKey ? -1 : 1, 0);
        } else if (e.key === 'Tab') {
          e.preventDefault();
          onCommit(e.currentTarget.value, 0, e.shiftKey ? -1 : 1);
        } else if (e.key === 'Escape') {
          e.preventDefault();
          onCancel();
        }
      }}
      onBlur={(e) => onCommit(e.currentTarget.value, 0, 0, false)}
      className={`h-full w-full min-w-0 border-0 bg-white px-2 text-[13px] text-ink outline-none ring-2 ring-inset ring-night ${numeric ? 'num text-right font-mono' : ''}`}
    />
  );
}
