import type { Knex } from 'knex';
import { cellMeetsCriteria, presentCell, type CellCriteria, type CellForOutput, type RunForOutput, type TomographyService } from '../tomography/service.js';

/** Cells whose stored JSON is parsed per event-loop turn. */
const PARSE_PER_TURN = 200;
/** Rows read per query while a filtered page is being filled. */
const SCAN_CHUNK = 2000;

/** Read side of the modeler API: pages of a run's cells in pixel order, and every cell for masks. */
export function skyService(readDb: Knex, tomography: TomographyService) {
  const base = (run: RunForOutput, criteria: CellCriteria) =>
    readDb('tomography_cells').where({ run_id: run.id }).where('n_stars', '>=', criteria.minStars).where('n_layers', '>=', criteria.minLayers);

  return {
    resolveRun: (runId?: number, releaseTag?: string): Promise<RunForOutput> => tomography.resolveRun(runId, releaseTag),

    /**
     * Up to `limit` cells meeting the criteria with ipix ≥ cursor, in ipix order, and the ipix of
     * the next matching cell (null at the end), which is the next page's cursor.
     */
    async page(run: RunForOutput, opts: { cursor: number; limit: number; criteria: CellCriteria }): Promise<{ cells: CellForOutput[]; next: number | null }> {
      const cells: CellForOutput[] = [];
      let from = opts.cursor;
      for (;;) {
        const rows = await base(run, opts.criteria).where('ipix', '>=', from).orderBy('ipix').limit(SCAN_CHUNK);
        for (const row of rows) {
          const cell = presentCell(row) as unknown as CellForOutput;
          if (!cellMeetsCriteria(cell, opts.criteria)) continue;
          if (cells.length === opts.limit) return { cells, next: cell.ipix };
          cells.push(cell);
        }
        if (rows.length < SCAN_CHUNK) return { cells, next: null };
        from = Number(rows[rows.length - 1].ipix) + 1;
      }
    },

    /**
     * Every cell of the run, in ipix order. Each cell's stored result is parsed JSON (layers,
     * jumps, segments): a large run is parsed a few hundred cells per event-loop turn, so other
     * requests are answered in between.
     */
    async allCells(run: RunForOutput): Promise<CellForOutput[]> {
      const rows = await readDb('tomography_cells').where({ run_id: run.id }).orderBy('ipix');
      const out: CellForOutput[] = new Array(rows.length);
      for (let i = 0; i < rows.length; i++) {
        out[i] = presentCell(rows[i]) as unknown as CellForOutput;
        rows[i] = null;
        if (i % PARSE_PER_TURN === PARSE_PER_TURN - 1) await new Promise((r) => setImmediate(r));
      }
      return out;
    },
  };
}
export type SkyService = ReturnType<typeof skyService>;
