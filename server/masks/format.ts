/**
 * What the modeler-facing read routes share: query criteria on cells, the Stokes/angle
 * convention of an answer, and the CSV and JSON shapes of a list of cells with their layers.
 * Used by GET /sky, GET /masks and GET /sightlines.
 */
import type { Response } from 'express';
import { badRequest } from '../errors.js';
import { safeCsv } from '../intake/csv.js';
import { angleInConvention, jumpInConvention, uInConvention, STOKES_CONVENTIONS, type StokesConvention } from '../science/convention.js';
import type { TomographyJump, TomographyLayer, TomographySegment } from '../science/tomography/types.js';
import type { RunParams } from '../tomography/service.js';

type Query = Record<string, unknown>;

export interface FieldProblem {
  field: string;
  message: string;
}

function single(q: Query, field: string): string | undefined {
  const v = q[field];
  if (v === undefined || v === '') return undefined;
  if (typeof v !== 'string') throw badRequest(`${field} was given more than once; give it once`, { fields: [{ field, message: 'expected one value' }] });
  return v;
}

/** A numeric query parameter, or undefined when absent; 400 naming the field otherwise. */
export function numberParam(q: Query, field: string, rule: { min?: number; max?: number; integer?: boolean } = {}): number | undefined {
  const raw = single(q, field);
  if (raw === undefined) return undefined;
  const n = Number(raw);
  const kind = rule.integer ? 'an integer' : 'a number';
  const range = [rule.min !== undefined ? `≥ ${rule.min}` : '', rule.max !== undefined ? `≤ ${rule.max}` : ''].filter(Boolean).join(' and ');
  const expected = `${kind}${range ? ` ${range}` : ''}`;
  if (!Number.isFinite(n) || (rule.integer && !Number.isInteger(n)) || (rule.min !== undefined && n < rule.min) || (rule.max !== undefined && n > rule.max)) {
    throw badRequest(`${field} must be ${expected}, got "${raw}"`, { fields: [{ field, message: `expected ${expected}` }] });
  }
  return n;
}

/** One of a fixed set of words; the first is the default. */
export function choiceParam<T extends string>(q: Query, field: string, allowed: readonly T[], fallback: T = allowed[0]): T {
  const raw = single(q, field);
  if (raw === undefined) return fallback;
  const v = raw.toLowerCase() as T;
  if (!allowed.includes(v)) throw badRequest(`${field} must be one of ${allowed.join(', ')}, got "${raw}"`, { fields: [{ field, message: `expected one of ${allowed.join(', ')}` }] });
  return v;
}

export const conventionParam = (q: Query): StokesConvention => choiceParam(q, 'convention', STOKES_CONVENTIONS, 'iau');

/** Which run an answer comes from: run=<id>, release=<tag>, or neither (the latest finished run). */
export function runParams(q: Query): { runId?: number; releaseTag?: string } {
  return { runId: numberParam(q, 'run', { min: 1, integer: true }), releaseTag: single(q, 'release') };
}

// ---------------------------------------------------------------------------------------------
// Criteria

/**
 * A cell meets the criteria when it has
 *   at least minStars stars and at least minLayers layers;
 *   when minJumpDeg > 0 or minSignificance > 0: at least one jump between successive layers with
 *     |Δθ| ≥ minJumpDeg and |Δθ|/σ ≥ minSignificance (the same jump);
 *   when a distance bound is given: at least one layer with minDistancePc ≤ distance ≤ maxDistancePc
 *     (a layer's distance is its near edge, the median over Monte Carlo draws).
 */
export interface CellCriteria {
  minStars: number;
  minLayers: number;
  minJumpDeg: number;
  minSignificance: number;
  minDistancePc: number | null;
  maxDistancePc: number | null;
}

export const NO_CRITERIA: CellCriteria = { minStars: 0, minLayers: 0, minJumpDeg: 0, minSignificance: 0, minDistancePc: null, maxDistancePc: null };
/** Masks flag sightlines with more than one cloud unless told otherwise. */
export const MASK_DEFAULTS: CellCriteria = { ...NO_CRITERIA, minLayers: 2 };

