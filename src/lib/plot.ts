/** What the Observable Plot figures of every page share. */
import * as Plot from '@observablehq/plot';

/** The page's own font, for the text Plot writes into its SVG. */
export const PLOT_FONT_FAMILY = 'Inter, ui-sans-serif, system-ui, sans-serif';

/** Largest side of a square figure [px]. */
const SQUARE_MAX_PX = 460;

/**
 * A square figure, at most 460 px a side: a q–u plane with equal spans on both axes then shows
 * equal lengths, so p reads as the distance from the origin and 2θ as the angle from +q.
 */
export function squarePlot(width: number, options: Plot.PlotOptions): ReturnType<typeof Plot.plot> {
  const side = Math.min(width, SQUARE_MAX_PX);
  return Plot.plot({ ...options, width: side, height: side });
}
