/** Sending a list of a run's cells: JSON with its envelope, or the layers CSV streamed in pieces. */
import type { Response } from 'express';
import { streamCsv } from '../lib/csv.js';
import type { StokesConvention } from '../science/convention.js';
import { cellInConvention, conventionNotes, runSummary, type CellForOutput, type RunForOutput } from './cellOutput.js';
import { describeCriteria, type CellCriteria } from './criteria.js';
import { layersCsvPieces } from './layersCsv.js';

/** Response headers stating where a non-JSON body came from (a MOC or FITS file has no room for a JSON envelope). */
export function setProvenanceHeaders(res: Response, run: RunForOutput, conv: StokesConvention): void {
  res.setHeader('Starveil-Run', String(run.id));
  res.setHeader('Starveil-Release', run.release ?? 'none');
  res.setHeader('Starveil-Convention', conv.toUpperCase());
}

export interface CellsAnswer {
  what: string;
  run: RunForOutput;
  convention: StokesConvention;
  format: 'json' | 'csv';
  cells: CellForOutput[];
  conventions: Record<string, string>;
  criteria?: CellCriteria;
  /** joins the JSON envelope */
  extra?: Record<string, unknown>;
  /** more CSV comment lines */
  csvExtra?: string[];
}

/**
 * Send a list of cells as JSON (with run, release, convention and the conventions note) or as
 * CSV (comment header + one row per layer). The response has started when this returns; the
 * promise settles when a streamed CSV has been written.
 */
export async function sendCells(res: Response, input: CellsAnswer): Promise<void> {
  const cells = input.cells.map((c) => cellInConvention(c, input.convention));
  setProvenanceHeaders(res, input.run, input.convention);
  if (input.format === 'csv') {
    const crit = input.criteria ? [`criteria: ${describeCriteria(input.criteria)}`] : [];
    res.type('text/csv; charset=utf-8');
    await streamCsv(res, layersCsvPieces(input.what, input.run, input.convention, cells, [...crit, ...(input.csvExtra ?? [])]));
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
