import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { compilePayloadDecoder } from '../../src/engine/payload-decoder.js';
import type { PayloadDecoder, PayloadDecoderSpec } from '../../src/engine/payload-decoder.js';
import { createDecodedMeasurement } from '../../src/engine/decoded-measurement.js';
import { PayloadDecoderSpecError } from '../../src/engine/payload-decoder-spec.js';
import { DECODE_REJECTIONS } from '../../src/engine/decode-rejection.js';
import { MAX_TIME_STAMP_S, MIN_TIME_STAMP_S } from '../../src/engine/time-stamp-parser.js';

const ARRIVAL_S = 1_764_633_700; // 2025-12-02T00:01:40Z, the receiving side's clock
const T0_S = Date.UTC(2025, 11, 2) / 1000; // 1764633600, from Date.UTC rather than the parser

const GNSS = '{"t":1764633600.5,"lat":51.9521,"lon":4.0512,"hacc":2.5,"seq":17}';

/** Decodes text (or bytes) with a fresh slot; returns the slot and the verdict. */
function run(spec: PayloadDecoderSpec, dim: number, payload: string | Uint8Array) {
  const decoder = compilePayloadDecoder(spec, dim);
  const out = createDecodedMeasurement(dim);
  const bytes = typeof payload === 'string' ? Buffer.from(payload, 'utf8') : payload;
  const ok = decoder.decode(bytes, ARRIVAL_S, out);
  return { ok, out };
}

const reasonOf = (spec: PayloadDecoderSpec, dim: number, payload: string | Uint8Array) =>
  run(spec, dim, payload).out.reason;

const level = { format: 'json', values: ['level'] } as const satisfies PayloadDecoderSpec;

describe('json decoder', () => {
  const gnss = { format: 'json', values: ['lat', 'lon'], time: 't', sigma: 'hacc', sequence: 'seq' } as const;

  it('decodes a GNSS fix with time, sigma and sequence', () => {
    const { ok, out } = run(gnss, 2, GNSS);
    expect(ok).toBe(true);
    expect(out.reason).toBeNull();
    expect([...out.values]).toEqual([51.9521, 4.0512]);
    expect(out.timeS).toBe(1764633600.5);
    expect(out.timeFromPayload).toBe(true);
    expect(out.hasCovariance).toBe(true);
    expect([...out.covariance]).toEqual([6.25, 0, 0, 6.25]);
    expect(out.hasSequence).toBe(true);
    expect(out.sequence).toBe(17);
  });

  it('uses the arrival time when the spec names no time field', () => {
    const { ok, out } = run(level, 1, '{"level":2.31}');
    expect(ok).toBe(true);
    expect(out.timeS).toBe(ARRIVAL_S);
    expect(out.timeFromPayload).toBe(false);
    expect(out.hasCovariance).toBe(false);
    expect(out.hasSequence).toBe(false);
  });

  it('follows nested keys and array indices', () => {
    const spec = { format: 'json', values: ['pos.lat', 'fix[1]'] } as const;
    expect([...run(spec, 2, '{"pos":{"lat":51.95},"fix":[0,4.05]}').out.values]).toEqual([51.95, 4.05]);
  });

  it('accepts a plain Uint8Array view with a byte offset', () => {
    const backing = new TextEncoder().encode('xx{"level":1.5}');
    const { ok, out } = run(level, 1, backing.subarray(2));
    expect(ok).toBe(true);
    expect(out.values[0]).toBe(1.5);
  });

  it.each([
    ['{"lvl":1}', 'missing-field'],
    ['{"level":"1.5"}', 'wrong-type'],
    ['{"level":null}', 'wrong-type'],
    ['{"level":true}', 'wrong-type'],
    ['{"level":[1]}', 'wrong-type'],
    ['[1]', 'wrong-type'],
    ['{"level":1e999}', 'non-finite'],
    ['{"level":-1e999}', 'non-finite'],
    ['{"level":1', 'not-json'],
    ['', 'not-json'],
    ['NaN', 'not-json'],
    ["{'level':1}", 'not-json'],
  ])('rejects %j with %s', (payload, reason) => {
    expect(reasonOf(level, 1, payload)).toBe(reason);
  });

  it('rejects a value reached through a non-object as wrong-type', () => {
    expect(reasonOf({ format: 'json', values: ['pos.lat'] }, 1, '{"pos":5}')).toBe('wrong-type');
  });

  it('rejects bytes that are not UTF-8', () => {
    expect(reasonOf(level, 1, new Uint8Array([0x7b, 0xff, 0x7d]))).toBe('not-utf8');
  });

  it('never reads inherited properties such as constructor or __proto__', () => {
    expect(reasonOf({ format: 'json', values: ['constructor'] }, 1, '{}')).toBe('missing-field');
    expect(reasonOf({ format: 'json', values: ['level'] }, 1, '{"__proto__":{"level":1}}')).toBe('missing-field');
    expect(({} as Record<string, unknown>)['level']).toBeUndefined();
  });

  it('clears the previous verdict and flags when a slot is reused', () => {
    const decoder = compilePayloadDecoder(gnss, 2);
    const out = createDecodedMeasurement(2);
    expect(decoder.decode(Buffer.from('{}'), ARRIVAL_S, out)).toBe(false);
    expect(out.reason).toBe('missing-field');
    expect(decoder.decode(Buffer.from(GNSS), ARRIVAL_S, out)).toBe(true);
    expect(out.reason).toBeNull();
    const plain = compilePayloadDecoder({ format: 'json', values: ['lat', 'lon'] }, 2);
    expect(plain.decode(Buffer.from(GNSS), ARRIVAL_S, out)).toBe(true);
    expect([out.hasCovariance, out.hasSequence, out.timeFromPayload]).toEqual([false, false, false]);
  });
});

