/**
 * A minimal FITS writer (FITS Standard 4.0, IAU FITS Working Group 2016): header cards of 80
 * ASCII characters in 2880-byte blocks, an empty primary HDU, and binary-table extensions with
 * big-endian data, zero-padded to whole blocks. Enough for HEALPix maps in the HEALPix FITS
 * convention (Górski et al. 2005; the HEALPix "FITS file format" note): one row per pixel
 * (INDXSCHM = 'IMPLICIT'), PIXTYPE, ORDERING, NSIDE, FIRSTPIX, LASTPIX, COORDSYS, OBJECT.
 */

export const FITS_BLOCK = 2880;
const CARD = 80;

/** HEALPix's value for a pixel without data (healpy.UNSEEN, the HEALPix convention: −1.6375e30). */
export const HEALPIX_UNSEEN = -1.6375e30;

/** A real number written as a FITS real even when it is a whole number. */
export interface FitsReal {
  real: number;
}
export const real = (x: number): FitsReal => ({ real: x });

export type FitsValue = string | number | boolean | FitsReal;

export type FitsCard =
  | { keyword: string; value: FitsValue; comment?: string }
  | { keyword: 'COMMENT' | 'HISTORY'; text: string };

const KEYWORD = /^[A-Z0-9_-]{1,8}$/;
const PRINTABLE = /^[\x20-\x7e]*$/;

function assertAscii(text: string, what: string): void {
  if (!PRINTABLE.test(text)) throw new RangeError(`FITS ${what} "${text}" has characters outside printable ASCII`);
}

/** A real in FITS form: always with a decimal point or an exponent, exponent letter 'E'. */
export function formatReal(x: number): string {
  if (!Number.isFinite(x)) throw new RangeError(`FITS header reals must be finite, got ${x}`);
  if (Number.isInteger(x) && Math.abs(x) < 1e15) return x.toFixed(1);
  const s = String(x).toUpperCase();
  if (!s.includes('E')) return s;
  const [mant, exp] = s.split('E');
  return `${mant.includes('.') ? mant : `${mant}.0`}E${exp.startsWith('-') || exp.startsWith('+') ? exp : `+${exp}`}`;
}

