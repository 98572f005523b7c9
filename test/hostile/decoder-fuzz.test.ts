import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  DECODE_REJECTIONS, compilePayloadDecoder, createDecodedMeasurement, type PayloadDecoder, type PayloadDecoderSpec,
} from '../../src/engine/payload-decoder.js';
import { csvRecords, deepJson, documentsFor, hostileBytes, hostileJsonValue, type JsonSpecShape } from './hostile-arbitraries.js';

/** The arrival time handed to every decode (epoch s). */
const ARRIVAL_S = 1_768_204_800; // 2026-01-12T08:00:00Z
const TIME_MIN_S = 946_684_800; // 2000-01-01T00:00:00Z, the decoders' lower bound
const TIME_MAX_S = 4_102_444_800; // 2100-01-01T00:00:00Z, the upper bound
const REASONS: ReadonlySet<string> = new Set(DECODE_REJECTIONS);

interface Case {
  readonly name: string;
  readonly spec: PayloadDecoderSpec;
  readonly dim: number;
}

const JSON_CASES: readonly (Case & { readonly spec: JsonSpecShape & PayloadDecoderSpec })[] = [
  { name: 'tank level with time and sequence', dim: 1, spec: { format: 'json', values: ['level_m'], time: 't', sequence: 'seq' } },
  { name: 'yard fix with sigma', dim: 2, spec: { format: 'json', values: ['lat', 'lon'], time: 't', sigma: 'hacc', sequence: 'seq' } },
  { name: 'nested position with full covariance, ISO time', dim: 3, spec: { format: 'json', values: ['pos[0]', 'pos[1]', 'pos[2]'], time: 'at', timeUnit: 'iso', covariance: 'cov' } },
  { name: 'deep path, ms time, per-component sigma', dim: 1, spec: { format: 'json', values: ['gnss.fix[1].lon'], time: 'ts', timeUnit: 'ms', sigma: 'acc' } },
  { name: 'prototype-named fields, 512-byte limit', dim: 2, spec: { format: 'json', values: ['__proto__', 'constructor'], time: 'prototype', timeUnit: 's', maxBytes: 512 } },
];
const NUMBER_CASES: readonly Case[] = [
  { name: 'bare number', dim: 1, spec: { format: 'number' } },
  { name: 'bare number, 16-byte limit', dim: 1, spec: { format: 'number', maxBytes: 16 } },
];
const CSV_CASES: readonly (Case & { readonly separator: string })[] = [
  { name: 'value, time, sigma, sequence', dim: 1, separator: ',', spec: { format: 'csv', values: [0], time: 1, sigma: 2, sequence: 3 } },
  { name: 'three values out of order, ISO time, semicolons', dim: 3, separator: ';', spec: { format: 'csv', values: [2, 0, 5], time: 1, timeUnit: 'iso', separator: ';' } },
  { name: 'tab separated, 64-byte limit', dim: 1, separator: '\t', spec: { format: 'csv', values: [0], separator: '\t', maxBytes: 64 } },
];

/** Decodes and checks the verdict's invariants; returns whether it was accepted. */
function decodeChecked(decoder: PayloadDecoder, payload: Uint8Array): boolean {
  const out = createDecodedMeasurement(decoder.dim);
  let ok = false;
  expect(() => {
    ok = decoder.decode(payload, ARRIVAL_S, out);
  }).not.toThrow();
  expect(typeof ok).toBe('boolean');
  if (!ok) {
    expect(REASONS.has(out.reason ?? '')).toBe(true);
    if (payload.byteLength > decoder.maxBytes) expect(out.reason).toBe('too-large');
    return false;
  }
  expect(out.reason).toBeNull();
  expect(payload.byteLength).toBeLessThanOrEqual(decoder.maxBytes);
  for (const v of out.values) expect(Number.isFinite(v)).toBe(true);
  if (out.timeFromPayload) expect(out.timeS >= TIME_MIN_S && out.timeS <= TIME_MAX_S).toBe(true);
  else expect(out.timeS).toBe(ARRIVAL_S);
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
  return true;
}

const utf8 = (text: string): Uint8Array => Uint8Array.from(Buffer.from(text, 'utf8'));
const prototypeNames = (): string[] => [Object.prototype, Array.prototype, Function.prototype].flatMap((p) => Object.getOwnPropertyNames(p)).sort();