describe('json decoder time stamps', () => {
  const timed = (timeUnit?: 'auto' | 's' | 'ms' | 'iso'): PayloadDecoderSpec =>
    timeUnit === undefined
      ? { format: 'json', values: ['v'], time: 't' }
      : { format: 'json', values: ['v'], time: 't', timeUnit };
  const timeOf = (spec: PayloadDecoderSpec, t: string) => run(spec, 1, `{"v":1,"t":${t}}`).out;

  it.each([
    [undefined, '1764633600', T0_S],
    ['auto', '1764633600.25', T0_S + 0.25],
    ['auto', '1764633600250', T0_S + 0.25],
    ['s', '1764633600', T0_S],
    ['ms', '1764633600250', T0_S + 0.25],
    ['iso', '"2025-12-02T00:00:00Z"', T0_S],
    ['iso', '"2025-12-02T01:30:00.5+01:30"', T0_S + 0.5],
    ['iso', '"2025-12-01T19:00:00-05:00"', T0_S],
    ['auto', '"2025-12-02T00:00:00Z"', T0_S],
  ] as const)('reads timeUnit %s stamp %s', (unit, t, expected) => {
    const out = timeOf(timed(unit), t);
    expect(out.reason).toBeNull();
    expect(out.timeS).toBeCloseTo(expected, 6);
    expect(out.timeFromPayload).toBe(true);
  });

  it.each([
    ['s', '"2025-12-02T00:00:00Z"', 'wrong-type'],
    ['ms', '"1764633600250"', 'wrong-type'],
    ['iso', '1764633600', 'wrong-type'],
    ['auto', 'null', 'wrong-type'],
    ['auto', '{}', 'wrong-type'],
    ['auto', '"1764633600"', 'bad-time'],
    ['auto', '"2025-12-02T00:00:00"', 'bad-time'],
    ['auto', '"2025-12-02"', 'bad-time'],
    ['auto', '"Tue, 02 Dec 2025 00:00:00 GMT"', 'bad-time'],
    ['auto', '0', 'bad-time'],
    ['auto', '-1764633600', 'bad-time'],
    ['auto', '946684799', 'bad-time'],
    ['auto', '4102444801', 'bad-time'],
    ['auto', '1e999', 'bad-time'],
    ['s', '1764633600250', 'bad-time'],
    ['ms', '1764633600', 'bad-time'],
    ['iso', '"1999-12-31T23:59:59Z"', 'bad-time'],
  ] as const)('rejects timeUnit %s stamp %s with %s', (unit, t, reason) => {
    expect(timeOf(timed(unit), t).reason).toBe(reason);
  });

  it('rejects a missing time field rather than falling back to arrival time', () => {
    expect(reasonOf(timed(), 1, '{"v":1}')).toBe('missing-field');
  });
});

