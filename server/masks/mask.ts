/**
 * Sky masks from a tomography run's cells: which cells meet the criteria, as a HEALPix FITS map
 * (run frame, NESTED), an IVOA MOC (always ICRS) or a CSV of the flagged pixels.
 * No Express or Knex here: cells in, bytes or text out.
 */
import { badRequest } from '../errors.js';
import { healpixMapFits, commentCards, real, HEALPIX_UNSEEN, type FitsCard } from '../science/fits.js';
import { ang2pixNest, maxPixelRadiusDeg, orderForNside, pix2angNest, queryDiscNest } from '../science/healpix.js';
import { icrsToGalactic, galacticToIcrs } from '../science/frames.js';
import { mocFromRanges, type CellRange, type Moc } from '../science/moc.js';
import type { StokesConvention } from '../science/convention.js';
import { csvChunks, type CsvColumn } from '../lib/csv.js';
import { cellMeetsCriteria, describeCriteria, layerExtremes, provenanceComments, type CellCriteria, type CellForOutput, type RunForOutput } from '../tomography/service.js';

/** Finest NSIDE a mask is written at (a FITS map at 512 is 3.1 million rows, 22 MB). */
export const MAX_MASK_NSIDE = 512;
/** A Galactic run's MOC is built this many orders finer than the mask NSIDE … */
export const GALACTIC_MOC_EXTRA_ORDERS = 3;
/** … but not finer than this order (0.057° pixels), to bound the work; a finer mask NSIDE still wins. */
export const MAX_CONVERTED_MOC_ORDER = 10;
/** N_LAYERS of a pixel the run has no cell for (FITS TNULL of that column). */
export const NO_CELL_LAYERS = -1;

export interface MaskCell {
  ipix: number;
  lonDeg: number;
  latDeg: number;
  raDeg: number;
  decDeg: number;
  nStars: number;
  nLayers: number;
  /** largest |Δθ| between successive layers (deg), null without a jump */
  maxJumpDeg: number | null;
  maxJumpSignificance: number | null;
  nearestLayerPc: number | null;
  farthestLayerPc: number | null;
  flagged: boolean;
}

export function maskCells(cells: CellForOutput[], criteria: CellCriteria): MaskCell[] {
  return cells.map((c) => {
    const { maxJump, nearestLayerPc, farthestLayerPc } = layerExtremes(c);
    return {
      ipix: c.ipix,
      lonDeg: c.centre.lonDeg,
      latDeg: c.centre.latDeg,
      raDeg: c.centre.raDeg,
      decDeg: c.centre.decDeg,
      nStars: c.nStars,
      nLayers: c.nLayers,
      maxJumpDeg: maxJump?.deg ?? null,
      maxJumpSignificance: maxJump?.sig ?? null,
      nearestLayerPc,
      farthestLayerPc,
      flagged: cellMeetsCriteria(c, criteria),
    };
  });
}

/** The mask NSIDE: the run's by default; finer (a power of two up to MAX_MASK_NSIDE) allowed; coarser refused. */
export function maskNside(run: RunForOutput, requested: number | undefined): number {
  const runNside = run.params.nside;
  if (requested === undefined) return runNside;
  if (!Number.isInteger(Math.log2(requested)) || requested < 1) {
    throw badRequest(`nside must be a power of two (a HEALPix NSIDE), got ${requested}`, { fields: [{ field: 'nside', message: 'expected a power of two' }] });
  }
  if (requested < runNside) {
    throw badRequest(`nside ${requested} is coarser than run ${run.id}'s NSIDE ${runNside}; a mask can be refined (nside ≥ ${runNside}) but not coarsened`, { fields: [{ field: 'nside', message: `expected ≥ ${runNside} for this run` }] });
  }
  if (requested > MAX_MASK_NSIDE) {
    throw badRequest(`nside must be at most ${MAX_MASK_NSIDE}, got ${requested}`, { fields: [{ field: 'nside', message: `expected ≤ ${MAX_MASK_NSIDE}` }] });
  }
  return requested;
}

