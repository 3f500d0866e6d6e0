import type { ButtonHTMLAttributes, InputHTMLAttributes, ReactNode, SelectHTMLAttributes } from 'react';

export function Button({ tone = 'primary', className = '', ...rest }: ButtonHTMLAttributes<HTMLButtonElement> & { tone?: 'primary' | 'quiet' | 'danger' }) {
  const tones = {
    primary: 'bg-night text-white hover:bg-night-2 disabled:opacity-50',
    quiet: 'bg-transparent text-night border border-line hover:bg-veil-soft',
    danger: 'bg-bad text-white hover:opacity-90',
  } as const;
  return <button className={`inline-flex items-center gap-2 rounded-md px-3.5 py-2 text-sm font-medium transition ${tones[tone]} ${className}`} {...rest} />;
}

export function Field({ label, hint, error, children }: { label: string; hint?: string; error?: string | null; children: ReactNode }) {
  return (
    <label className="block space-y-1">
      <span className="text-sm font-medium text-ink">{label}</span>
      {children}
      {hint && !error && <span className="block text-xs text-muted">{hint}</span>}
      {error && <span role="alert" className="block text-xs text-bad">{error}</span>}
    </label>
  );
}

export function TextInput(props: InputHTMLAttributes<HTMLInputElement>) {
  return <input {...props} className={`w-full rounded-md border border-line bg-white px-3 py-2 text-sm outline-none focus:border-veil focus:ring-2 focus:ring-veil/30 ${props.className ?? ''}`} />;
}

export function Select(props: SelectHTMLAttributes<HTMLSelectElement>) {
  return <select {...props} className={`rounded-md border border-line bg-white px-2 py-1.5 text-sm outline-none focus:border-veil ${props.className ?? ''}`} />;
}

export function Card({ title, children, actions }: { title?: string; children: ReactNode; actions?: ReactNode }) {
  return (
    <section className="rounded-xl border border-line bg-card p-5 shadow-[0_1px_0_rgba(19,24,58,0.04)]">
      {(title || actions) && (
        <header className="mb-4 flex items-center justify-between gap-4">
          {title && <h2 className="text-lg font-semibold text-night">{title}</h2>}
          {actions}
        </header>
      )}
      {children}
    </section>
  );
}

export function PageTitle({ children, sub }: { children: ReactNode; sub?: ReactNode }) {
  return (
    <div className="mb-6">
      <h1 className="text-2xl font-semibold tracking-tight text-night">{children}</h1>
      {sub && <p className="mt-1 text-sm text-muted">{sub}</p>}
    </div>
  );
}

export function Notice({ tone = 'info', children }: { tone?: 'info' | 'bad' | 'ok'; children: ReactNode }) {
  const tones = { info: 'border-veil/40 bg-veil-soft text-night', bad: 'border-bad/40 bg-bad/5 text-bad', ok: 'border-ok/40 bg-ok/5 text-ok' } as const;
  return <div role={tone === 'bad' ? 'alert' : 'status'} className={`rounded-md border px-3 py-2 text-sm ${tones[tone]}`}>{children}</div>;
}