describe('json decoder covariance', () => {
  const withSigma = { format: 'json', values: ['x', 'y'], sigma: 's' } as const;
  const withCov = (dim: 2 | 3): PayloadDecoderSpec => ({
    format: 'json',
    values: dim === 2 ? ['x', 'y'] : ['x', 'y', 'z'],
    covariance: 'r',
  });
  const cov2 = (r: string) => run(withCov(2), 2, `{"x":1,"y":2,"r":${r}}`).out;

  it('reads per-component sigma into a diagonal R', () => {
    expect([...run(withSigma, 2, '{"x":1,"y":2,"s":[2,3]}').out.covariance]).toEqual([4, 0, 0, 9]);
  });

  it('reads a full row-major 2×2 covariance', () => {
    const out = cov2('[4,1,1,9]');
    expect(out.reason).toBeNull();
    expect(out.hasCovariance).toBe(true);
    expect([...out.covariance]).toEqual([4, 1, 1, 9]);
  });

  it('expands a 3×3 upper triangle into the full symmetric matrix', () => {
    const out = run(withCov(3), 3, '{"x":1,"y":2,"z":3,"r":[4,1,2,9,3,16]}').out;
    expect([...out.covariance]).toEqual([4, 1, 2, 1, 9, 3, 2, 3, 16]);
  });

  it('symmetrizes a full matrix whose halves differ only by printing round-off', () => {
    const out = cov2('[4,1.0000001,1,9]');
    expect(out.reason).toBeNull();
    expect(out.covariance[1]).toBe(out.covariance[2]);
  });

  it.each([
    ['[4,1,2,9]', 'bad-covariance'],
    ['[0,0,0,9]', 'bad-covariance'],
    ['[-4,0,0,9]', 'bad-covariance'],
    ['[4,1,9]', null],
    ['[4,0,0,1e999]', 'bad-covariance'],
    ['[4,1]', 'wrong-length'],
    ['[4,1,1,9,0]', 'wrong-length'],
    ['[4,"1",1,9]', 'wrong-type'],
    ['{"xx":4}', 'wrong-type'],
    ['4', 'wrong-type'],
  ] as const)('gives covariance %s the verdict %s', (r, reason) => {
    expect(cov2(r).reason).toBe(reason);
  });

  it.each([
    ['0', 'bad-covariance'],
    ['-1', 'bad-covariance'],
    ['1e999', 'bad-covariance'],
    ['1e200', 'bad-covariance'],
    ['1e-200', 'bad-covariance'],
    ['[2,0]', 'bad-covariance'],
    ['[2]', 'wrong-length'],
    ['[2,"3"]', 'wrong-type'],
    ['"2.5"', 'wrong-type'],
  ] as const)('gives sigma %s the verdict %s', (s, reason) => {
    expect(run(withSigma, 2, `{"x":1,"y":2,"s":${s}}`).out.reason).toBe(reason);
  });

  it('rejects a missing sigma or covariance field', () => {
    expect(reasonOf(withSigma, 2, '{"x":1,"y":2}')).toBe('missing-field');
    expect(reasonOf(withCov(2), 2, '{"x":1,"y":2}')).toBe('missing-field');
  });
});

describe('json decoder sequence', () => {
  const seq = { format: 'json', values: ['v'], sequence: 'n' } as const;
  const verdict = (n: string) => run(seq, 1, `{"v":1,"n":${n}}`).out;

  it('reads zero and the largest safe integer', () => {
    expect(verdict('0').sequence).toBe(0);
    expect(verdict('9007199254740991').sequence).toBe(Number.MAX_SAFE_INTEGER);
  });

  it('turns -0 into 0', () => {
    expect(Object.is(verdict('-0').sequence, 0)).toBe(true);
  });

  it.each([
    ['-1', 'bad-sequence'],
    ['1.5', 'bad-sequence'],
    ['9007199254740992', 'bad-sequence'],
    ['1e999', 'bad-sequence'],
    ['"17"', 'wrong-type'],
  ] as const)('gives sequence %s the verdict %s', (n, reason) => {
    expect(verdict(n).reason).toBe(reason);
  });

  it('rejects a missing sequence field', () => {
    expect(reasonOf(seq, 1, '{"v":1}')).toBe('missing-field');
  });
});

describe('payload size limit', () => {
  const padded = (totalBytes: number) => `{"level":1${' '.repeat(totalBytes - 11)}}`;

  it('defaults to 16384 bytes', () => {
    expect(compilePayloadDecoder(level, 1).maxBytes).toBe(16384);
  });

  it('accepts a payload of exactly maxBytes and rejects one byte more', () => {
    expect(reasonOf(level, 1, padded(16384))).toBeNull();
    expect(reasonOf(level, 1, padded(16385))).toBe('too-large');
  });

  it('checks the size before the bytes are decoded', () => {
    const spec = { ...level, maxBytes: 4 };
    expect(reasonOf(spec, 1, new Uint8Array([0xff, 0xff, 0xff, 0xff, 0xff]))).toBe('too-large');
  });

  it('applies the limit to every format', () => {
    expect(reasonOf({ format: 'number', maxBytes: 3 }, 1, '12.5')).toBe('too-large');
    expect(reasonOf({ format: 'csv', values: [0], maxBytes: 3 }, 1, '12.5')).toBe('too-large');
  });
});