/** Children of a NESTED cell at an order k levels finer: [ipix·4^k, (ipix+1)·4^k). */
const childRange = (ipix: number, k: number): CellRange => [ipix * 4 ** k, (ipix + 1) * 4 ** k];

function provenanceCards(run: RunForOutput, criteria: CellCriteria, conv: StokesConvention): FitsCard[] {
  const cards: FitsCard[] = [
    { keyword: 'CREATOR', value: 'Starveil', comment: 'software that wrote this file' },
    { keyword: 'RUN_ID', value: run.id, comment: 'tomography run the mask comes from' },
    { keyword: 'RUNFPRNT', value: run.fingerprint ?? 'none' }, // sha256 of the run's input data
    { keyword: 'RELEASE', value: run.release ?? 'none', comment: 'frozen data release tag' },
    { keyword: 'RUNNSIDE', value: run.params.nside, comment: 'NSIDE of the run cells' },
    { keyword: 'BAND', value: run.params.band, comment: 'photometric band of the polarimetry' },
    { keyword: 'POLCCONV', value: conv === 'iau' ? 'IAU' : 'COSMO', comment: 'polarization convention of the request' },
    { keyword: 'MINSTARS', value: criteria.minStars, comment: 'criterion: fewest stars in a cell' },
    { keyword: 'MINLAYER', value: criteria.minLayers, comment: 'criterion: fewest layers' },
    { keyword: 'MINJUMP', value: real(criteria.minJumpDeg), comment: '[deg] criterion: a jump with |dtheta| >= this' },
    { keyword: 'MINSIGNF', value: real(criteria.minSignificance), comment: 'criterion: ... and significance >= this' },
  ];
  if (criteria.minDistancePc !== null) cards.push({ keyword: 'MINDIST', value: real(criteria.minDistancePc), comment: '[pc] criterion: a layer at least this far' });
  if (criteria.maxDistancePc !== null) cards.push({ keyword: 'MAXDIST', value: real(criteria.maxDistancePc), comment: '[pc] criterion: a layer at most this far' });
  return cards;
}

/**
 * The mask as a full-sky NESTED HEALPix FITS map in the run's frame, columns MASK (1 = meets
 * every criterion), MAX_JUMP (largest |Δθ|, deg; UNSEEN without a jump or a cell) and N_LAYERS
 * (−1 = no cell). At a finer NSIDE each run cell's 4^k children carry its values.
 */
export function maskFits(run: RunForOutput, cells: MaskCell[], nside: number, criteria: CellCriteria, conv: StokesConvention): Uint8Array {
  const npix = 12 * nside * nside;
  const k = orderForNside(nside) - orderForNside(run.params.nside);
  const mask = new Uint8Array(npix);
  const maxJump = new Float32Array(npix).fill(HEALPIX_UNSEEN);
  const nLayers = new Int16Array(npix).fill(NO_CELL_LAYERS);
  for (const c of cells) {
    const [a, b] = childRange(c.ipix, k);
    mask.fill(c.flagged ? 1 : 0, a, b);
    maxJump.fill(c.maxJumpDeg ?? HEALPIX_UNSEEN, a, b);
    nLayers.fill(Math.min(c.nLayers, 32767), a, b);
  }
  const extra: FitsCard[] = [
    ...provenanceCards(run, criteria, conv),
    ...commentCards(`Starveil sky mask. MASK = 1 where the cell meets every criterion: ${describeCriteria(criteria)}.`),
    ...commentCards('MAX_JUMP: largest |dtheta| between successive layers in degrees; HEALPix UNSEEN (-1.6375E+30) where the cell has no jump or the run has no cell. It does not depend on POLCCONV.'),
    ...commentCards(`N_LAYERS: number of layers; -1 (TNULL3) where the run has no cell. ${k > 0 ? `Each run cell at NSIDE ${run.params.nside} is written as its ${4 ** k} NESTED children.` : ''}`),
  ];
  return healpixMapFits({
    nside,
    coordsys: run.params.coordsys,
    extname: 'SKYMASK',
    columns: [
      { name: 'MASK', format: 'B', values: mask },
      { name: 'MAX_JUMP', format: 'E', unit: 'deg', values: maxJump },
      { name: 'N_LAYERS', format: 'I', nullValue: NO_CELL_LAYERS, values: nLayers },
    ],
    extra,
  });
}

