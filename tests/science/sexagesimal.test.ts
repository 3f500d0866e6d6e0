import { describe, expect, it } from 'vitest';
import { parseDecDeg, parseRaDeg, type ParseResult } from '../../server/science/sexagesimal.js';

function value(r: ParseResult): number {
  if (!r.ok) throw new Error(`expected ok, got: ${r.message}`);
  return r.value;
}

function message(r: ParseResult): string {
  if (r.ok) throw new Error(`expected an error, got ${r.value}`);
  return r.message;
}

describe('parseRaDeg', () => {
  it('reads hours–minutes–seconds in the three notations', () => {
    // 5h34m31.9s = (5 + 34/60 + 31.9/3600)·15 = 83.6329166…° (arithmetic).
    const expected = (5 + 34 / 60 + 31.9 / 3600) * 15;
    for (const text of ['05:34:31.9', '05 34 31.9', '5h34m31.9s', '5h 34m 31.9s', ' 05:34:31.9 ']) {
      expect(value(parseRaDeg(text))).toBeCloseTo(expected, 12);
    }
    expect(value(parseRaDeg('05:34:31.9'))).toBeCloseTo(83.63291666666667, 12);
  });

  it('reads decimal degrees as degrees (not hours), from text or number', () => {
    expect(value(parseRaDeg('83.633'))).toBe(83.633);
    expect(value(parseRaDeg(83.633))).toBe(83.633);
    expect(value(parseRaDeg('0'))).toBe(0);
  });

  it('accepts hours and minutes only, with a fractional last field', () => {
    expect(value(parseRaDeg('05:34.5'))).toBeCloseTo((5 + 34.5 / 60) * 15, 12);
    expect(value(parseRaDeg('5h34m'))).toBeCloseTo((5 + 34 / 60) * 15, 12);
    expect(value(parseRaDeg('23:59:59.999'))).toBeLessThan(360);
  });

  it('explains what was expected for bad input', () => {
    expect(message(parseRaDeg('24:00:00'))).toMatch(/hours 24 must be below 24/);
    expect(message(parseRaDeg('05:60:00'))).toMatch(/minutes 60 must be below 60/);
    expect(message(parseRaDeg('05:34:60'))).toMatch(/seconds 60 must be below 60/);
    expect(message(parseRaDeg('360'))).toMatch(/outside 0 to below 360 degrees/);
    expect(message(parseRaDeg('-1.5'))).toMatch(/outside 0 to below 360/);
    expect(message(parseRaDeg('-05:00:00'))).toMatch(/never negative/);
    expect(message(parseRaDeg('abc'))).toMatch(/^RA "abc": is not a number; expected decimal degrees/);
    expect(message(parseRaDeg('05::34'))).toMatch(/empty field/);
    expect(message(parseRaDeg('5.5:34:00'))).toMatch(/only the last field may have a decimal fraction/);
    expect(message(parseRaDeg('05 34 31 2'))).toMatch(/4 fields/);
    expect(message(parseRaDeg('5d34m'))).toMatch(/sexagesimal RA is in hours/);
    expect(message(parseRaDeg(''))).toMatch(/RA is empty/);
    expect(message(parseRaDeg('5s34m'))).toMatch(/out of order/);
    // Every message names what is accepted.
    expect(message(parseRaDeg('x'))).toMatch(/hours:minutes:seconds \(e\.g\. 05:34:31\.9/);
  });
});

describe('parseDecDeg', () => {
  it('reads signed degrees–arcminutes–arcseconds in the listed notations', () => {
    expect(value(parseDecDeg('+22 00 52'))).toBeCloseTo(22 + 52 / 3600, 12);
    expect(value(parseDecDeg('+22d00m52s'))).toBeCloseTo(22 + 52 / 3600, 12);
    expect(value(parseDecDeg('+22°00′52″'))).toBeCloseTo(22 + 52 / 3600, 12);
    expect(value(parseDecDeg(`+22°00'52"`))).toBeCloseTo(22 + 52 / 3600, 12);
    expect(value(parseDecDeg('-05:23:28'))).toBeCloseTo(-(5 + 23 / 60 + 28 / 3600), 12);
    expect(value(parseDecDeg('−05 23 28'))).toBeCloseTo(-(5 + 23 / 60 + 28 / 3600), 12);
    expect(value(parseDecDeg('22 00 52'))).toBeCloseTo(22 + 52 / 3600, 12);
  });

  it('keeps the sign of a negative zero-degree declination', () => {
    // −00°30′00″ is −0.5°, not +0.5° (a classic parsing bug: Number("-00") = −0 is lost).
    expect(value(parseDecDeg('-00 30 00'))).toBe(-0.5);
    expect(value(parseDecDeg('-00:00:36'))).toBeCloseTo(-0.01, 15);
    expect(value(parseDecDeg('+00 30 00'))).toBe(0.5);
  });

  it('returns +0, never −0, where the sign of a zero means nothing', () => {
    // IEEE 754 keeps a signed zero (Number("-0") is −0); a position of zero has no sign, and a
    // −0 would print as "-0" or sort oddly downstream (common practice). Object.is tells ±0 apart.
    expect(Object.is(value(parseDecDeg('-0')), 0)).toBe(true);
    expect(Object.is(value(parseDecDeg('-00:00:00')), 0)).toBe(true);
    expect(Object.is(value(parseDecDeg('−00 00 00.0')), 0)).toBe(true);
    expect(Object.is(value(parseDecDeg(-0)), 0)).toBe(true);
    expect(Object.is(value(parseRaDeg('-0')), 0)).toBe(true);
    expect(Object.is(value(parseRaDeg('-0.0')), 0)).toBe(true);
    expect(Object.is(value(parseRaDeg(-0)), 0)).toBe(true);
    expect(Object.is(value(parseRaDeg('00:00:00')), 0)).toBe(true);
    // the sign of a non-zero value still counts: −00:30:00 is −0.5°
    expect(value(parseDecDeg('-00:30:00'))).toBe(-0.5);
  });

  it('reads decimal degrees and accepts the poles', () => {
    expect(value(parseDecDeg('-5.391'))).toBe(-5.391);
    expect(value(parseDecDeg(-5.391))).toBe(-5.391);
    expect(value(parseDecDeg('90'))).toBe(90);
    expect(value(parseDecDeg('-90 00 00'))).toBe(-90);
  });

  it('explains what was expected for bad input', () => {
    expect(message(parseDecDeg('91'))).toMatch(/outside −90 to 90 degrees/);
    expect(message(parseDecDeg('+90 00 01'))).toMatch(/beyond ±90 degrees/);
    expect(message(parseDecDeg('+22 60 00'))).toMatch(/minutes 60 must be below 60/);
    expect(message(parseDecDeg('+22 00 60'))).toMatch(/seconds 60 must be below 60/);
    expect(message(parseDecDeg('12h30m'))).toMatch(/declination is in degrees/);
    expect(message(parseDecDeg('-'))).toMatch(/^Dec "-": /);
    expect(message(parseDecDeg('+22 00 52 1'))).toMatch(/4 fields/);
    expect(message(parseDecDeg('north'))).toMatch(/expected decimal degrees from −90 to 90/);
    expect(message(parseDecDeg('+22:00m52s'))).toMatch(/mixes unit letters and colons/);
  });
});
