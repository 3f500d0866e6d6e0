import { useEffect, useRef, useState } from 'react';

/**
 * Renders an Observable Plot figure into a div (Plot builds SVG itself, outside React), and again
 * when the options or the available width change.
 */
export function PlotFigure({ make, label, testId, className = '' }: { make: (width: number) => SVGSVGElement | HTMLElement; label: string; testId?: string; className?: string }) {
  const ref = useRef<HTMLDivElement>(null);
  const [width, setWidth] = useState(0);
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    // a scrollbar coming or going is not worth redrawing for (the SVG scales down to fit)
    const ro = new ResizeObserver(([e]) => {
      const w = Math.floor(e.contentRect.width);
      setWidth((old) => (old > 0 && Math.abs(w - old) < 24 ? old : w));
    });
    ro.observe(el);
    return () => ro.disconnect();
  }, []);
  useEffect(() => {
    const el = ref.current;
    if (!el || width <= 0) return;
    const fig = make(width);
    el.replaceChildren(fig);
    return () => fig.remove();
  }, [make, width]);
  return <div ref={ref} role="figure" aria-label={label} data-testid={testId} className={`w-full ${className}`} />;
}