export function criteriaParams(q: Query, defaults: CellCriteria = NO_CRITERIA): CellCriteria {
  const c: CellCriteria = {
    minStars: numberParam(q, 'minStars', { min: 0, integer: true }) ?? defaults.minStars,
    minLayers: numberParam(q, 'minLayers', { min: 0, integer: true }) ?? defaults.minLayers,
    minJumpDeg: numberParam(q, 'minJumpDeg', { min: 0, max: 90 }) ?? defaults.minJumpDeg,
    minSignificance: numberParam(q, 'minSignificance', { min: 0 }) ?? defaults.minSignificance,
    minDistancePc: numberParam(q, 'minDistancePc', { min: 0 }) ?? defaults.minDistancePc,
    maxDistancePc: numberParam(q, 'maxDistancePc', { min: 0 }) ?? defaults.maxDistancePc,
  };
  if (c.minDistancePc !== null && c.maxDistancePc !== null && c.maxDistancePc < c.minDistancePc) {
    throw badRequest(`maxDistancePc (${c.maxDistancePc}) must not be below minDistancePc (${c.minDistancePc})`, { fields: [{ field: 'maxDistancePc', message: 'expected ≥ minDistancePc' }] });
  }
  return c;
}

export interface CellLike {
  nStars: number;
  nLayers: number;
  layers: Pick<TomographyLayer, 'distancePc'>[];
  jumps: Pick<TomographyJump, 'deltaThetaDeg' | 'significance'>[];
}

export const jumpCriterionActive = (c: CellCriteria) => c.minJumpDeg > 0 || c.minSignificance > 0;
export const distanceCriterionActive = (c: CellCriteria) => c.minDistancePc !== null || c.maxDistancePc !== null;

export function cellMeetsCriteria(cell: CellLike, c: CellCriteria): boolean {
  if (cell.nStars < c.minStars || cell.nLayers < c.minLayers) return false;
  if (jumpCriterionActive(c) && !cell.jumps.some((j) => Math.abs(j.deltaThetaDeg) >= c.minJumpDeg && j.significance >= c.minSignificance)) return false;
  if (distanceCriterionActive(c)) {
    const lo = c.minDistancePc ?? 0;
    const hi = c.maxDistancePc ?? Infinity;
    if (!cell.layers.some((l) => l.distancePc >= lo && l.distancePc <= hi)) return false;
  }
  return true;
}

/** The criteria in words (ASCII only, so they also fit FITS cards and CSV comments). */
export function describeCriteria(c: CellCriteria): string {
  const parts = [`at least ${c.minStars} stars`, `at least ${c.minLayers} layers`];
  if (jumpCriterionActive(c)) parts.push(`a jump with |dtheta| >= ${c.minJumpDeg} deg and significance >= ${c.minSignificance}`);
  if (distanceCriterionActive(c)) parts.push(`a layer between ${c.minDistancePc ?? 0} and ${c.maxDistancePc ?? 'any'} pc`);
  return parts.join('; ');
}

// ---------------------------------------------------------------------------------------------
// Convention

interface StarLike {
  u: number;
  [k: string]: unknown;
}

export interface CellForOutput extends CellLike {
  nside: number;
  ipix: number;
  centre: { lonDeg: number; latDeg: number; raDeg: number; decDeg: number };
  layerCountSupport: number;
  complex: boolean;
  layers: TomographyLayer[];
  jumps: TomographyJump[];
  segments?: TomographySegment[];
  stars?: StarLike[];
  [k: string]: unknown;
}

/**
 * The cell in the requested convention (server/science/convention.ts): every U-like value
 * (meanU, deltaU, a star's u) changes sign, angles θ → (180° − θ) mod 180, jumps Δθ → −Δθ.
 * IAU returns the cell unchanged.
 */
export function cellInConvention<T extends CellForOutput>(cell: T, conv: StokesConvention): T {
  if (conv === 'iau') return cell;
  return {
    ...cell,
    layers: cell.layers.map((l) => ({ ...l, meanU: uInConvention(l.meanU, conv), deltaU: uInConvention(l.deltaU, conv), thetaDeg: angleInConvention(l.thetaDeg, conv) })),
    jumps: cell.jumps.map((j) => ({ ...j, deltaThetaDeg: jumpInConvention(j.deltaThetaDeg, conv) })),
    ...(cell.segments ? { segments: cell.segments.map((s) => ({ ...s, meanU: uInConvention(s.meanU, conv) })) } : {}),
    ...(cell.stars ? { stars: cell.stars.map((s) => ({ ...s, u: uInConvention(s.u, conv) })) } : {}),
  };
}