describe('number decoder', () => {
  const number = { format: 'number' } as const;

  it.each([
    ['3.25', 3.25],
    [' -0.5e1\r\n', -5],
    ['0', 0],
    ['1e-999', 0],
  ])('reads %j as %d with the arrival time', (payload, value) => {
    const { ok, out } = run(number, 1, payload);
    expect(ok).toBe(true);
    expect(out.values[0]).toBe(value);
    expect(out.timeS).toBe(ARRIVAL_S);
    expect(out.timeFromPayload).toBe(false);
  });

  it.each(['', ' ', 'abc', '0x10', 'Infinity', 'NaN', '1,5', '"3"', '+3', '.5', '01', '1.', '1e', '3 4', '1_000'])(
    'rejects %j as not-number',
    (payload) => {
      expect(reasonOf(number, 1, payload)).toBe('not-number');
    },
  );

  it('rejects an overflowing number as non-finite', () => {
    expect(reasonOf(number, 1, '1e999')).toBe('non-finite');
  });

  it('rejects bytes that are not UTF-8', () => {
    expect(reasonOf(number, 1, new Uint8Array([0x31, 0xc3]))).toBe('not-utf8');
  });
});

describe('compilePayloadDecoder', () => {
  it.each([
    ['a dimension of 0', level, 0],
    ['a fractional dimension', level, 1.5],
    ['a dimension above 64', { format: 'json', values: Array.from({ length: 65 }, (_, i) => `v${i}`) }, 65],
    ['a value count other than M', level, 2],
    ['both sigma and covariance', { format: 'json', values: ['v'], sigma: 's', covariance: 'c' }, 1],
    ['a malformed field path', { format: 'json', values: ['v..x'] }, 1],
    ['a malformed time path', { format: 'json', values: ['v'], time: '[x]' }, 1],
    ['format number with M = 2', { format: 'number' }, 2],
    ['maxBytes of 0', { format: 'number', maxBytes: 0 }, 1],
    ['a negative csv column', { format: 'csv', values: [-1] }, 1],
    ['a fractional csv column', { format: 'csv', values: [0], time: 1.5 }, 1],
    ['a csv column past 1023', { format: 'csv', values: [1024] }, 1],
    ['an unknown format', { format: 'xml' } as unknown as PayloadDecoderSpec, 1],
    ['an unknown time unit', { format: 'json', values: ['v'], time: 't', timeUnit: 'us' } as unknown as PayloadDecoderSpec, 1],
    ['an unknown csv separator', { format: 'csv', values: [0], separator: '|' } as unknown as PayloadDecoderSpec, 1],
  ] as [string, PayloadDecoderSpec, number][])('refuses %s', (_what, spec, dim) => {
    expect(() => compilePayloadDecoder(spec, dim)).toThrow(PayloadDecoderSpecError);
  });

  it('reports the format and dimension it was compiled for', () => {
    const decoder: PayloadDecoder = compilePayloadDecoder({ format: 'csv', values: [1, 2] }, 2);
    expect([decoder.format, decoder.dim]).toEqual(['csv', 2]);
  });
});

