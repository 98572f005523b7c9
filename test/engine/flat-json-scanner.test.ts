import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { compileJsonPayloadDecoder } from '../../src/engine/json-payload-decoder.js';
import { createDecodedMeasurement, type DecodedMeasurement } from '../../src/engine/decoded-measurement.js';
import { FlatJsonScanner } from '../../src/engine/flat-json-scanner.js';
import type { JsonDecoderSpec } from '../../src/engine/payload-decoder-spec.js';

const ARRIVAL_S = 1_767_225_600; // 2026-01-01T00:00:00Z

/** Everything a decode leaves in the slot that a caller may read. */
function outcome(ok: boolean, out: DecodedMeasurement): unknown {
  if (!ok) return { ok, reason: out.reason };
  return {
    ok, values: Array.from(out.values), timeS: out.timeS, timeFromPayload: out.timeFromPayload,
    covariance: out.hasCovariance ? Array.from(out.covariance) : null, sequence: out.hasSequence ? out.sequence : null,
  };
}

/** Decodes with and without the byte scanner; both must leave the same outcome. */
function sameBothWays(spec: JsonDecoderSpec, dim: number, payload: Uint8Array): unknown {
  const scanned = createDecodedMeasurement(dim);
  const general = createDecodedMeasurement(dim);
  const a = outcome(compileJsonPayloadDecoder(spec, dim).decode(payload, ARRIVAL_S, scanned), scanned);
  const b = outcome(compileJsonPayloadDecoder(spec, dim, false).decode(payload, ARRIVAL_S, general), general);
  expect(a).toEqual(b);
  return a;
}

const JSON_NUMBER = fc.oneof(
  fc.double({ noNaN: true, noDefaultInfinity: true }).map(String).filter((s) => !s.includes('Infinity')),
  fc.tuple(fc.boolean(), fc.bigInt({ min: 0n, max: 10n ** 20n }), fc.option(fc.stringMatching(/^[0-9]{1,19}$/)), fc.option(fc.integer({ min: -330, max: 330 })))
    .map(([neg, int, frac, exp]) => `${neg ? '-' : ''}${int}${frac === null ? '' : `.${frac}`}${exp === null ? '' : `e${exp}`}`),
  fc.constantFrom('0', '-0', '0.0', '1e400', '-1e400', '5e-324', '1E+2', '1e-0', '123456789012345678', '0.1000000000000000055511151231257827'),
);
const BROKEN_NUMBER = fc.constantFrom('01', '1.', '.5', '-', '+1', '1e', '1e+', '0x10', 'NaN', 'Infinity', '1_0', '--1', '1.2.3');
const OTHER_VALUE = fc.oneof(
  fc.constantFrom('true', 'false', 'null', '"x"', '"2026-01-01T00:00:00Z"', '"a\\"b"', '"\\u0041"', '"Zürich"', '[1,2]', '{"a":1}', '""', 'tru', 'nul'),
  fc.string({ maxLength: 6 }).map((s) => JSON.stringify(s)),
);
const SPACE = fc.constantFrom('', '', '', ' ', '\t', '\n ', '\r\n');
const KEY = fc.constantFrom('lat', 'lon', 't', 'hacc', 'seq', 'speed', 'la', 'latt', '__proto__', 'l\\u0061t', 'lät');

/** Objects of wanted and other keys with numbers, broken numbers and other values, and a few outer defects. */
const PAYLOAD = fc.tuple(
  fc.array(fc.tuple(KEY, fc.oneof({ weight: 6, arbitrary: JSON_NUMBER }, { weight: 1, arbitrary: BROKEN_NUMBER }, { weight: 2, arbitrary: OTHER_VALUE }), SPACE, SPACE), { maxLength: 7 }),
  fc.constantFrom('', '', '', '', ' ', '}', ',', 'x', '\u0000'),
  fc.constantFrom('{', '{', '{', ' {', '[', ''),
).map(([fields, tail, head]) => `${head}${fields.map(([k, v, s1, s2]) => `${s1}"${k}"${s2}:${s1}${v}${s2}`).join(',')}}${tail}`);

/** Sound values nine times in ten. */
function mostly(sound: fc.Arbitrary<string>, other: fc.Arbitrary<string>): fc.Arbitrary<string> {
  return fc.oneof({ weight: 9, arbitrary: sound }, { weight: 1, arbitrary: other });
}

