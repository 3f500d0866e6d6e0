/** The pure science core: no I/O, no server imports; safe to import from the browser. */
export * from './random.js';
export * from './polarization.js';
export * from './debias.js';
export * from './axial.js';
export * from './distance.js';
export * from './frames.js';
export * from './separation.js';
export * from './sexagesimal.js';
export * from './chi2.js';
export * from './combine.js';
export * from './healpix.js';
export * from './serkowski.js';