function formatValue(v: FitsValue): string {
  if (typeof v === 'boolean') return (v ? 'T' : 'F').padStart(20);
  if (typeof v === 'number') {
    if (!Number.isInteger(v)) return formatReal(v).padStart(20);
    return String(v).padStart(20);
  }
  if (typeof v === 'object') return formatReal(v.real).padStart(20);
  assertAscii(v, 'string value');
  // quotes doubled; at least 8 characters between the quotes; trailing spaces are not significant
  const inner = v.replace(/'/g, "''").padEnd(8);
  if (inner.length > 68) throw new RangeError(`FITS string value "${v}" is longer than one card holds (68 characters)`);
  return `'${inner}'`.padEnd(20);
}

/** One 80-character card. */
export function formatCard(card: FitsCard): string {
  if ('text' in card) {
    assertAscii(card.text, 'comment');
    return `${card.keyword.padEnd(8)}${card.text}`.slice(0, CARD).padEnd(CARD);
  }
  if (!KEYWORD.test(card.keyword)) throw new RangeError(`FITS keyword "${card.keyword}": expected 1–8 characters from A–Z, 0–9, _ and -`);
  let line = `${card.keyword.padEnd(8)}= ${formatValue(card.value)}`;
  if (line.length > CARD) throw new RangeError(`FITS card ${card.keyword} is longer than 80 characters`);
  if (card.comment) {
    assertAscii(card.comment, 'comment');
    line = `${line} / ${card.comment}`.slice(0, CARD);
  }
  return line.padEnd(CARD);
}

/** COMMENT cards for a long text, wrapped at word boundaries into 72-character lines. */
export function commentCards(text: string): FitsCard[] {
  const out: FitsCard[] = [];
  let line = '';
  for (const word of text.split(/\s+/).filter(Boolean)) {
    if (line && line.length + 1 + word.length > 72) {
      out.push({ keyword: 'COMMENT', text: line });
      line = word;
    } else line = line ? `${line} ${word}` : word;
  }
  if (line) out.push({ keyword: 'COMMENT', text: line });
  return out;
}

/** A header: the cards, END, padded with spaces to whole 2880-byte blocks. */
export function headerBytes(cards: FitsCard[]): Uint8Array {
  const text = cards.map(formatCard).join('') + 'END'.padEnd(CARD);
  const size = Math.ceil(text.length / FITS_BLOCK) * FITS_BLOCK;
  const out = new Uint8Array(size).fill(0x20);
  for (let i = 0; i < text.length; i++) out[i] = text.charCodeAt(i);
  return out;
}

/** The empty primary HDU that must precede extensions: SIMPLE, BITPIX 8, NAXIS 0, EXTEND. */
export function emptyPrimaryHdu(extra: FitsCard[] = []): Uint8Array {
  return headerBytes([
    { keyword: 'SIMPLE', value: true, comment: 'conforms to FITS standard' },
    { keyword: 'BITPIX', value: 8, comment: 'array data type' },
    { keyword: 'NAXIS', value: 0, comment: 'no primary data array' },
    { keyword: 'EXTEND', value: true, comment: 'extensions follow' },
    ...extra,
  ]);
}

/** Binary-table column types used here: unsigned byte, 16- and 32-bit integers, 32- and 64-bit reals. */
export type BinTableFormat = 'B' | 'I' | 'J' | 'E' | 'D';
const WIDTH: Record<BinTableFormat, number> = { B: 1, I: 2, J: 4, E: 4, D: 8 };

export interface BinTableColumn {
  name: string;
  format: BinTableFormat;
  unit?: string;
  /** TNULLn: the integer that marks a missing value (integer formats only). */
  nullValue?: number;
  values: ArrayLike<number>;
}

/** A BINTABLE extension HDU (header + big-endian rows, zero-padded). Every column needs the same length. */
export function binTableHdu(columns: BinTableColumn[], extra: FitsCard[] = []): Uint8Array {
  if (!columns.length) throw new RangeError('a FITS binary table needs at least one column');
  const nrows = columns[0].values.length;
  for (const c of columns) if (c.values.length !== nrows) throw new RangeError(`FITS column ${c.name} has ${c.values.length} values, expected ${nrows}`);
  const rowBytes = columns.reduce((n, c) => n + WIDTH[c.format], 0);
  const cards: FitsCard[] = [
    { keyword: 'XTENSION', value: 'BINTABLE', comment: 'binary table extension' },
    { keyword: 'BITPIX', value: 8, comment: '8-bit bytes' },
    { keyword: 'NAXIS', value: 2, comment: '2-dimensional table' },
    { keyword: 'NAXIS1', value: rowBytes, comment: 'bytes per row' },
    { keyword: 'NAXIS2', value: nrows, comment: 'number of rows' },
    { keyword: 'PCOUNT', value: 0, comment: 'no heap' },
    { keyword: 'GCOUNT', value: 1, comment: 'one data group' },
    { keyword: 'TFIELDS', value: columns.length, comment: 'number of columns' },
  ];
  columns.forEach((c, i) => {
    const n = i + 1;
    cards.push({ keyword: `TTYPE${n}`, value: c.name });
    cards.push({ keyword: `TFORM${n}`, value: `1${c.format}` });
    if (c.unit) cards.push({ keyword: `TUNIT${n}`, value: c.unit });
    if (c.nullValue !== undefined) {
      if (c.format === 'E' || c.format === 'D') throw new RangeError(`FITS column ${c.name}: TNULL is for integer columns only`);
      cards.push({ keyword: `TNULL${n}`, value: c.nullValue, comment: 'value marking no data' });
    }
  });
  const header = headerBytes([...cards, ...extra]);
  const dataSize = Math.ceil((rowBytes * nrows) / FITS_BLOCK) * FITS_BLOCK;
  const data = new Uint8Array(dataSize);
  const view = new DataView(data.buffer);
  let offset = 0;
  for (let r = 0; r < nrows; r++) {
    for (const c of columns) {
      const v = c.values[r];
      switch (c.format) {
        case 'B': view.setUint8(offset, v); break;
        case 'I': view.setInt16(offset, v, false); break;
        case 'J': view.setInt32(offset, v, false); break;
        case 'E': view.setFloat32(offset, v, false); break;
        case 'D': view.setFloat64(offset, v, false); break;
      }
      offset += WIDTH[c.format];
    }
  }
  const out = new Uint8Array(header.length + data.length);
  out.set(header, 0);
  out.set(data, header.length);
  return out;
}

export function concatHdus(hdus: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(hdus.reduce((n, h) => n + h.length, 0));
  let at = 0;
  for (const h of hdus) {
    out.set(h, at);
    at += h.length;
  }
  return out;
}

export interface HealpixMapFitsInput {
  nside: number;
  /** 'G' Galactic, 'C' celestial (equatorial), 'E' ecliptic. */
  coordsys: 'G' | 'C' | 'E';
  /** One value per NESTED pixel 0..12·NSIDE²−1 in every column. */
  columns: BinTableColumn[];
  /** Cards after the HEALPix keywords (criteria, provenance…). */
  extra?: FitsCard[];
  extname?: string;
  primaryExtra?: FitsCard[];
}

/** A full-sky NESTED HEALPix map as a FITS file: empty primary HDU + one binary table, one row per pixel. */
export function healpixMapFits(input: HealpixMapFitsInput): Uint8Array {
  const npix = 12 * input.nside * input.nside;
  for (const c of input.columns) if (c.values.length !== npix) throw new RangeError(`HEALPix column ${c.name} has ${c.values.length} values; NSIDE ${input.nside} has ${npix} pixels`);
  const healpix: FitsCard[] = [
    ...(input.extname ? [{ keyword: 'EXTNAME', value: input.extname } as FitsCard] : []),
    { keyword: 'PIXTYPE', value: 'HEALPIX', comment: 'HEALPIX pixelisation' },
    { keyword: 'ORDERING', value: 'NESTED', comment: 'pixel ordering scheme, RING or NESTED' },
    { keyword: 'COORDSYS', value: input.coordsys, comment: 'G Galactic, C equatorial, E ecliptic' },
    { keyword: 'NSIDE', value: input.nside, comment: 'resolution parameter of the HEALPix map' },
    { keyword: 'FIRSTPIX', value: 0, comment: 'first pixel number (0 based)' },
    { keyword: 'LASTPIX', value: npix - 1, comment: 'last pixel number (0 based)' },
    { keyword: 'INDXSCHM', value: 'IMPLICIT', comment: 'one row per pixel, in order' },
    { keyword: 'OBJECT', value: 'FULLSKY', comment: 'the map covers the whole sphere' },
    { keyword: 'BAD_DATA', value: real(HEALPIX_UNSEEN), comment: 'HEALPix UNSEEN: pixel without a value' },
  ];
  return concatHdus([emptyPrimaryHdu(input.primaryExtra), binTableHdu(input.columns, [...healpix, ...(input.extra ?? [])])]);
}
