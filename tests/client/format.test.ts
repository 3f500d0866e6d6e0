import { describe, expect, it } from 'vitest';
import { fixed, formatAge, formatBytes, formatCount, percentOf } from '../../src/lib/format';

describe('formatBytes', () => {
  it('uses binary prefixes (IEC 80000-13: 1 KiB = 1024 B, 1 MiB = 1024 KiB)', () => {
    expect(formatBytes(0)).toBe('0 B');
    expect(formatBytes(1023)).toBe('1023 B');
    expect(formatBytes(1024)).toBe('1.0 KiB');
    expect(formatBytes(1536)).toBe('1.5 KiB'); // 1536 / 1024 = 1.5
    expect(formatBytes(10 * 1024)).toBe('10 KiB'); // from 10 on, no decimal
    expect(formatBytes(5 * 1024 * 1024)).toBe('5.0 MiB');
    expect(formatBytes(3 * 1024 ** 3)).toBe('3.0 GiB');
    expect(formatBytes(2048 * 1024 ** 3)).toBe('2048 GiB'); // GiB is the largest unit shown
  });
  it('shows a dash for a value that is not a number', () => {
    expect(formatBytes(Number.NaN)).toBe('—');
    expect(formatBytes(Number.POSITIVE_INFINITY)).toBe('—');
  });
});

describe('formatAge', () => {
  const now = Date.parse('2026-03-10T12:00:00Z');
  const ago = (s: number) => new Date(now - s * 1000).toISOString();
  it('words the time since, in the steps the pages use (common practice)', () => {
    expect(formatAge(ago(10), now)).toBe('just now');
    expect(formatAge(ago(5 * 60), now)).toBe('5 min ago');
    expect(formatAge(ago(3 * 3600), now)).toBe('3 h ago');
    expect(formatAge(ago(2 * 86400), now)).toBe('2 days ago');
  });
  it('gives the date after two weeks, and a dash for text that is no date', () => {
    expect(formatAge('2026-01-01T00:00:00Z', now)).toBe(new Date('2026-01-01T00:00:00Z').toLocaleDateString('en'));
    expect(formatAge('not a date', now)).toBe('—');
  });
  it('never says "in the future": a clock ahead by a little is "just now"', () => {
    expect(formatAge(new Date(now + 5000).toISOString(), now)).toBe('just now');
  });
});

describe('formatCount, fixed, percentOf', () => {
  it('groups thousands with commas (English locale)', () => {
    expect(formatCount(1234567)).toBe('1,234,567');
    expect(formatCount(0)).toBe('0');
    expect(formatCount(null)).toBe('—');
    expect(formatCount(undefined)).toBe('—');
  });
  it('rounds to the digits asked for, half away from zero as toFixed does for exact halves', () => {
    expect(fixed(1.25, 1)).toBe('1.3'); // 1.25 is exact in binary
    expect(fixed(-0.5, 0)).toBe('-1'); // toFixed rounds the magnitude (ECMA-262 Number.prototype.toFixed)
    expect(fixed(null, 2)).toBe('—');
    expect(fixed(Number.NaN, 2)).toBe('—');
  });
  it('keeps a percentage inside [0, 100] and 0 for an unknown total', () => {
    expect(percentOf(1, 4)).toBe(25);
    expect(percentOf(5, 4)).toBe(100);
    expect(percentOf(-1, 4)).toBe(0);
    expect(percentOf(3, 0)).toBe(0);
  });
});
