/**
 * The sightline/sky CSV: comment lines (provenance, criteria, one per column with its unit), then
 * one row per layer with the cell's columns repeated; a cell without layers has one row with the
 * layer columns empty. Written by the one CSV writer (server/lib/csv.ts), in pieces.
 */
import { csvChunks, type CsvColumn } from '../lib/csv.js';
import type { StokesConvention } from '../science/convention.js';
import type { TomographyJump, TomographyLayer } from '../science/tomography/types.js';
import { frameName, type CellForOutput, type RunForOutput } from './cellOutput.js';

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

/** The comment lines every CSV or FITS answer from a run starts with. */
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

/** The layers CSV of these cells (already in the answer's convention), in pieces for streamCsv. */
export function layersCsvPieces(what: string, run: RunForOutput, conv: StokesConvention, cells: CellForOutput[], extra: string[] = []): Generator<string> {
  return csvChunks(
    provenanceComments(what, run, conv, [...extra, 'one row per layer, the cell columns repeated on each; a cell without layers has one row with empty layer columns']),
    layerCsvColumns(run.params.coordsys, conv),
    layerRows(cells),
  );
}
