/**
 * Colours of the sky map, drawn on the map's night-indigo sphere: a categorical set for the
 * number of layers and a sequential ramp for the largest angle jump (starlight: blue-violet through
 * rose to amber and pale gold; single-layer cells in a neutral grey). Both stay readable on the dark ground and apart from each other.
 */

/** Number of layers → colour; 4 and more share the last. */
export const LAYER_COLOURS = ['#8a8fa8', '#7cc4c0', '#8f9cf0', '#f2b544', '#e86f9a'] as const;
export const LAYER_CLASSES = [
  { layers: 0, label: 'no layer' },
  { layers: 1, label: '1 layer' },
  { layers: 2, label: '2 layers' },
  { layers: 3, label: '3 layers' },
  { layers: 4, label: '4 or more' },
] as const;

export const layerClass = (nLayers: number) => Math.max(0, Math.min(LAYER_CLASSES.length - 1, Math.floor(nLayers)));
export const layerColour = (nLayers: number) => LAYER_COLOURS[layerClass(nLayers)];

/** Largest |Δθ| is at most 90° (jumps are wrapped to (−90°, 90°]). */
export const JUMP_DOMAIN_DEG: readonly [number, number] = [0, 90];
export const JUMP_STOPS = ['#5c6fe0', '#a46ade', '#e3649a', '#f39d44', '#fde9a8'] as const;
/** Cells with a single layer have no jump. */
export const NO_JUMP_COLOUR = '#7b7f96';

function hexToRgb(hex: string): [number, number, number] {
  const n = parseInt(hex.slice(1), 16);
  return [(n >> 16) & 255, (n >> 8) & 255, n & 255];
}

/** Linear interpolation in RGB between evenly spaced stops; t is clamped to [0, 1]. */
export function rampColour(stops: readonly string[], t: number): string {
  const x = Math.max(0, Math.min(1, Number.isFinite(t) ? t : 0)) * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(x));
  const f = x - i;
  const a = hexToRgb(stops[i]);
  const b = hexToRgb(stops[i + 1]);
  const c = a.map((v, k) => Math.round(v + f * (b[k] - v)));
  return `rgb(${c[0]}, ${c[1]}, ${c[2]})`;
}

export function jumpColour(maxJumpDeg: number | null): string {
  if (maxJumpDeg == null) return NO_JUMP_COLOUR;
  return rampColour(JUMP_STOPS, (maxJumpDeg - JUMP_DOMAIN_DEG[0]) / (JUMP_DOMAIN_DEG[1] - JUMP_DOMAIN_DEG[0]));
}

/** CSS gradient of the jump ramp, for the legend bar. */
export const JUMP_GRADIENT = `linear-gradient(to right, ${JUMP_STOPS.map((c, i) => `${c} ${(100 * i) / (JUMP_STOPS.length - 1)}%`).join(', ')})`;
