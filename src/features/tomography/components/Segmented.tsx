/** A small group of mutually exclusive choices, shown as joined buttons (a radio group to assistive technology). */
export function Segmented<T extends string>({ label, value, options, onChange }: { label: string; value: T; options: readonly { value: T; label: string }[]; onChange: (v: T) => void }) {
  return (
    <div role="radiogroup" aria-label={label} className="inline-flex items-center gap-2 text-sm">
      <span className="text-muted">{label}</span>
      <span className="inline-flex overflow-hidden rounded-md border border-line bg-white">
        {options.map((o) => {
          const on = o.value === value;
          return (
            <button
              key={o.value}
              type="button"
              role="radio"
              aria-checked={on}
              onClick={() => onChange(o.value)}
              className={`px-3 py-1.5 text-sm transition not-first:border-l not-first:border-line ${on ? 'bg-night font-medium text-white' : 'text-night hover:bg-veil-soft'}`}
            >
              {o.label}
            </button>
          );
        })}
      </span>
    </div>
  );
}
