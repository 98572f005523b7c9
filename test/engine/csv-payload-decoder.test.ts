import { describe, it, expect } from 'vitest';
import { compilePayloadDecoder } from '../../src/engine/payload-decoder.js';
import type { PayloadDecoderSpec } from '../../src/engine/payload-decoder.js';
import { createDecodedMeasurement } from '../../src/engine/decoded-measurement.js';

const ARRIVAL_S = 1_764_633_700;
const T0_S = Date.UTC(2025, 11, 2) / 1000; // 1764633600, from Date.UTC rather than the parser

function run(spec: PayloadDecoderSpec, dim: number, payload: string | Uint8Array) {
  const out = createDecodedMeasurement(dim);
  const bytes = typeof payload === 'string' ? Buffer.from(payload, 'utf8') : payload;
  const ok = compilePayloadDecoder(spec, dim).decode(bytes, ARRIVAL_S, out);
  return { ok, out };
}

// A tow tractor's logger line: time, tractor id, east m, north m, sigma m, sequence.
const fix = { format: 'csv', values: [2, 3], time: 0, sigma: 4, sequence: 5 } as const;
const reasonOf = (spec: PayloadDecoderSpec, dim: number, payload: string | Uint8Array) =>
  run(spec, dim, payload).out.reason;

describe('csv decoder', () => {
  it('decodes values, time, sigma and sequence from their columns', () => {
    const { ok, out } = run(fix, 2, '1764633600.5,tug-03,12.5,-40.25,0.5,9');
    expect(ok).toBe(true);
    expect([...out.values]).toEqual([12.5, -40.25]);
    expect(out.timeS).toBe(1764633600.5);
    expect(out.timeFromPayload).toBe(true);
    expect([...out.covariance]).toEqual([0.25, 0, 0, 0.25]);
    expect(out.hasCovariance).toBe(true);
    expect(out.sequence).toBe(9);
    expect(out.hasSequence).toBe(true);
  });

  it('uses the arrival time when the spec names no time column', () => {
    const { ok, out } = run({ format: 'csv', values: [1] }, 1, 'tank-a,2.31');
    expect(ok).toBe(true);
    expect(out.timeS).toBe(ARRIVAL_S);
    expect(out.timeFromPayload).toBe(false);
  });

  it('ignores columns past the last one it needs', () => {
    expect(run({ format: 'csv', values: [0] }, 1, '2.31,anything,at all,"quoted, too"').out.values[0]).toBe(2.31);
  });

  it.each([
    [';', '2.5;3.5'],
    ['\t', '2.5\t3.5'],
    [',', '2.5,3.5'],
  ] as const)('splits on the separator %j', (separator, payload) => {
    expect([...run({ format: 'csv', values: [0, 1], separator }, 2, payload).out.values]).toEqual([2.5, 3.5]);
  });

  it('does not split on a comma when the separator is a semicolon', () => {
    expect(reasonOf({ format: 'csv', values: [0], separator: ';' }, 1, '2,5;3')).toBe('wrong-type');
  });

  it.each(['2.5,3.5\n', '2.5,3.5\r\n', ' 2.5 , 3.5 '])('accepts %j with a trailing line ending or padding', (payload) => {
    expect([...run({ format: 'csv', values: [0, 1] }, 2, payload).out.values]).toEqual([2.5, 3.5]);
  });

  it.each(['2.5,3.5\n4.5,5.5', '2.5\r3.5', '2.5,3.5\n\n', '\n2.5'])('rejects the multi-record payload %j', (payload) => {
    expect(reasonOf({ format: 'csv', values: [0] }, 1, payload)).toBe('wrong-length');
  });

  it.each([
    ['2.5', 'missing-field'],
    ['2.5,', 'wrong-type'],
    ['2.5,abc', 'wrong-type'],
    ['2.5,"3.5"', 'wrong-type'],
    ['2.5,0x10', 'wrong-type'],
    ['2.5,1e999', 'non-finite'],
  ] as const)('rejects %j with %s', (payload, reason) => {
    expect(reasonOf({ format: 'csv', values: [0, 1] }, 2, payload)).toBe(reason);
  });

  it('rejects bytes that are not UTF-8', () => {
    expect(reasonOf({ format: 'csv', values: [0] }, 1, new Uint8Array([0x31, 0x2c, 0xfe]))).toBe('not-utf8');
  });
});

describe('csv decoder time stamps', () => {
  const timed = (timeUnit: 'auto' | 's' | 'ms' | 'iso'): PayloadDecoderSpec => ({
    format: 'csv',
    values: [1],
    time: 0,
    timeUnit,
  });

  it.each([
    ['auto', '1764633600', T0_S],
    ['auto', '1764633600250', T0_S + 0.25],
    ['auto', '2025-12-02T00:00:00Z', T0_S],
    ['s', '1764633600', T0_S],
    ['ms', '1764633600250', T0_S + 0.25],
    ['iso', '2025-12-02T02:00:00+02:00', T0_S],
    ['iso', ' 2025-12-02T00:00:00.75Z ', T0_S + 0.75],
  ] as const)('reads timeUnit %s stamp %j', (unit, t, expected) => {
    const out = run(timed(unit), 1, `${t},1.0`).out;
    expect(out.reason).toBeNull();
    expect(out.timeS).toBeCloseTo(expected, 6);
  });

  it.each([
    ['s', '2025-12-02T00:00:00Z', 'wrong-type'],
    ['ms', 'soon', 'wrong-type'],
    ['iso', '1764633600', 'bad-time'],
    ['auto', '2025-12-02 00:00:00', 'bad-time'],
    ['auto', 'yesterday', 'bad-time'],
    ['auto', '12', 'bad-time'],
    ['s', '1e999', 'bad-time'],
  ] as const)('rejects timeUnit %s stamp %j with %s', (unit, t, reason) => {
    expect(run(timed(unit), 1, `${t},1.0`).out.reason).toBe(reason);
  });

  it('rejects a record too short to hold the time column', () => {
    expect(reasonOf({ format: 'csv', values: [0], time: 3 }, 1, '1.0,2.0')).toBe('missing-field');
  });
});

describe('csv decoder sigma and sequence', () => {
  it.each([
    ['0', 'bad-covariance'],
    ['-0.5', 'bad-covariance'],
    ['1e999', 'bad-covariance'],
    ['wide', 'wrong-type'],
  ] as const)('gives sigma %j the verdict %s', (sigma, reason) => {
    expect(reasonOf(fix, 2, `1764633600,tug-03,1,2,${sigma},9`)).toBe(reason);
  });

  it.each([
    ['-1', 'bad-sequence'],
    ['2.5', 'bad-sequence'],
    ['9007199254740992', 'bad-sequence'],
    ['nine', 'wrong-type'],
  ] as const)('gives sequence %j the verdict %s', (sequence, reason) => {
    expect(reasonOf(fix, 2, `1764633600,tug-03,1,2,0.5,${sequence}`)).toBe(reason);
  });

  it('rejects a record too short to hold the sigma or sequence column', () => {
    expect(reasonOf(fix, 2, '1764633600,tug-03,1,2')).toBe('missing-field');
    expect(reasonOf(fix, 2, '1764633600,tug-03,1,2,0.5')).toBe('missing-field');
  });
});
