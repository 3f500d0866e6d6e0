/**
 * HEALPix Multi-Order Coverage maps (IVOA MOC 2.0 recommendation): a set of NESTED HEALPix
 * cells at orders 0..maxOrder, normalised — no cell inside another, no four siblings (merged to
 * their parent instead), sorted by order then index — with its ASCII and JSON serialisations.
 * A space MOC is defined on the ICRS sphere; callers must give equatorial (ICRS) cells.
 *
 * Arithmetic is on JS numbers (no 32-bit bit operations), so orders are limited to 0..24 here:
 * 12·4^24 ≈ 3.4e15 < 2^53 keeps every index and range end exact (the recommendation allows 29).
 */

export const MAX_MOC_ORDER = 24;

export interface Moc {
  /** The MOC's depth: the finest order it resolves, stated even when it holds no cell there. */
  maxOrder: number;
  /** order → sorted cell indices at that order (only orders that hold cells). */
  cells: Map<number, number[]>;
}

/** Half-open range [start, end) of cell indices at one order. */
export type CellRange = [number, number];

const pow4 = (k: number) => 4 ** k;

function assertOrder(order: number): void {
  if (!Number.isInteger(order) || order < 0 || order > MAX_MOC_ORDER) throw new RangeError(`MOC order ${order}: expected an integer from 0 to ${MAX_MOC_ORDER}`);
}

function assertCell(order: number, ipix: number): void {
  assertOrder(order);
  const n = 12 * pow4(order);
  if (!Number.isInteger(ipix) || ipix < 0 || ipix >= n) throw new RangeError(`MOC cell ${order}/${ipix}: expected an index from 0 to ${n - 1} at order ${order}`);
}

/** Sort and merge overlapping or touching ranges. */
export function mergeRanges(ranges: CellRange[]): CellRange[] {
  const sorted = ranges.filter(([a, b]) => b > a).sort((x, y) => x[0] - y[0] || x[1] - y[1]);
  const out: CellRange[] = [];
  for (const [a, b] of sorted) {
    const last = out[out.length - 1];
    if (last && a <= last[1]) last[1] = Math.max(last[1], b);
    else out.push([a, b]);
  }
  return out;
}

/**
 * The normalised MOC of a set of ranges at maxOrder: each range is cut, from its start, into the
 * largest aligned blocks of 4^k cells that fit (a block of 4^k cells at maxOrder is one cell at
 * order maxOrder − k). This decomposition is unique, so equal coverages give equal MOCs.
 */
export function mocFromRanges(maxOrder: number, ranges: CellRange[]): Moc {
  assertOrder(maxOrder);
  const npix = 12 * pow4(maxOrder);
  const cells = new Map<number, number[]>();
  for (const [start, end] of mergeRanges(ranges)) {
    if (start < 0 || end > npix || !Number.isInteger(start) || !Number.isInteger(end)) throw new RangeError(`MOC range [${start}, ${end}) is outside order ${maxOrder} (0 to ${npix})`);
    let a = start;
    while (a < end) {
      let k = maxOrder;
      while (k > 0 && (a % pow4(k) !== 0 || a + pow4(k) > end)) k--;
      const order = maxOrder - k;
      const list = cells.get(order);
      const ipix = a / pow4(k);
      if (list) list.push(ipix);
      else cells.set(order, [ipix]);
      a += pow4(k);
    }
  }
  for (const list of cells.values()) list.sort((x, y) => x - y);
  return { maxOrder, cells: new Map([...cells].sort((x, y) => x[0] - y[0])) };
}

/** The normalised MOC of cells given at various orders (each at most maxOrder). */
export function mocFromCells(maxOrder: number, cells: Iterable<{ order: number; ipix: number }>): Moc {
  assertOrder(maxOrder);
  const ranges: CellRange[] = [];
  for (const { order, ipix } of cells) {
    assertCell(order, ipix);
    if (order > maxOrder) throw new RangeError(`MOC cell ${order}/${ipix} is finer than the MOC's order ${maxOrder}`);
    const f = pow4(maxOrder - order);
    ranges.push([ipix * f, (ipix + 1) * f]);
  }
  return mocFromRanges(maxOrder, ranges);
}

/** The normalised MOC of a set of cells all at one order (that order is the MOC's depth). */
export function mocFromPixels(order: number, pixels: Iterable<number>): Moc {
  const cells: { order: number; ipix: number }[] = [];
  for (const ipix of pixels) cells.push({ order, ipix });
  return mocFromCells(order, cells);
}

/** The MOC as merged ranges of cells at `order` (default its own depth; must be ≥ every order it holds). */
export function mocToRanges(moc: Moc, order = moc.maxOrder): CellRange[] {
  if (order < moc.maxOrder) throw new RangeError(`cannot express a MOC of order ${moc.maxOrder} at the coarser order ${order}`);
  const ranges: CellRange[] = [];
  for (const [o, list] of moc.cells) {
    const f = pow4(order - o);
    for (const ipix of list) ranges.push([ipix * f, (ipix + 1) * f]);
  }
  return mergeRanges(ranges);
}

