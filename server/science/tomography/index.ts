/**
 * Sightline tomography (METHODS.md "Tomography"): pure, browser-safe. The worker pool that fits
 * many cells on threads lives in server/tomography/pool.ts.
 */
export * from './types';
export { fitSightline, resolveFitOptions, DEFAULT_FIT_OPTIONS, percentileSorted, jumpBetween, isComplex } from './fit';
export type { ResolvedFitOptions } from './fit';
export { fitSegment, fitSegmentInto, segmentNegTwoLogLikelihood } from './segmentCost';
export type { SegmentFit } from './segmentCost';
export { SegmentTable } from './segmentTable';
export type { SegmentCoster } from './segmentTable';
export { PeltSolver, peltPartition, exhaustivePartition } from './partition';
export type { Partition } from './partition';
export { blendChi2, mergeBlends, chi2ForTail } from './blend';
export type { SegmentMoments, BlendSettings } from './blend';
export { makeStarDistanceSampler, distanceSigmaPc } from './distanceDraws';
export type { DistanceSampler } from './distanceDraws';
export { synthesizeField, cloudFromSpec } from './synthesize';
export type { SyntheticCloudSpec, SyntheticCloud, SynthesizeOptions, SyntheticField } from './synthesize';