/** The MOC order used for a mask at this NSIDE (see maskMoc). */
export function mocOrderFor(coordsys: 'G' | 'C', nside: number): number {
  const order = orderForNside(nside);
  return coordsys === 'C' ? order : Math.max(order, Math.min(order + GALACTIC_MOC_EXTRA_ORDERS, MAX_CONVERTED_MOC_ORDER));
}

/**
 * The flagged cells as an ICRS MOC.
 * Equatorial run: the flagged cells themselves (exact), at the mask order.
 * Galactic run: HEALPix cells of one frame are not cells of the other, so the MOC is sampled:
 * an equatorial cell of order mocOrderFor('G', nside) is in the MOC when its centre lies in a
 * flagged Galactic cell. The MOC's edge then departs from the true (Galactic) edge by less than
 * one MOC cell (order 8: about 0.23°). Candidates come from a disc around each flagged cell's
 * centre of radius R_run + R_moc (maximum centre-to-corner distances), which holds every
 * equatorial cell whose centre is inside the Galactic cell.
 */
export function maskMoc(run: RunForOutput, cells: MaskCell[], nside: number): { moc: Moc; order: number } {
  const order = mocOrderFor(run.params.coordsys, nside);
  const runNside = run.params.nside;
  const flagged = cells.filter((c) => c.flagged);
  if (run.params.coordsys === 'C') {
    const k = order - orderForNside(runNside);
    return { moc: mocFromRanges(order, flagged.map((c) => childRange(c.ipix, k))), order };
  }
  const mocNside = 2 ** order;
  const inFlagged = new Set(flagged.map((c) => c.ipix));
  const radius = (maxPixelRadiusDeg(runNside) + maxPixelRadiusDeg(mocNside)) * 1.05;
  const hit = new Set<number>();
  for (const c of flagged) {
    const centre = galacticToIcrs(c.lonDeg, c.latDeg);
    for (const p of queryDiscNest(mocNside, centre.raDeg, centre.decDeg, radius, false)) {
      if (hit.has(p)) continue;
      const eq = pix2angNest(mocNside, p);
      const g = icrsToGalactic(eq.lonDeg, eq.latDeg);
      if (inFlagged.has(ang2pixNest(runNside, g.lDeg, g.bDeg))) hit.add(p);
    }
  }
  return { moc: mocFromRanges(order, [...hit].map((p) => [p, p + 1] as CellRange)), order };
}

interface MaskPixelRow {
  ipix: number;
  cell: MaskCell;
  lonDeg: number;
  latDeg: number;
  raDeg: number;
  decDeg: number;
}

/** Most rows a mask CSV may hold (about 120 bytes each); larger masks are for FITS or MOC. */
export const MAX_MASK_CSV_ROWS = 1_000_000;

/** Rows of the mask CSV: flagged cells × 4^(order difference). */
export function maskCsvRowCount(run: RunForOutput, cells: MaskCell[], nside: number): number {
  const k = orderForNside(nside) - orderForNside(run.params.nside);
  let flagged = 0;
  for (const c of cells) if (c.flagged) flagged++;
  return flagged * 4 ** k;
}

/** 400 when the CSV would be over MAX_MASK_CSV_ROWS, naming the limit and what to ask for instead. */
export function assertMaskCsvSize(run: RunForOutput, cells: MaskCell[], nside: number): number {
  const rows = maskCsvRowCount(run, cells, nside);
  if (rows > MAX_MASK_CSV_ROWS) {
    throw badRequest(`a mask CSV at nside ${nside} would hold ${rows.toLocaleString('en-US')} rows; the limit is ${MAX_MASK_CSV_ROWS.toLocaleString('en-US')}. Ask for format=fits or format=moc-json (same mask, compact), a coarser nside, or tighter criteria.`, {
      fields: [{ field: 'format', message: `csv is limited to ${MAX_MASK_CSV_ROWS} rows; this mask has ${rows}` }],
    });
  }
  return rows;
}

