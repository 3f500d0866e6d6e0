// The package ships no types; these are the few projections the sky map uses.
declare module 'd3-geo-projection' {
  import type { GeoProjection } from 'd3-geo';
  /** Mollweide's equal-area projection of the whole sphere into a 2:1 ellipse. */
  export function geoMollweide(): GeoProjection;
  /** Hammer's equal-area projection (Aitoff-like ellipse). */
  export function geoHammer(): GeoProjection;
}