describe('decoder robustness (properties)', () => {
  const specs: [PayloadDecoderSpec, number][] = [
    [{ format: 'json', values: ['lat', 'lon'], time: 't', sigma: 'hacc', sequence: 'seq' }, 2],
    [{ format: 'json', values: ['pos.lat', 'fix[0]'], covariance: 'r', timeUnit: 'iso', time: 'at' }, 2],
    [{ format: 'json', values: ['__proto__', 'constructor.x'], sigma: 'prototype' }, 2],
    [{ format: 'number' }, 1],
    [{ format: 'csv', values: [0, 2], time: 1, sigma: 3, sequence: 4 }, 2],
  ];
  const decoders = specs.map(([spec, dim]) => ({
    decoder: compilePayloadDecoder(spec, dim),
    out: createDecodedMeasurement(dim),
  }));
  const reasons = new Set<string>(DECODE_REJECTIONS);

  /** Decodes with every spec; asserts a clean verdict and a consistent slot on success. */
  function checkAll(bytes: Uint8Array): void {
    for (const { decoder, out } of decoders) {
      const ok = decoder.decode(bytes, ARRIVAL_S, out);
      if (!ok) {
        expect(reasons.has(out.reason ?? 'null')).toBe(true);
        continue;
      }
      expect(out.reason).toBeNull();
      for (const v of out.values) expect(Number.isFinite(v)).toBe(true);
      expect(out.timeS >= MIN_TIME_STAMP_S && out.timeS <= MAX_TIME_STAMP_S).toBe(true);
      if (out.hasSequence) expect(Number.isSafeInteger(out.sequence) && out.sequence >= 0).toBe(true);
      if (out.hasCovariance) {
        const m = decoder.dim;
        for (let i = 0; i < m; i++) {
          expect(out.covariance[i * m + i]! > 0).toBe(true);
          for (let j = 0; j < m; j++) {
            expect(Number.isFinite(out.covariance[i * m + j]!)).toBe(true);
            expect(out.covariance[i * m + j]).toBe(out.covariance[j * m + i]);
          }
        }
      }
    }
  }
  const utf8 = (text: string) => Buffer.from(text, 'utf8');
  const rawNumber = fc.oneof(
    fc.double().filter(Number.isFinite).map(String),
    fc.constantFrom('1e999', '-1e999', '1e-999', '1764633600.5', '1764633600500', '-0', '9'.repeat(400)),
  );
  const key = fc.oneof(
    fc.constantFrom('__proto__', 'constructor', 'prototype', 'lat', 'lon', 't', 'at', 'hacc', 'seq', 'pos', 'fix', 'r', 'x'),
    fc.string({ maxLength: 8 }),
  );
  const jsonText: fc.Arbitrary<string> = fc.letrec<{ node: string }>((tie) => ({
    node: fc.oneof(
      { depthSize: 'small', withCrossShrink: true },
      rawNumber,
      fc.string({ maxLength: 40 }).map((s) => JSON.stringify(s)),
      fc.constantFrom('null', 'true', 'false', '"2025-12-02T00:00:00Z"', '"2025-12-02T00:00:00"'),
      fc.array(tie('node'), { maxLength: 5 }).map((items) => `[${items.join(',')}]`),
      fc.array(fc.tuple(key, tie('node')), { maxLength: 6 }).map(
        (entries) => `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${v}`).join(',')}}`,
      ),
    ),
  })).node;

  it('gives random bytes a clean verdict and never throws', () => {
    fc.assert(fc.property(fc.uint8Array({ maxLength: 300 }), (bytes) => checkAll(bytes)), { numRuns: 500 });
  });

  it('gives random JSON values a clean verdict and never throws', () => {
    fc.assert(fc.property(fc.jsonValue(), (value) => checkAll(utf8(JSON.stringify(value) ?? 'null'))), {
      numRuns: 500,
    });
  });

  it('gives JSON built from prototype keys, huge numbers and long strings a clean verdict', () => {
    fc.assert(fc.property(jsonText, (text) => checkAll(utf8(text))), { numRuns: 1000 });
    expect(Object.keys(Object.prototype)).toEqual([]);
    expect(({} as Record<string, unknown>)['lat']).toBeUndefined();
  });

  it('gives random CSV-like records a clean verdict', () => {
    const field = fc.oneof(rawNumber, fc.string({ maxLength: 12 }), fc.constant('2025-12-02T00:00:00Z'));
    const record = fc.array(field, { maxLength: 8 }).map((fields) => fields.join(','));
    fc.assert(fc.property(record, (text) => checkAll(utf8(text))), { numRuns: 500 });
  });

  it('rejects deeply nested JSON without throwing, whatever the size limit', () => {
    const deep = (n: number) => '{"lat":'.repeat(n) + '1' + '}'.repeat(n);
    const arrays = (n: number) => '['.repeat(n) + ']'.repeat(n);
    checkAll(utf8(deep(2000)));
    checkAll(utf8(arrays(8000)));
    // Past maxBytes the parser is never reached; with a raised limit, JSON.parse either copes
    // (V8 parses nesting iteratively) or throws, and both end in a verdict.
    const roomy = compilePayloadDecoder({ format: 'json', values: ['lat'], maxBytes: 1_000_000 }, 1);
    const out = createDecodedMeasurement(1);
    expect(roomy.decode(utf8(arrays(200_000)), ARRIVAL_S, out)).toBe(false);
    expect(['wrong-type', 'not-json']).toContain(out.reason);
    expect(roomy.decode(utf8(deep(100_000)), ARRIVAL_S, out)).toBe(false);
    expect(['wrong-type', 'not-json']).toContain(out.reason);
  });

  it('rejects a long string where a number belongs', () => {
    const { out } = run(level, 1, `{"level":${JSON.stringify('9'.repeat(16000))}}`);
    expect(out.reason).toBe('wrong-type');
  });
});