/** The conventions note of an answer, rewritten for COSMO where it differs from IAU. */
export function conventionNotes<T extends Record<string, string>>(base: T, conv: StokesConvention): T & { convention: string } {
  if (conv === 'iau') return { ...base, convention: 'IAU (IAU 1973): angles from north through east; Stokes as measured' };
  return {
    ...base,
    stokes: `${base.stokes ?? ''}; COSMO convention: every U-like value (u, meanU, deltaU) has the opposite sign of the IAU value (U_COSMO = −U_IAU), q unchanged`,
    angles: 'degrees in [0, 180), COSMO convention: θ_COSMO = (180° − θ_IAU) mod 180 (from the frame’s north through west); jumps Δθ_COSMO = −Δθ_IAU wrapped to (−90, 90]',
    convention: 'COSMO: U_COSMO = −U_IAU; angles reflected; p, errors and significances unchanged',
  };
}

// ---------------------------------------------------------------------------------------------
// Run metadata shared by every answer

export interface RunForOutput {
  id: number;
  params: RunParams;
  fingerprint: string | null;
  finishedAt: string | null;
  release: string | null;
}

export const runSummary = (run: RunForOutput) => ({ id: run.id, params: run.params, fingerprint: run.fingerprint, finishedAt: run.finishedAt });

const FRAME_NAME = { G: 'Galactic (l, b)', C: 'equatorial ICRS (RA, Dec)' } as const;
export const frameName = (coordsys: 'G' | 'C') => FRAME_NAME[coordsys];

/** Response headers stating where a non-JSON body came from (a MOC or FITS file has no room for a JSON envelope). */
export function setProvenanceHeaders(res: Response, run: RunForOutput, conv: StokesConvention): void {
  res.setHeader('Starveil-Run', String(run.id));
  res.setHeader('Starveil-Release', run.release ?? 'none');
  res.setHeader('Starveil-Convention', conv.toUpperCase());
}

// ---------------------------------------------------------------------------------------------
// CSV

export interface CsvColumn<R> {
  name: string;
  /** unit, or '1' for a dimensionless number, '' for text */
  unit: string;
  about: string;
  get: (r: R) => unknown;
}

/** Rows per piece of a streamed CSV: the event loop gets a turn between pieces. */
export const CSV_ROWS_PER_CHUNK = 500;

/**
 * A CSV with '# ' comment lines first (provenance, then one line per column with its unit), then
 * the header row and the rows, as pieces of about CSV_ROWS_PER_CHUNK rows. Cells go through
 * csv-stringify with SAFE_CSV_CAST: text that a spreadsheet would run as a formula (=, +, -, @,
 * tab, CR first) gets a leading quote; numbers stay numbers.
 */
export function* csvChunks<R>(comments: string[], columns: CsvColumn<R>[], rows: Iterable<R>): Generator<string> {
  const head: string[] = comments.map((c) => `# ${c.replace(/[\r\n]+/g, ' ')}`);
  head.push('# columns (name: unit; meaning):');
  for (const c of columns) head.push(`#   ${c.name}: ${c.unit || 'text'}; ${c.about}`);
  yield `${head.join('\n')}\n${safeCsv([columns.map((c) => c.name)], { eol: '\n' })}`;
  let batch: unknown[][] = [];
  for (const r of rows) {
    batch.push(columns.map((c) => c.get(r)));
    if (batch.length >= CSV_ROWS_PER_CHUNK) {
      yield safeCsv(batch, { eol: '\n' });
      batch = [];
    }
  }
  if (batch.length) yield safeCsv(batch, { eol: '\n' });
}

/** The whole CSV as one string (small answers). */
export function writeCsv<R>(comments: string[], columns: CsvColumn<R>[], rows: Iterable<R>): string {
  let out = '';
  for (const piece of csvChunks(comments, columns, rows)) out += piece;
  return out;
}

/**
 * Stream CSV pieces to the response: each piece is written with backpressure (wait for 'drain')
 * and the event loop gets a turn between pieces, so a large answer neither sits in memory whole
 * nor blocks other requests. Stops when the client goes away.
 */
export async function streamCsv(res: Response, pieces: Iterable<string>): Promise<void> {
  for (const piece of pieces) {
    if (res.destroyed || res.writableEnded) return;
    if (!res.write(piece)) await new Promise<void>((resolve) => { const done = () => { res.off('drain', done); res.off('close', done); resolve(); }; res.once('drain', done); res.once('close', done); });
    else await new Promise<void>((resolve) => setImmediate(resolve));
  }
  if (!res.destroyed) res.end();
}

/** One CSV row: a layer of a cell (layer undefined for a cell without layers). */
interface LayerRow {
  cell: CellForOutput;
  layer?: TomographyLayer;
  jumpIn?: TomographyJump;
}

