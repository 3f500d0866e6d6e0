import { useEffect, useRef, type ReactNode } from 'react';

/** A modal dialog on the native <dialog> element (focus kept inside, Escape closes). */
export function Dialog({ open, title, onClose, children, footer }: { open: boolean; title: string; onClose: () => void; children: ReactNode; footer?: ReactNode }) {
  const ref = useRef<HTMLDialogElement>(null);
  useEffect(() => {
    const d = ref.current;
    if (!d) return;
    if (open && !d.open) d.showModal();
    if (!open && d.open) d.close();
  }, [open]);
  return (
    <dialog
      ref={ref}
      aria-label={title}
      onClose={onClose}
      onCancel={(e) => {
        e.preventDefault();
        onClose();
      }}
      className="m-auto w-full max-w-lg rounded-xl border border-line bg-card p-0 text-ink shadow-2xl backdrop:bg-night/40"
    >
      {open && (
        <div className="space-y-4 p-5">
          <header className="flex items-start justify-between gap-4">
            <h2 className="text-lg font-semibold text-night">{title}</h2>
            <button type="button" onClick={onClose} className="rounded px-1.5 text-lg leading-none text-muted hover:bg-veil-soft" aria-label="Close">
              ×
            </button>
          </header>
          {children}
          {footer && <footer className="flex justify-end gap-2 pt-1">{footer}</footer>}
        </div>
      )}
    </dialog>
  );
}
