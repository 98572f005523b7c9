import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import {
  MAX_TIME_STAMP_S,
  MIN_TIME_STAMP_S,
  epochNumberToSeconds,
  parseIsoTimeStampS,
} from '../../src/engine/time-stamp-parser.js';

// Reference instants come from Date.UTC, an implementation independent of the parser under test.
const DEC_02_2025_S = Date.UTC(2025, 11, 2) / 1000; // 1764633600

describe('parseIsoTimeStampS', () => {
  it('reads a UTC stamp with Z', () => {
    expect(parseIsoTimeStampS('2025-12-02T00:00:00Z')).toBe(DEC_02_2025_S);
  });

  it('subtracts a positive offset', () => {
    expect(parseIsoTimeStampS('2025-12-02T01:00:00+01:00')).toBe(DEC_02_2025_S);
  });

  it('adds a negative offset with minutes', () => {
    expect(parseIsoTimeStampS('2025-12-01T18:30:00-05:30')).toBe(DEC_02_2025_S);
  });

  it('reads fraction digits down to nanoseconds', () => {
    expect(parseIsoTimeStampS('2025-12-02T00:00:00.5Z')).toBe(DEC_02_2025_S + 0.5);
    expect(parseIsoTimeStampS('2025-12-02T00:00:00.123456789Z')).toBeCloseTo(DEC_02_2025_S + 0.123456789, 6);
  });

  it('accepts 29 February of a leap year', () => {
    expect(parseIsoTimeStampS('2024-02-29T12:00:00Z')).toBe(Date.UTC(2024, 1, 29, 12) / 1000);
  });

  it('reads a stamp inside a larger text between start and end', () => {
    const text = 'x,2025-12-02T00:00:00Z,y';
    expect(parseIsoTimeStampS(text, 2, 22)).toBe(DEC_02_2025_S);
  });

  it('accepts both ends of the plausible range', () => {
    expect(parseIsoTimeStampS('2000-01-01T00:00:00Z')).toBe(MIN_TIME_STAMP_S);
    expect(parseIsoTimeStampS('2100-01-01T00:00:00Z')).toBe(MAX_TIME_STAMP_S);
  });

  it.each([
    '2025-12-02',
    '2025-12-02T00:00:00',
    '2025-12-02T00:00Z',
    '2025-12-02 00:00:00Z',
    '2025-12-02t00:00:00z',
    '2025-12-02T00:00:00z',
    '20251202T000000Z',
    '2025-12-02T00:00:00+0100',
    '2025-12-02T00:00:00+01',
    '2025-12-02T00:00:00+24:00',
    '2025-12-02T00:00:00+01:60',
    '2025-12-02T00:00:00.Z',
    '2025-12-02T00:00:00.1234567891Z',
    '2025-12-02T00:00:00,5Z',
    '2025-12-02T24:00:00Z',
    '2025-12-02T23:60:00Z',
    '2025-12-31T23:59:60Z',
    '2025-02-29T00:00:00Z',
    '2100-02-29T00:00:00Z',
    '2025-13-01T00:00:00Z',
    '2025-00-01T00:00:00Z',
    '2025-04-31T00:00:00Z',
    '2025-12-00T00:00:00Z',
    '2025-12-02T00:00:00Zjunk',
    ' 2025-12-02T00:00:00Z',
    '2025-1a-02T00:00:00Z',
    '1999-12-31T23:59:59Z',
    '2100-01-01T00:00:01Z',
    'Tue, 02 Dec 2025 00:00:00 GMT',
    '',
  ])('returns NaN for %j', (text) => {
    expect(parseIsoTimeStampS(text)).toBeNaN();
  });

  it('agrees with Date on every millisecond stamp in range (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: MIN_TIME_STAMP_S * 1000, max: MAX_TIME_STAMP_S * 1000 }), (ms) => {
        const iso = new Date(ms).toISOString();
        expect(parseIsoTimeStampS(iso)).toBeCloseTo(ms / 1000, 6);
      }),
    );
  });
});

describe('epochNumberToSeconds', () => {
  it('reads seconds under s and auto', () => {
    expect(epochNumberToSeconds(1764633600.5, 's')).toBe(1764633600.5);
    expect(epochNumberToSeconds(1764633600.5, 'auto')).toBe(1764633600.5);
  });

  it('reads milliseconds under ms and auto', () => {
    expect(epochNumberToSeconds(1764633600500, 'ms')).toBe(1764633600.5);
    expect(epochNumberToSeconds(1764633600500, 'auto')).toBe(1764633600.5);
  });

  it('returns NaN for milliseconds declared as seconds', () => {
    expect(epochNumberToSeconds(1764633600500, 's')).toBeNaN();
  });

  it('returns NaN for seconds declared as milliseconds', () => {
    expect(epochNumberToSeconds(1764633600, 'ms')).toBeNaN();
  });

  it.each([0, -1764633600, MIN_TIME_STAMP_S - 1, MAX_TIME_STAMP_S + 1, Infinity, NaN])(
    'returns NaN for the implausible stamp %d s',
    (value) => {
      expect(epochNumberToSeconds(value, 'auto')).toBeNaN();
    },
  );
});
