import { describe, expect, it } from 'vitest';
import {
  binTableHdu,
  commentCards,
  emptyPrimaryHdu,
  FITS_BLOCK,
  formatCard,
  formatReal,
  headerBytes,
  healpixMapFits,
  HEALPIX_UNSEEN,
  real,
} from '../../server/science/fits.js';

const ascii = (b: Uint8Array, from = 0, to = b.length) => Buffer.from(b.subarray(from, to)).toString('latin1');
const cards = (b: Uint8Array, from = 0) => {
  const out: string[] = [];
  for (let i = from; ; i += 80) {
    const c = ascii(b, i, i + 80);
    out.push(c);
    if (c.startsWith('END ')) return out;
  }
};

describe('header cards (FITS Standard 4.0 §4)', () => {
  it('lays out fixed-format values: "= " in columns 9–10, numbers and logicals ending in column 30', () => {
    const c = formatCard({ keyword: 'SIMPLE', value: true });
    expect(c).toHaveLength(80);
    expect(c.slice(0, 10)).toBe('SIMPLE  = ');
    expect(c[29]).toBe('T');
    const n = formatCard({ keyword: 'NSIDE', value: 32, comment: 'resolution' });
    expect(n.slice(0, 30)).toBe('NSIDE   =                   32');
    expect(n.slice(30, 43)).toBe(' / resolution');
  });

  it('quotes strings from column 11, pads them to 8 characters and doubles inner quotes', () => {
    expect(formatCard({ keyword: 'PIXTYPE', value: 'HEALPIX' }).slice(0, 20)).toBe("PIXTYPE = 'HEALPIX '");
    expect(formatCard({ keyword: 'COORDSYS', value: 'G' }).slice(0, 20)).toBe("COORDSYS= 'G       '");
    expect(formatCard({ keyword: 'OBSERVER', value: "O'Kestrel" }).slice(10, 22)).toBe("'O''Kestrel'");
  });

  it('writes reals with a decimal point or an E exponent (HEALPix UNSEEN = -1.6375E+30)', () => {
    // UNSEEN −1.6375e30: the HEALPix convention (healpy 1.16 healpy.UNSEEN; compared live in tests/api/masks.test.ts)
    expect(formatReal(0)).toBe('0.0');
    expect(formatReal(30)).toBe('30.0');
    expect(formatReal(2.5)).toBe('2.5');
    expect(formatReal(HEALPIX_UNSEEN)).toBe('-1.6375E+30');
    expect(formatReal(1e-7)).toBe('1.0E-7');
    expect(formatCard({ keyword: 'BAD_DATA', value: real(HEALPIX_UNSEEN) }).slice(0, 30)).toBe('BAD_DATA=          -1.6375E+30');
    expect(formatCard({ keyword: 'MINJUMP', value: real(30) }).slice(0, 30)).toBe('MINJUMP =                 30.0');
  });

  it('refuses what a FITS header cannot hold', () => {
    expect(() => formatCard({ keyword: 'toolongkey', value: 1 })).toThrow(/keyword/);
    expect(() => formatCard({ keyword: 'lower', value: 1 })).toThrow(/keyword/);
    expect(() => formatCard({ keyword: 'NOTE', value: 'Δθ' })).toThrow(/ASCII/);
    expect(() => formatCard({ keyword: 'NOTE', value: 'x'.repeat(69) })).toThrow(/68/);
    expect(() => formatReal(NaN)).toThrow(/finite/);
  });

  it('wraps long comments into COMMENT cards of at most 72 characters', () => {
    const text = 'word '.repeat(40).trim();
    const out = commentCards(text).map(formatCard);
    expect(out.length).toBe(3);
    for (const c of out) {
      expect(c.startsWith('COMMENT ')).toBe(true);
      expect(c).toHaveLength(80);
    }
    expect(out.map((c) => c.slice(8).trim()).join(' ')).toBe(text);
  });

  it('ends with END and pads with spaces to 2880-byte blocks', () => {
    const h = headerBytes(Array.from({ length: 36 }, (_, i) => ({ keyword: `K${i}`, value: i })));
    expect(h.length).toBe(2 * FITS_BLOCK); // 36 cards + END do not fit one block of 36
    expect(ascii(h, 36 * 80, 37 * 80)).toBe('END'.padEnd(80));
    expect([...h.subarray(37 * 80)].every((b) => b === 0x20)).toBe(true);
  });
});

