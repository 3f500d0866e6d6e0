/**
 * Flat encoding of cells for transfer between threads (structured cloning of a million star
 * objects costs more than a copy into typed arrays). Per star, 10 numbers: distancePc,
 * distanceLoPc, distanceHiPc, parallaxMas, parallaxErrMas, distanceErrPc, q, u, qErr, uErr;
 * NaN marks an absent optional field. Ids travel as string arrays.
 */

import type { TomographyStar } from './types';

const FIELDS = 10;

export interface PackedCells {
  cellIds: string[];
  /** Star ids, all cells concatenated. */
  starIds: string[];
  /** offsets[c] .. offsets[c + 1] = the stars of cell c. */
  offsets: Int32Array;
  numbers: Float64Array;
}

export function packCells(cells: { cellId: string; stars: TomographyStar[] }[]): PackedCells {
  let nStars = 0;
  for (const c of cells) nStars += c.stars.length;
  const offsets = new Int32Array(cells.length + 1);
  const numbers = new Float64Array(nStars * FIELDS);
  const starIds: string[] = new Array(nStars);
  let k = 0;
  for (let c = 0; c < cells.length; c++) {
    offsets[c] = k;
    for (const s of cells[c].stars) {
      const o = k * FIELDS;
      numbers[o] = s.distancePc;
      numbers[o + 1] = s.distanceLoPc;
      numbers[o + 2] = s.distanceHiPc;
      numbers[o + 3] = s.parallaxMas ?? NaN;
      numbers[o + 4] = s.parallaxErrMas ?? NaN;
      numbers[o + 5] = s.distanceErrPc ?? NaN;
      numbers[o + 6] = s.q;
      numbers[o + 7] = s.u;
      numbers[o + 8] = s.qErr;
      numbers[o + 9] = s.uErr;
      starIds[k] = s.id;
      k++;
    }
  }
  offsets[cells.length] = k;
  return { cellIds: cells.map((c) => c.cellId), starIds, offsets, numbers };
}

export function unpackCell(p: PackedCells, c: number): TomographyStar[] {
  const stars: TomographyStar[] = [];
  for (let k = p.offsets[c]; k < p.offsets[c + 1]; k++) {
    const o = k * FIELDS;
    const n = p.numbers;
    const star: TomographyStar = {
      id: p.starIds[k],
      distancePc: n[o], distanceLoPc: n[o + 1], distanceHiPc: n[o + 2],
      q: n[o + 6], u: n[o + 7], qErr: n[o + 8], uErr: n[o + 9],
    };
    if (!Number.isNaN(n[o + 3])) star.parallaxMas = n[o + 3];
    if (!Number.isNaN(n[o + 4])) star.parallaxErrMas = n[o + 4];
    if (!Number.isNaN(n[o + 5])) star.distanceErrPc = n[o + 5];
    stars.push(star);
  }
  return stars;
}
