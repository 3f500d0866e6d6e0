import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  mergeRanges,
  mocCellCount,
  mocFromCells,
  mocFromPixels,
  mocFromRanges,
  mocPixelsAt,
  mocSkyFraction,
  mocToAscii,
  mocToJson,
  mocToRanges,
  parseMocAscii,
  parseMocJson,
  type Moc,
} from '../../server/science/moc.js';

/** Four siblings of one parent never all present; no cell inside another. */
function assertNormalised(moc: Moc) {
  const orders = [...moc.cells.keys()];
  expect(orders).toEqual([...orders].sort((a, b) => a - b));
  for (const [o, list] of moc.cells) {
    expect(list).toEqual([...list].sort((a, b) => a - b));
    expect(new Set(list).size).toBe(list.length);
    if (o > 0) {
      const parents = new Map<number, number>();
      for (const p of list) parents.set(Math.floor(p / 4), (parents.get(Math.floor(p / 4)) ?? 0) + 1);
      for (const n of parents.values()) expect(n).toBeLessThan(4);
    }
    // no coarser cell contains this one
    for (const [o2, list2] of moc.cells) {
      if (o2 >= o) continue;
      const set2 = new Set(list2);
      for (const p of list) expect(set2.has(Math.floor(p / 4 ** (o - o2)))).toBe(false);
    }
  }
}

/**
 * The MOC 2.0 ASCII grammar for a space MOC (IVOA MOC 2.0, 2022-07-27, §4.3.2, from memory):
 *   moc      ::= [ "s" ] orderset { " " orderset }
 *   orderset ::= order "/" [ item { " " item } ]
 *   item     ::= ipix | ipix "-" ipix
 * tokens separated by spaces, never commas; written here with one space and orders ascending.
 */
const MOC2_ASCII = /^s?\d+\/(\d+(-\d+)?( \d+(-\d+)?)*)?( \d+\/(\d+(-\d+)?( \d+(-\d+)?)*)?)*$/;
function assertMoc2Ascii(text: string) {
  expect(text).toMatch(MOC2_ASCII);
  expect(text).not.toContain(',');
  const orders = [...text.matchAll(/(\d+)\//g)].map((m) => Number(m[1]));
  expect(orders).toEqual([...orders].sort((a, b) => a - b));
  expect(new Set(orders).size).toBe(orders.length);
}

describe('MOC 2.0 ASCII grammar', () => {
  it('the recommendation\'s example matches the grammar and reads back to itself', () => {
    // MOC 2.0 §4.3.2 example (from memory): "3/3 10 4/16-18 22 5/19-20 17/222 28/123456789 29/".
    const example = '3/3 10 4/16-18 22 5/19-20 17/222 28/123456789 29/';
    assertMoc2Ascii(example);
    // Starveil stops at order 24 (exact JS integers), so the part up to order 17 is read back.
    const upTo17 = '3/3 10 4/16-18 22 5/19-20 17/222';
    const moc = parseMocAscii(upTo17);
    expect(moc.maxOrder).toBe(17);
    expect(mocToAscii(moc)).toBe(upTo17);
    expect(() => parseMocAscii(example)).toThrow(/MOC order 28: expected an integer from 0 to 24/);
  });

  it('every MOC written follows the grammar (random MOCs)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 8 }), fc.array(fc.nat(), { maxLength: 200 }), (order, raw) => {
        const npix = 12 * 4 ** order;
        const moc = mocFromPixels(order, raw.map((x) => x % npix));
        const text = mocToAscii(moc);
        assertMoc2Ascii(text);
        expect(parseMocAscii(text)).toEqual(moc);
      }),
      { numRuns: 200, seed: 20240521 },
    );
  });

  it('the grammar check itself refuses comma-separated and out-of-order text', () => {
    expect('1/1-2,4 8/').not.toMatch(MOC2_ASCII);
    expect('1/1  2/3').not.toMatch(MOC2_ASCII);
    expect('1/1 2/').toMatch(MOC2_ASCII);
  });
});

describe('the examples of the MOC 2.0 recommendation (from memory)', () => {
  // From memory of IVOA MOC 2.0 §4.3: a MOC of order 8 holding cells at orders 1 and 2, written
  // "1/1-2 4 2/12-14 21 23 25 8/" in ASCII and {"1":[1,2,4],"2":[12,13,14,21,23,25],"8":[]} in JSON.
  const ascii = '1/1-2 4 2/12-14 21 23 25 8/';
  const json = { '1': [1, 2, 4], '2': [12, 13, 14, 21, 23, 25], '8': [] };

  it('builds the example from its cells and writes both serialisations exactly', () => {
    const moc = mocFromCells(8, [1, 2, 4].map((ipix) => ({ order: 1, ipix })).concat([12, 13, 14, 21, 23, 25].map((ipix) => ({ order: 2, ipix }))));
    expect(mocToAscii(moc)).toBe(ascii);
    expect(mocToJson(moc)).toEqual(json);
    expect(JSON.stringify(mocToJson(moc))).toBe('{"1":[1,2,4],"2":[12,13,14,21,23,25],"8":[]}');
    assertNormalised(moc);
  });

  it('reads both serialisations back to the same MOC', () => {
    const a = parseMocAscii(ascii);
    const j = parseMocJson(json);
    expect(a).toEqual(j);
    expect(a.maxOrder).toBe(8);
    expect(mocToAscii(j)).toBe(ascii);
    // 3 of 48 order-1 cells (= 12 order-2 cells) + 6 of 192 order-2 cells = 18/192 of the sky
    expect(mocSkyFraction(a)).toBeCloseTo(18 / 192, 15);
  });

  it('accepts white space or commas between items and normalises what it reads', () => {
    const loose = parseMocAscii('2/12 13\n14,15  1/1');
    expect(mocToAscii(loose)).toBe('1/1 3 2/');
    // MOC 1.1 text with commas still reads
    expect(mocToAscii(parseMocAscii('1/1-2,4 2/12-14,21,23,25 8/'))).toBe('1/1-2 4 2/12-14 21 23 25 8/');
  });
});