describe('HDUs', () => {
  it('the empty primary HDU is one block: SIMPLE, BITPIX 8, NAXIS 0, EXTEND', () => {
    const p = emptyPrimaryHdu();
    expect(p.length).toBe(FITS_BLOCK);
    expect(cards(p).map((c) => c.slice(0, 8).trim())).toEqual(['SIMPLE', 'BITPIX', 'NAXIS', 'EXTEND', 'END']);
  });

  it('a binary table stores rows big-endian, in column order, zero-padded', () => {
    const hdu = binTableHdu([
      { name: 'A', format: 'B', values: [1, 255] },
      { name: 'B', format: 'I', values: [-1, 2], nullValue: -1 },
      { name: 'C', format: 'E', values: [1, -2] },
    ]);
    const head = cards(hdu);
    expect(head[0].slice(0, 20)).toBe("XTENSION= 'BINTABLE'");
    expect(head.find((c) => c.startsWith('NAXIS1'))!.slice(10, 30).trim()).toBe('7');
    expect(head.find((c) => c.startsWith('NAXIS2'))!.slice(10, 30).trim()).toBe('2');
    expect(head.find((c) => c.startsWith('TFORM3'))!.slice(10, 20)).toBe("'1E      '");
    expect(head.find((c) => c.startsWith('TNULL2'))!.slice(10, 30).trim()).toBe('-1');
    const data = hdu.subarray(FITS_BLOCK);
    expect(hdu.length).toBe(2 * FITS_BLOCK);
    // big-endian as FITS Standard 4.0 §7.3 requires; row 0: 01 | FF FF | 3F 80 00 00 (IEEE 754 1.0);  row 1: FF | 00 02 | C0 00 00 00 (−2.0)
    expect([...data.subarray(0, 14)]).toEqual([0x01, 0xff, 0xff, 0x3f, 0x80, 0x00, 0x00, 0xff, 0x00, 0x02, 0xc0, 0x00, 0x00, 0x00]);
    expect([...data.subarray(14)].every((b) => b === 0)).toBe(true);
  });

  it('refuses columns of unequal length and TNULL on reals', () => {
    expect(() => binTableHdu([{ name: 'A', format: 'B', values: [1] }, { name: 'B', format: 'B', values: [1, 2] }])).toThrow(/values, expected 1/);
    expect(() => binTableHdu([{ name: 'A', format: 'E', values: [1], nullValue: 0 }])).toThrow(/integer columns/);
  });

  it('a HEALPix map carries the HEALPix FITS keywords and one row per pixel', () => {
    const npix = 12;
    const file = healpixMapFits({ nside: 1, coordsys: 'C', columns: [{ name: 'MASK', format: 'B', values: new Uint8Array(npix).fill(1) }] });
    expect(file.length % FITS_BLOCK).toBe(0);
    const ext = cards(file, FITS_BLOCK).map((c) => c.trimEnd());
    const value = (k: string) => ext.find((c) => c.startsWith(k.padEnd(8)))?.slice(10).split(' / ')[0].trim();
    expect(value('PIXTYPE')).toBe("'HEALPIX '");
    expect(value('ORDERING')).toBe("'NESTED  '");
    expect(value('COORDSYS')).toBe("'C       '");
    expect(value('NSIDE')).toBe('1');
    expect(value('FIRSTPIX')).toBe('0');
    expect(value('LASTPIX')).toBe('11');
    expect(value('INDXSCHM')).toBe("'IMPLICIT'");
    expect(value('OBJECT')).toBe("'FULLSKY '");
    expect(value('NAXIS2')).toBe('12');
    expect(() => healpixMapFits({ nside: 2, coordsys: 'G', columns: [{ name: 'MASK', format: 'B', values: new Uint8Array(12) }] })).toThrow(/48 pixels/);
  });
});
