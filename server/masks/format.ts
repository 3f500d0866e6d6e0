/**
 * Moved: the cells of a run as answers show them live in server/tomography (criteria.ts,
 * cellOutput.ts, layersCsv.ts, sendCells.ts; public through server/tomography/service.ts) and
 * the CSV writer in server/lib/csv.ts. This file only keeps the routes compiling until they
 * import from there; it goes then.
 */
export { filterCells, runSummary, sendCells, setProvenanceHeaders, type CellForOutput } from '../tomography/service.js';
export { streamCsv } from '../lib/csv.js';