describe('normalisation', () => {
  it('merges four siblings into their parent, repeatedly up the orders', () => {
    // all 16 order-2 children of order-0 cell 5 → the single cell 0/5
    const moc = mocFromPixels(2, Array.from({ length: 16 }, (_, i) => 5 * 16 + i));
    expect(mocToAscii(moc)).toBe('0/5 2/');
    expect(mocToJson(moc)).toEqual({ '0': [5], '2': [] });
  });

  it('drops cells inside others and duplicates, whatever the input order', () => {
    const moc = mocFromCells(3, [
      { order: 3, ipix: 17 },
      { order: 1, ipix: 1 }, // covers order-3 cells 16..31
      { order: 3, ipix: 17 },
      { order: 2, ipix: 8 }, // one child of 1/2: stays
      { order: 3, ipix: 100 },
      { order: 3, ipix: 99 },
    ]);
    expect(mocToAscii(moc)).toBe('1/1 2/8 3/99-100');
    assertNormalised(moc);
  });

  it('writes the whole sky as the 12 base cells, and the empty MOC as its order alone', () => {
    expect(mocToAscii(mocFromPixels(3, Array.from({ length: 12 * 64 }, (_, i) => i)))).toBe('0/0-11 3/');
    expect(mocToAscii(mocFromPixels(6, []))).toBe('6/');
    expect(mocToJson(mocFromPixels(6, []))).toEqual({ '6': [] });
  });

  it('states the depth once when the deepest order holds cells', () => {
    expect(mocToAscii(mocFromPixels(4, [7]))).toBe('4/7');
    expect(mocToJson(mocFromPixels(4, [7]))).toEqual({ '4': [7] });
  });

  it('keeps large indices exact (order 20: up to 1.3e13, beyond 32-bit arithmetic)', () => {
    const base = 11 * 4 ** 20; // first order-20 cell of base cell 11
    const moc = mocFromRanges(20, [[base, base + 4 ** 3], [base + 4 ** 3 + 1, base + 4 ** 3 + 2]]);
    expect(mocToAscii(moc)).toBe(`17/${11 * 4 ** 17} 20/${base + 65}`);
  });

  it('refuses cells outside their order', () => {
    expect(() => mocFromPixels(0, [12])).toThrow(/0 to 11 at order 0/);
    expect(() => mocFromCells(2, [{ order: 3, ipix: 1 }])).toThrow(/finer than the MOC's order 2/);
    expect(() => parseMocAscii('1/3-2')).toThrow(/backwards/);
    expect(() => parseMocAscii('5')).toThrow(/before any order/);
    expect(() => parseMocJson({ x: [1] })).toThrow(/not an order/);
  });
});

describe('round trips (random cell sets)', () => {
  const pixelSets = fc.integer({ min: 0, max: 5 }).chain((order) =>
    fc.tuple(fc.constant(order), fc.uniqueArray(fc.integer({ min: 0, max: 12 * 4 ** order - 1 }), { maxLength: 300 })),
  );

  it('covers exactly the given pixels at its order, normalised, through ASCII and JSON', () => {
    fc.assert(
      fc.property(pixelSets, ([order, pixels]) => {
        const moc = mocFromPixels(order, pixels);
        expect(mocPixelsAt(moc)).toEqual([...pixels].sort((a, b) => a - b));
        expect(mocCellCount(moc)).toBe(pixels.length);
        assertNormalised(moc);
        expect(parseMocAscii(mocToAscii(moc))).toEqual(moc);
        expect(parseMocJson(JSON.parse(JSON.stringify(mocToJson(moc))))).toEqual(moc);
        // expressing it one order finer covers the 4 children of each pixel
        expect(mocCellCount(moc, order + 1)).toBe(4 * pixels.length);
      }),
      { numRuns: 200 },
    );
  });

  it('merged ranges are sorted, disjoint and not touching', () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.integer({ min: 0, max: 500 }), fc.integer({ min: 0, max: 40 }))), (pairs) => {
        const merged = mergeRanges(pairs.map(([a, n]) => [a, a + n]));
        for (let i = 1; i < merged.length; i++) expect(merged[i][0]).toBeGreaterThan(merged[i - 1][1]);
        const covered = new Set<number>();
        for (const [a, n] of pairs) for (let i = a; i < a + n; i++) covered.add(i);
        expect(merged.reduce((s, [a, b]) => s + b - a, 0)).toBe(covered.size);
        expect(mocToRanges(mocFromRanges(5, merged.filter(([, b]) => b <= 12 * 4 ** 5)))).toEqual(merged.filter(([, b]) => b <= 12 * 4 ** 5));
      }),
    );
  });
});