export function layerCsvColumns(coordsys: 'G' | 'C', conv: StokesConvention): CsvColumn<LayerRow>[] {
  const frame = coordsys === 'G' ? 'Galactic l, b' : 'ICRS RA, Dec';
  const angle = conv === 'iau' ? 'IAU: from north through east' : 'COSMO: (180 - IAU) mod 180, from north through west';
  const u = conv === 'iau' ? 'IAU sign' : 'COSMO sign (-U_IAU)';
  return [
    { name: 'nside', unit: '1', about: 'HEALPix NSIDE of the cell', get: (r) => r.cell.nside },
    { name: 'ipix', unit: '1', about: 'HEALPix NESTED pixel index in the run frame', get: (r) => r.cell.ipix },
    { name: 'lon_deg', unit: 'deg', about: `cell centre longitude (${frame})`, get: (r) => r.cell.centre.lonDeg },
    { name: 'lat_deg', unit: 'deg', about: `cell centre latitude (${frame})`, get: (r) => r.cell.centre.latDeg },
    { name: 'ra_deg', unit: 'deg', about: 'cell centre right ascension (ICRS)', get: (r) => r.cell.centre.raDeg },
    { name: 'dec_deg', unit: 'deg', about: 'cell centre declination (ICRS)', get: (r) => r.cell.centre.decDeg },
    { name: 'n_stars', unit: 'count', about: 'stars in the cell', get: (r) => r.cell.nStars },
    { name: 'n_layers', unit: 'count', about: 'layers (clouds) along the sightline', get: (r) => r.cell.nLayers },
    { name: 'layer_count_support', unit: 'fraction', about: 'share of Monte Carlo draws giving n_layers', get: (r) => r.cell.layerCountSupport },
    { name: 'complex', unit: '0/1', about: 'two significant layers and a jump above the run threshold', get: (r) => r.cell.complex },
    { name: 'layer_index', unit: '1', about: 'layer number, 0 = nearest; empty when the cell has no layer', get: (r) => r.layer?.index },
    { name: 'layer_kind', unit: '', about: 'break (near edge measured) or foreground (upper limit: in front of the nearest star)', get: (r) => r.layer?.kind },
    { name: 'distance_pc', unit: 'pc', about: 'layer near edge, median over draws', get: (r) => r.layer?.distancePc },
    { name: 'distance_lo_pc', unit: 'pc', about: '16th percentile of the layer distance', get: (r) => r.layer?.distanceLoPc },
    { name: 'distance_hi_pc', unit: 'pc', about: '84th percentile of the layer distance', get: (r) => r.layer?.distanceHiPc },
    { name: 'layer_n_stars', unit: 'count', about: 'stars behind this layer up to the next one', get: (r) => r.layer?.nStars },
    { name: 'mean_q', unit: 'fraction', about: 'mean q of the stars behind this layer (sum of all layers so far)', get: (r) => r.layer?.meanQ },
    { name: 'mean_u', unit: 'fraction', about: `mean u of the stars behind this layer, ${u}`, get: (r) => r.layer?.meanU },
    { name: 'delta_q', unit: 'fraction', about: "this layer's own q contribution", get: (r) => r.layer?.deltaQ },
    { name: 'delta_u', unit: 'fraction', about: `this layer's own u contribution, ${u}`, get: (r) => r.layer?.deltaU },
    { name: 'delta_q_err', unit: 'fraction', about: '1-sigma error of delta_q', get: (r) => r.layer?.deltaQErr },
    { name: 'delta_u_err', unit: 'fraction', about: '1-sigma error of delta_u', get: (r) => r.layer?.deltaUErr },
    { name: 'p', unit: 'fraction', about: "polarization fraction of the layer's contribution", get: (r) => r.layer?.p },
    { name: 'p_err', unit: 'fraction', about: '1-sigma error of p', get: (r) => r.layer?.pErr },
    { name: 'p_debiased', unit: 'fraction', about: 'p debiased (modified asymptotic estimator)', get: (r) => r.layer?.pDebiased },
    { name: 'theta_deg', unit: 'deg', about: `polarization angle of the layer in [0, 180), ${angle}; parallel to the plane-of-sky field (dust emission: +90)`, get: (r) => r.layer?.thetaDeg },
    { name: 'theta_err_deg', unit: 'deg', about: '1-sigma error of theta_deg', get: (r) => r.layer?.thetaErrDeg },
    { name: 'snr', unit: '1', about: 'p_debiased / p_err', get: (r) => r.layer?.snr },
    { name: 'jump_deg', unit: 'deg', about: `angle jump from the previous layer to this one, in (-90, 90], ${conv === 'iau' ? 'IAU' : 'COSMO (= -IAU)'}; empty for the nearest layer`, get: (r) => r.jumpIn?.deltaThetaDeg },
    { name: 'jump_sigma_deg', unit: 'deg', about: '1-sigma error of jump_deg', get: (r) => r.jumpIn?.sigmaDeg },
    { name: 'jump_significance', unit: '1', about: '|jump_deg| / jump_sigma_deg', get: (r) => r.jumpIn?.significance },
    { name: 'distance_bound', unit: '', about: 'range (16-84 % range), upper (only an upper bound: nearer than distance_hi_pc) or interval (somewhere between distance_lo_pc and distance_hi_pc); empty for runs made before it existed', get: (r) => r.layer?.distanceBound },
    { name: 'distance_note', unit: '', about: 'the distance in words when it is a bound or an interval', get: (r) => r.layer?.distanceNote ?? undefined },
  ];
}