/** Yard fixes: every wanted key, mostly sound values, extra fields, any order, sometimes one defect. */
const YARD_FIX = fc.tuple(
  fc.tuple(
    fc.constant('lat'), fc.double({ min: -90, max: 90, noNaN: true }).map(String),
  ),
  fc.tuple(fc.constant('lon'), mostly(fc.double({ min: -180, max: 180, noNaN: true }).map(String), JSON_NUMBER)),
  fc.tuple(fc.constant('t'), mostly(
    fc.oneof(
      fc.integer({ min: 946_684_800_000, max: 4_102_444_800_000 }).map((ms) => String(ms / 1000)),
      fc.integer({ min: 946_684_800_000, max: 4_102_444_800_000 }).map(String),
    ),
    JSON_NUMBER,
  )),
  fc.tuple(fc.constant('hacc'), mostly(fc.double({ min: 0.01, max: 50, noNaN: true }).map(String), JSON_NUMBER)),
  fc.tuple(fc.constant('seq'), mostly(fc.nat().map(String), JSON_NUMBER)),
  fc.array(fc.tuple(mostly(fc.constantFrom('speed', 'la', 'latt', '__proto__', 'l\\u0061t', 'lät'), KEY), fc.oneof(JSON_NUMBER, OTHER_VALUE, BROKEN_NUMBER)), { maxLength: 2 }),
  fc.array(fc.nat(), { minLength: 8, maxLength: 8 }),
  SPACE,
).map(([a, b, c, d, e, extra, order, space]) => {
  const fields = [a, b, c, d, e, ...extra].map((f, i) => ({ f, k: order[i % 8]! }));
  fields.sort((x, y) => x.k - y.k);
  return `{${fields.map(({ f: [k, v] }) => `${space}"${k}"${space}:${v}`).join(',')}}`;
});

describe('flat JSON byte scanner', () => {
  it('reads numbers exactly as JSON.parse does', () => {
    // Reference: JSON.parse, the platform's own conversion (ECMA-262 JSON.parse, StringToNumber).
    const scanner = FlatJsonScanner.forKeys(['v'])!;
    fc.assert(fc.property(JSON_NUMBER, (text) => {
      expect(scanner.scan(Buffer.from(`{"v":${text}}`))).toBe(true);
      expect(Object.is(scanner.values[0], JSON.parse(text))).toBe(true);
    }), { numRuns: 5000 });
  });

  it('gives the general path\'s verdict and values for a yard fix spec', () => {
    const spec: JsonDecoderSpec = { format: 'json', values: ['lat', 'lon'], time: 't', sigma: 'hacc', sequence: 'seq' };
    let accepted = 0;
    fc.assert(fc.property(fc.oneof(PAYLOAD, YARD_FIX), (text) => {
      if ((sameBothWays(spec, 2, Buffer.from(text)) as { ok: boolean }).ok) accepted += 1;
    }), { numRuns: 6000 });
    // Most yard-shaped payloads are accepted, so the comparison covers the values, not only refusals.
    expect(accepted).toBeGreaterThan(1000);
  });

  it('gives the general path\'s verdict and values with auto, ms and s time units and a small byte limit', () => {
    for (const timeUnit of ['auto', 'ms', 's'] as const) {
      const spec: JsonDecoderSpec = { format: 'json', values: ['speed'], time: 't', timeUnit, sequence: 'seq', maxBytes: 48 };
      fc.assert(fc.property(PAYLOAD, (text) => { sameBothWays(spec, 1, Buffer.from(text)); }), { numRuns: 1500 });
    }
  });

  it('gives the general path\'s verdict on bytes that are not UTF-8', () => {
    const spec: JsonDecoderSpec = { format: 'json', values: ['speed'] };
    expect(sameBothWays(spec, 1, Uint8Array.of(0x7b, 0x22, 0xff, 0x22, 0x3a, 0x31, 0x7d))).toEqual({ ok: false, reason: 'not-utf8' });
  });

  it('takes the last of a repeated key, as JSON.parse does', () => {
    const spec: JsonDecoderSpec = { format: 'json', values: ['speed'] };
    expect(sameBothWays(spec, 1, Buffer.from('{"speed":1,"speed":2.5}'))).toMatchObject({ ok: true, values: [2.5] });
  });

  it('accepts a typical wheel reading on the fast path', () => {
    const scanner = FlatJsonScanner.forKeys(['speed_mps', 't', 'seq'])!;
    expect(scanner.scan(Buffer.from('{"t":1767225600.100,"speed_mps":-0.030,"seq":3120}'))).toBe(true);
    expect(Array.from(scanner.values)).toEqual([-0.03, 1767225600.1, 3120]);
  });

  it('leaves nested values, escapes and non-ASCII text to the general path', () => {
    const scanner = FlatJsonScanner.forKeys(['v'])!;
    for (const text of ['{"v":[1]}', '{"v":1,"w":{"a":1}}', '{"v":1,"n":"a\\nb"}', '{"v":1,"n":"ä"}', '{"v":"1"}', '{"w":1}', '{}', '{"v":1} x']) {
      expect(scanner.scan(Buffer.from(text)), text).toBe(false);
    }
    expect(FlatJsonScanner.forKeys(['höhe'])).toBeNull();
  });
});
