/** Starveil's mark: three polarization bars over a star, above two veil arcs. */
export function Logo({ size = 32 }: { size?: number }) {
  return (
    <svg width={size} height={size} viewBox="0 0 64 64" role="img" aria-label="Starveil">
      <rect width="64" height="64" rx="14" fill="#13183a" />
      <path d="M8 44 C 20 30, 44 30, 56 44" fill="none" stroke="#6c7bd9" strokeWidth="3" strokeLinecap="round" opacity=".55" />
      <path d="M8 52 C 22 40, 42 40, 56 52" fill="none" stroke="#6c7bd9" strokeWidth="3" strokeLinecap="round" opacity=".3" />
      <g stroke="#f2b544" strokeWidth="3.2" strokeLinecap="round">
        <line x1="14" y1="22" x2="22" y2="18" />
        <line x1="28" y1="14" x2="36" y2="12" />
        <line x1="42" y1="18" x2="50" y2="22" />
      </g>
      <circle cx="32" cy="30" r="4.2" fill="#fff6dc" />
    </svg>
  );
}
