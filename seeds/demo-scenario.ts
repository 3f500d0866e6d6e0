// The invented demo scenario: the Kestrel Ridge Polarimetric Survey, observing from the (fictional)
// Kestrel Ridge Observatory with two instruments in R and V. Everything here is made up.
export const SURVEY_NAME = 'Kestrel Ridge Polarimetric Survey';
export const OBSERVATORY_NAME = 'Kestrel Ridge Observatory';

export const DEMO_ACCOUNTS = [
  { email: 'observer@kestrel.example', name: 'Ada Observer', role: 'observer' },
  { email: 'curator@kestrel.example', name: 'Cyril Curator', role: 'curator' },
  { email: 'modeler@kestrel.example', name: 'Mona Modeler', role: 'modeler' },
  { email: 'admin@kestrel.example', name: 'Alex Admin', role: 'admin' },
] as const;

export const DEMO_INSTRUMENTS = [
  { code: 'KR-HAWK', name: 'Hawk dual-beam imaging polarimeter (1.2 m)', bands: 'R,V', description: 'Half-wave-plate imaging polarimeter with a Wollaston prism; 12 arcmin field.' },
  { code: 'KR-OWL', name: 'Owl fibre-fed spectropolarimeter (0.8 m)', bands: 'V', description: 'Rotating quarter/half-wave retarder; broad-band V synthesised from spectra.' },
] as const;

/** Demo fields on the sky: centre (ICRS deg), radius (deg) and number of stars. Deterministic. */
export interface DemoField {
  key: string;
  raDeg: number;
  decDeg: number;
  radiusDeg: number;
  nStars: number;
}