function* maskPixelRows(run: RunForOutput, cells: MaskCell[], nside: number): Generator<MaskPixelRow> {
  const k = orderForNside(nside) - orderForNside(run.params.nside);
  for (const c of cells) {
    if (!c.flagged) continue;
    if (k === 0) {
      yield { ipix: c.ipix, cell: c, lonDeg: c.lonDeg, latDeg: c.latDeg, raDeg: c.raDeg, decDeg: c.decDeg };
      continue;
    }
    const [a, b] = childRange(c.ipix, k);
    for (let p = a; p < b; p++) {
      const centre = pix2angNest(nside, p);
      const icrs = run.params.coordsys === 'G' ? galacticToIcrs(centre.lonDeg, centre.latDeg) : { raDeg: centre.lonDeg, decDeg: centre.latDeg };
      yield { ipix: p, cell: c, ...centre, ...icrs };
    }
  }
}

/** CSV of the flagged pixels at the mask NSIDE, with the units header, in pieces for streaming (server/lib/csv.ts streamCsv). */
export function maskCsvPieces(run: RunForOutput, cells: MaskCell[], nside: number, criteria: CellCriteria, conv: StokesConvention): Generator<string> {
  const k = orderForNside(nside) - orderForNside(run.params.nside);
  const frame = run.params.coordsys === 'G' ? 'Galactic l, b' : 'ICRS RA, Dec';
  const count = maskCsvRowCount(run, cells, nside);
  const columns: CsvColumn<MaskPixelRow>[] = [
    { name: 'nside', unit: '1', about: 'HEALPix NSIDE of the pixel', get: () => nside },
    { name: 'ipix', unit: '1', about: 'HEALPix NESTED pixel index in the run frame', get: (r) => r.ipix },
    { name: 'lon_deg', unit: 'deg', about: `pixel centre longitude (${frame})`, get: (r) => r.lonDeg },
    { name: 'lat_deg', unit: 'deg', about: `pixel centre latitude (${frame})`, get: (r) => r.latDeg },
    { name: 'ra_deg', unit: 'deg', about: 'pixel centre right ascension (ICRS)', get: (r) => r.raDeg },
    { name: 'dec_deg', unit: 'deg', about: 'pixel centre declination (ICRS)', get: (r) => r.decDeg },
    { name: 'run_ipix', unit: '1', about: `the run cell (NSIDE ${run.params.nside}, NESTED) the pixel lies in`, get: (r) => r.cell.ipix },
    { name: 'n_stars', unit: 'count', about: 'stars in the run cell', get: (r) => r.cell.nStars },
    { name: 'n_layers', unit: 'count', about: 'layers along the sightline', get: (r) => r.cell.nLayers },
    { name: 'max_jump_deg', unit: 'deg', about: 'largest |angle jump| between successive layers (same in IAU and COSMO); empty without a jump', get: (r) => r.cell.maxJumpDeg },
    { name: 'max_jump_significance', unit: '1', about: 'significance |dtheta|/sigma of that jump', get: (r) => r.cell.maxJumpSignificance },
    { name: 'nearest_layer_pc', unit: 'pc', about: 'distance of the nearest layer', get: (r) => r.cell.nearestLayerPc },
    { name: 'farthest_layer_pc', unit: 'pc', about: 'distance of the farthest layer', get: (r) => r.cell.farthestLayerPc },
  ];
  return csvChunks(
    provenanceComments('sky mask: the flagged pixels', run, conv, [
      `criteria: ${describeCriteria(criteria)}`,
      `mask NSIDE ${nside}${k > 0 ? ` (each run cell written as its ${4 ** k} NESTED children)` : ''}; ${count} flagged pixels`,
    ]),
    columns,
    maskPixelRows(run, cells, nside),
  );
}
