/** Small display helpers the pages share: sizes, ages, counts, fixed decimals, percentages. */

export function formatBytes(n: number): string {
  if (!Number.isFinite(n)) return '—';
  if (n < 1024) return `${n} B`;
  const units = ['KiB', 'MiB', 'GiB'];
  let v = n / 1024;
  let i = 0;
  while (v >= 1024 && i < units.length - 1) {
    v /= 1024;
    i++;
  }
  return `${v.toFixed(v < 10 ? 1 : 0)} ${units[i]}`;
}

/** "just now", "5 min ago", "3 h ago", "2 days ago", then the date. */
export function formatAge(iso: string, now = Date.now()): string {
  const t = Date.parse(iso);
  if (!Number.isFinite(t)) return '—';
  const s = Math.max(0, (now - t) / 1000);
  if (s < 45) return 'just now';
  if (s < 3600) return `${Math.round(s / 60)} min ago`;
  if (s < 86400) return `${Math.round(s / 3600)} h ago`;
  if (s < 14 * 86400) return `${Math.round(s / 86400)} days ago`;
  return new Date(t).toLocaleDateString('en');
}

export const formatCount = (n: number | null | undefined) => (n == null ? '—' : n.toLocaleString('en'));

/** A fixed number of decimals, or a dash for a missing value. */
export const fixed = (v: number | null | undefined, digits: number) => (v == null || !Number.isFinite(v) ? '—' : v.toFixed(digits));

export const percentOf = (done: number, total: number) => (total > 0 ? Math.min(100, Math.max(0, (100 * done) / total)) : 0);