function* layerRows(cells: CellForOutput[]): Generator<LayerRow> {
  for (const cell of cells) {
    if (!cell.layers.length) {
      yield { cell };
      continue;
    }
    for (const layer of cell.layers) yield { cell, layer, jumpIn: cell.jumps.find((j) => j.toLayer === layer.index) };
  }
}

export function provenanceComments(what: string, run: RunForOutput, conv: StokesConvention, extra: string[] = []): string[] {
  return [
    `Starveil ${what}`,
    `run: ${run.id} (finished ${run.finishedAt ?? 'unknown'}; data fingerprint ${run.fingerprint ?? 'none'})`,
    `release: ${run.release ?? 'none'}`,
    `convention: ${conv === 'iau' ? 'IAU (angles from north through east; U as measured)' : 'COSMO (U_COSMO = -U_IAU; angles (180 - theta_IAU) mod 180, from north through west)'}`,
    `coordinate system: ${run.params.coordsys} = ${frameName(run.params.coordsys)}; HEALPix NSIDE ${run.params.nside}, NESTED; band ${run.params.band}`,
    ...extra,
  ];
}

/** The sightline/sky CSV: one row per layer, the cell's columns repeated; a cell without layers has one row with the layer columns empty. */
export function layersCsv(what: string, run: RunForOutput, conv: StokesConvention, cells: CellForOutput[], extra: string[] = []): string {
  return writeCsv(
    provenanceComments(what, run, conv, [...extra, 'one row per layer, the cell columns repeated on each; a cell without layers has one row with empty layer columns']),
    layerCsvColumns(run.params.coordsys, conv),
    layerRows(cells),
  );
}

/**
 * Send a list of cells as JSON (with run, release, convention and the conventions note) or as
 * CSV (comment header + one row per layer). `extra` joins the JSON envelope.
 */
export function sendCells(res: Response, input: { what: string; run: RunForOutput; convention: StokesConvention; format: 'json' | 'csv'; cells: CellForOutput[]; conventions: Record<string, string>; criteria?: CellCriteria; extra?: Record<string, unknown>; csvExtra?: string[] }): void {
  const cells = input.cells.map((c) => cellInConvention(c, input.convention));
  setProvenanceHeaders(res, input.run, input.convention);
  if (input.format === 'csv') {
    const crit = input.criteria ? [`criteria: ${describeCriteria(input.criteria)}`] : [];
    res.type('text/csv; charset=utf-8').send(layersCsv(input.what, input.run, input.convention, cells, [...crit, ...(input.csvExtra ?? [])]));
    return;
  }
  res.json({
    run: runSummary(input.run),
    release: input.run.release,
    convention: input.convention,
    conventions: conventionNotes(input.conventions, input.convention),
    ...(input.criteria ? { criteria: input.criteria } : {}),
    ...input.extra,
    cells,
  });
}

/** The query parameters a list of cells shares: criteria (none by default), convention and format. */
export function cellView(q: Query) {
  return { criteria: criteriaParams(q, NO_CRITERIA), convention: conventionParam(q), format: choiceParam(q, 'format', ['json', 'csv'] as const) };
}

export const filterCells = <T extends CellLike>(cells: T[], c: CellCriteria): T[] => cells.filter((cell) => cellMeetsCriteria(cell, c));