/** Every cell index at `order` the MOC covers, ascending (for checks on small MOCs). */
export function mocPixelsAt(moc: Moc, order = moc.maxOrder): number[] {
  const out: number[] = [];
  for (const [a, b] of mocToRanges(moc, order)) for (let i = a; i < b; i++) out.push(i);
  return out;
}

/** Number of cells of `order` covered. */
export function mocCellCount(moc: Moc, order = moc.maxOrder): number {
  return mocToRanges(moc, order).reduce((n, [a, b]) => n + b - a, 0);
}

/** Sky fraction covered (the whole sphere is 12 cells of order 0). */
export function mocSkyFraction(moc: Moc): number {
  let f = 0;
  for (const [o, list] of moc.cells) f += list.length / (12 * pow4(o));
  return f;
}

/**
 * JSON serialisation: {"order": [ipix, …], …}, orders ascending. The depth is stated by its
 * key, with an empty list when it holds no cell.
 */
export function mocToJson(moc: Moc): Record<string, number[]> {
  const out: Record<string, number[]> = {};
  for (const [o, list] of moc.cells) out[String(o)] = [...list];
  if (!out[String(moc.maxOrder)]) out[String(moc.maxOrder)] = [];
  return out;
}

/**
 * ASCII serialisation per MOC 2.0 (IVOA Recommendation 2022-07-27, §4.3.2, from memory):
 * "order/ipix ipix-ipix order/…", every token separated by one space — indices and ranges as
 * well as orders (`3/3 10 4/16-18 22 5/19-20 17/222 28/123456789 29/`); orders ascending,
 * consecutive indices written as a range "a-b". The depth is stated as a last, empty
 * "maxOrder/" when it holds no cell. (MOC 1.1 wrote commas between indices; parseMocAscii still
 * reads them.)
 */
export function mocToAscii(moc: Moc): string {
  const parts: string[] = [];
  for (const [o, list] of moc.cells) {
    const items: string[] = [];
    for (let i = 0; i < list.length; ) {
      let j = i;
      while (j + 1 < list.length && list[j + 1] === list[j] + 1) j++;
      items.push(j > i ? `${list[i]}-${list[j]}` : String(list[i]));
      i = j + 1;
    }
    parts.push(`${o}/${items.join(' ')}`);
  }
  if (!moc.cells.has(moc.maxOrder)) parts.push(`${moc.maxOrder}/`);
  return parts.join(' ');
}

/** Read the ASCII serialisation (MOC 2.0 white space, or MOC 1.1 commas, between items); the result is normalised. */
export function parseMocAscii(text: string): Moc {
  const cells: { order: number; ipix: number }[] = [];
  let order: number | null = null;
  let maxOrder = 0;
  for (const token of text.trim().split(/[\s,]+/).filter(Boolean)) {
    let rest = token;
    const slash = token.indexOf('/');
    if (slash >= 0) {
      const o = token.slice(0, slash);
      if (!/^\d+$/.test(o)) throw new SyntaxError(`MOC ASCII: "${token}" does not start with an order "n/"`);
      order = Number(o);
      assertOrder(order);
      maxOrder = Math.max(maxOrder, order);
      rest = token.slice(slash + 1);
    }
    if (!rest) continue;
    if (order === null) throw new SyntaxError(`MOC ASCII: "${token}" comes before any order "n/"`);
    const m = /^(\d+)(?:-(\d+))?$/.exec(rest);
    if (!m) throw new SyntaxError(`MOC ASCII: "${rest}" is neither an index nor a range "a-b"`);
    const a = Number(m[1]);
    const b = m[2] === undefined ? a : Number(m[2]);
    if (b < a) throw new SyntaxError(`MOC ASCII: range "${rest}" runs backwards`);
    for (let i = a; i <= b; i++) cells.push({ order, ipix: i });
  }
  return mocFromCells(maxOrder, cells);
}

/** Read the JSON serialisation; the result is normalised. */
export function parseMocJson(json: unknown): Moc {
  if (!json || typeof json !== 'object' || Array.isArray(json)) throw new SyntaxError('MOC JSON: expected an object {"order": [ipix, …]}');
  const cells: { order: number; ipix: number }[] = [];
  let maxOrder = 0;
  for (const [k, v] of Object.entries(json as Record<string, unknown>)) {
    if (!/^\d+$/.test(k)) throw new SyntaxError(`MOC JSON: key "${k}" is not an order`);
    const order = Number(k);
    assertOrder(order);
    if (!Array.isArray(v)) throw new SyntaxError(`MOC JSON: order ${k} does not hold a list`);
    maxOrder = Math.max(maxOrder, order);
    for (const ipix of v) cells.push({ order, ipix: Number(ipix) });
  }
  return mocFromCells(maxOrder, cells);
}
