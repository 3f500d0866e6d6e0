/** The pure science core: no I/O, no server imports; safe to import from the browser. */
export * from './random';
export * from './polarization';
export * from './debias';
export * from './axial';
export * from './distance';
export * from './frames';
export * from './separation';
export * from './sexagesimal';
export * from './chi2';
export * from './combine';
export * from './healpix';
export * from './serkowski';