describe('hostile input: every payload decoder', () => {
  const before = prototypeNames();

  for (const c of JSON_CASES) {
    describe(`json: ${c.name}`, () => {
      const decoder = compilePayloadDecoder(c.spec, c.dim);

      it('gives documents shaped like its spec a clean verdict, accepting some of them', () => {
        let accepted = 0;
        fc.assert(fc.property(documentsFor(c.spec, c.dim), (text) => {
          if (decodeChecked(decoder, utf8(text))) accepted += 1;
        }), { numRuns: 1000 });
        // The fuzz reaches the end of the decoder, not only its first refusal.
        expect(accepted).toBeGreaterThan(0);
      });

      it('gives bytes, deep nesting and any JSON value a clean verdict', () => {
        fc.assert(fc.property(fc.oneof(hostileBytes, deepJson.map(utf8), hostileJsonValue.map(utf8)), (bytes) => {
          decodeChecked(decoder, bytes);
        }), { numRuns: 1000 });
      });

      it('refuses anything past maxBytes as too-large before parsing it', () => {
        fc.assert(fc.property(fc.integer({ min: 1, max: 4096 }), (extra) => {
          const out = createDecodedMeasurement(c.dim);
          expect(decoder.decode(new Uint8Array(decoder.maxBytes + extra).fill(0x7b), ARRIVAL_S, out)).toBe(false);
          expect(out.reason).toBe('too-large');
        }), { numRuns: 50 });
      });
    });
  }

  it('json: reads exactly the values of a well-formed yard fix', () => {
    const decoder = compilePayloadDecoder({ format: 'json', values: ['lat', 'lon'], time: 't', sigma: 'hacc', sequence: 'seq' }, 2);
    fc.assert(fc.property(
      fc.double({ min: -90, max: 90, noNaN: true }), fc.double({ min: -180, max: 180, noNaN: true }),
      fc.double({ min: 0.5, max: 50, noNaN: true }), fc.nat(), fc.integer({ min: 0, max: 3_000_000 }),
      (lat, lon, hacc, seq, dtS) => {
        const out = createDecodedMeasurement(2);
        const payload = utf8(JSON.stringify({ t: ARRIVAL_S - dtS, lat, lon, hacc, seq }));
        expect(decoder.decode(payload, ARRIVAL_S, out)).toBe(true);
        expect(Array.from(out.values)).toEqual([lat + 0, lon + 0]);
        expect(out.timeS).toBe(ARRIVAL_S - dtS);
        expect(out.sequence).toBe(seq);
        expect(out.covariance[0]).toBe(hacc * hacc);
      },
    ), { numRuns: 500 });
  });

  for (const c of NUMBER_CASES) {
    it(`number (${c.name}): gives bytes and number texts a clean verdict`, () => {
      const decoder = compilePayloadDecoder(c.spec, c.dim);
      const texts = fc.oneof(fc.double().map(String), fc.constantFrom('1e999', '-0', ' 3.5\n', '0x10', '1_0', 'NaN', '9'.repeat(30)));
      fc.assert(fc.property(fc.oneof(hostileBytes, texts.map(utf8)), (bytes) => {
        decodeChecked(decoder, bytes);
      }), { numRuns: 2000 });
    });
  }

  it('number: reads exactly any finite double written as JSON writes it', () => {
    const decoder = compilePayloadDecoder({ format: 'number' }, 1);
    fc.assert(fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (v) => {
      const out = createDecodedMeasurement(1);
      expect(decoder.decode(utf8(JSON.stringify(v)), ARRIVAL_S, out)).toBe(true);
      expect(out.values[0]).toBe(v + 0);
    }), { numRuns: 1000 });
  });

  for (const c of CSV_CASES) {
    it(`csv (${c.name}): gives hostile records and bytes a clean verdict`, () => {
      const decoder = compilePayloadDecoder(c.spec, c.dim);
      fc.assert(fc.property(fc.oneof(csvRecords(c.separator).map(utf8), hostileBytes), (bytes) => {
        decodeChecked(decoder, bytes);
      }), { numRuns: 2000 });
    });
  }

  it('csv: reads exactly the fields of a well-formed record', () => {
    const decoder = compilePayloadDecoder({ format: 'csv', values: [0], time: 1, sigma: 2, sequence: 3 }, 1);
    fc.assert(fc.property(fc.double({ min: -1e9, max: 1e9, noNaN: true }), fc.double({ min: 1e-3, max: 1e3, noNaN: true }), fc.nat(), (v, sigma, seq) => {
      const out = createDecodedMeasurement(1);
      expect(decoder.decode(utf8(`${v},${ARRIVAL_S},${sigma},${seq}\r\n`), ARRIVAL_S, out)).toBe(true);
      expect(out.values[0]).toBe(v + 0);
      expect(out.timeS).toBe(ARRIVAL_S);
      expect(out.covariance[0]).toBe(sigma * sigma);
      expect(out.sequence).toBe(seq);
    }), { numRuns: 500 });
  });

  it('leaves Object, Array and Function prototypes untouched after all of the above', () => {
    expect(prototypeNames()).toEqual(before);
    expect(({} as Record<string, unknown>)['polluted']).toBeUndefined();
    expect(([] as unknown as Record<string, unknown>)['polluted']).toBeUndefined();
  });
});
