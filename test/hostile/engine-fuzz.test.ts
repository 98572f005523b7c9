import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { tanksEstimatorInput, yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { parseConfig } from '../../src/config/load-config.js';
import { Engine } from '../../src/engine/engine.js';
import { deepJson, documentsFor, hostileBytes, hostileJsonValue, hostileNumberText, hostileString } from './hostile-arbitraries.js';

const ARRIVAL_MS = Date.UTC(2026, 0, 12, 8, 0, 0);

/**
 * The two demo estimators plus two that overlap them: `audit` takes every three-level farm
 * topic as a bare number (so `farm/tank-a/level` matches two sensors), `sonar` reads CSV. Caps
 * are small so the fuzz also meets the entity cap.
 */
const CONFIG = (() => {
  const result = parseConfig({
    estimators: [
      { ...tanksEstimatorInput(), entities: { max: 12, idleEvictS: 600 } },
      { ...yardEstimatorInput(), entities: { max: 12, idleEvictS: 600 } },
      {
        name: 'audit',
        model: { type: 'random-walk', states: ['reading'], q: 1 },
        entities: { max: 12, idleEvictS: 600 },
        sensors: {
          any: { topic: 'farm/{tank}/{quantity}', decode: { format: 'number' }, measurement: { type: 'linear', reads: { reading: 1 }, sigma: 1 } },
        },
      },
      {
        name: 'sonar',
        model: { type: 'constant-velocity', axes: ['depth'], q: 1e-3 },
        entities: { max: 12, idleEvictS: 600 },
        sensors: {
          ping: {
            topic: 'farm/{tank}/sonar',
            decode: { format: 'csv', values: [0], time: 1, sigma: 2 },
            measurement: { type: 'linear', reads: { depth: 1 }, sigma: 0.05 },
          },
        },
      },
    ],
  }, {});
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.config;
})();

/** The sensors' patterns as levels (null: a named wildcard), read from the config independently of the engine. */
const PATTERNS: readonly (readonly (string | null)[])[] = CONFIG.estimators.flatMap((e) =>
  Object.values(e.sensors).map((s) => s.topic.split('/').map((level) => (level.startsWith('{') ? null : level))),
);

/** How many sensors a topic reaches: same level count, literals equal, wildcards 1..128 chars without controls. */
function matchingSensors(topic: string): number {
  const levels = topic.split('/');
  return PATTERNS.filter((p) => p.length === levels.length && p.every((lit, i) => {
    const level = levels[i]!;
    if (lit !== null) return level === lit;
    return level.length >= 1 && level.length <= 128 && !/[\u0000-\u001f\u007f-\u009f]/.test(level);
  })).length;
}

const captureValue: fc.Arbitrary<string> = fc.oneof(
  { weight: 4, arbitrary: fc.constantFrom('tank-a', 'tank-b', 'tank-c', 'tug-01', 'tug-07', 'tug-00042') },
  { weight: 1, arbitrary: fc.constantFrom('+', '#', '', '\u0000', '\u009f', 'x'.repeat(128), 'x'.repeat(129), '"', '\\', 'a/b', '𝔱𝔲𝔤', '__proto__', 'constructor') },
  { weight: 1, arbitrary: fc.string({ unit: 'binary', maxLength: 12 }) },
);

const topic: fc.Arbitrary<string> = fc.oneof(
  { weight: 6, arbitrary: fc.tuple(fc.constantFrom('farm/%/level', 'farm/%/pressure', 'farm/%/sonar', 'farm/%/temp', 'yard/%/gnss', 'yard/%/wheel', 'yard/%/gnss/extra', '%/%/%'), captureValue, captureValue, captureValue)
    .map(([pattern, a, b, c]) => { const v = [a, b, c]; let i = 0; return pattern.replace(/%/g, () => v[i++]!); }) },
  { weight: 2, arbitrary: fc.array(fc.oneof(fc.constantFrom('farm', 'yard', 'level', 'gnss', 'wheel', '+', '#', ''), fc.string({ maxLength: 6 })), { maxLength: 6 }).map((l) => l.join('/')) },
  { weight: 1, arbitrary: fc.string({ unit: 'binary', maxLength: 40 }) },
  { weight: 1, arbitrary: fc.constantFrom('', '/', '//', '#', '+', 'farm/' + 'x'.repeat(100_000) + '/level', 'y/'.repeat(5000)) },
);

/** Offsets from the arrival time, in seconds, for payload time stamps. */
const stampOffsetS = fc.oneof(fc.double({ min: -5, max: 1, noNaN: true }), fc.constantFrom(-3600, -200, 30, 1e6, -1e9));

const plausible: fc.Arbitrary<(arrivalS: number) => string> = fc.oneof(
  fc.tuple(fc.double({ min: 0, max: 12, noNaN: true }), stampOffsetS, fc.nat()).map(([v, dt, seq]) => (a: number) => `{"level_m":${v},"head_m":${v},"t":${a + dt},"seq":${seq}}`),
  fc.tuple(fc.double({ min: -0.01, max: 0.01, noNaN: true }), fc.double({ min: -0.01, max: 0.01, noNaN: true }), fc.double({ min: 0.5, max: 10, noNaN: true }), stampOffsetS)
    .map(([dLat, dLon, hacc, dt]) => (a: number) => `{"t":${a + dt},"lat":${51.951 + dLat},"lon":${4.052 + dLon},"hacc":${hacc},"seq":1}`),
  fc.tuple(fc.double({ min: -1, max: 15, noNaN: true }), stampOffsetS).map(([v, dt]) => (a: number) => `{"speed_mps":${v},"t":${a + dt},"seq":2}`),
  fc.tuple(fc.oneof(fc.double({ min: -100, max: 100, noNaN: true }).map(String), hostileNumberText), stampOffsetS, fc.double({ min: 1e-3, max: 10, noNaN: true }))
    .map(([v, dt, s]) => (a: number) => `${v},${a + dt},${s}`),
  fc.oneof(fc.double({ noNaN: true }).map(String), hostileNumberText).map((v) => () => v),
  fc.constantFrom('1e308', '-1e308', '{"lat":1e308,"lon":-1e308,"t":0,"hacc":1e-300}').map((v) => () => v),
);

const payload: fc.Arbitrary<(arrivalS: number) => Uint8Array> = fc.oneof(
  { weight: 5, arbitrary: plausible.map((f) => (a: number) => Uint8Array.from(Buffer.from(f(a), 'utf8'))) },
  { weight: 1, arbitrary: hostileBytes.map((b) => () => b) },
  { weight: 1, arbitrary: fc.oneof(hostileJsonValue, deepJson, hostileString.map((s) => JSON.stringify({ level_m: s, lat: s, speed_mps: s })), documentsFor({ values: ['lat', 'lon'], time: 't', sigma: 'hacc', sequence: 'seq' }, 2))
    .map((text) => () => Uint8Array.from(Buffer.from(text, 'utf8'))) },
);

const tank = fc.constantFrom('tank-a', 'tank-b', 'tank-c');
const tug = fc.constantFrom('tug-01', 'tug-02', 'tug-12');
const toBytes = (text: string): Uint8Array => Uint8Array.from(Buffer.from(text, 'utf8'));

type Reading = [string, (arrivalS: number) => Uint8Array];

/** Readings a real sensor could send on its own topic, so the filters (not only the decoders) run. */
const wellFormed: fc.Arbitrary<Reading> = fc.oneof(
  fc.tuple(tank, fc.constantFrom('level', 'pressure'), fc.double({ min: 0, max: 12, noNaN: true }), fc.double({ min: -2, max: 0, noNaN: true }))
    .map(([t, q, v, dt]): Reading => [`farm/${t}/${q}`, (a: number) => toBytes(`{"level_m":${v},"head_m":${v},"t":${a + dt},"seq":1}`)]),
  fc.tuple(tug, fc.double({ min: -0.002, max: 0.002, noNaN: true }), fc.double({ min: -0.002, max: 0.002, noNaN: true }), fc.double({ min: -2, max: 0, noNaN: true }))
    .map(([t, dLat, dLon, dt]): Reading => [`yard/${t}/gnss`, (a: number) => toBytes(`{"t":${a + dt},"lat":${51.951 + dLat},"lon":${4.052 + dLon},"hacc":2.5,"seq":1}`)]),
  fc.tuple(tug, fc.double({ min: 0, max: 6, noNaN: true }), fc.double({ min: -2, max: 0, noNaN: true }))
    .map(([t, v, dt]): Reading => [`yard/${t}/wheel`, (a: number) => toBytes(`{"speed_mps":${v},"t":${a + dt},"seq":2}`)]),
  fc.tuple(tank, fc.double({ min: 0, max: 12, noNaN: true }), fc.double({ min: -2, max: 0, noNaN: true }))
    .map(([t, v, dt]): Reading => [`farm/${t}/sonar`, (a: number) => toBytes(`${v},${a + dt},0.05`)]),
);

/** One message: topic, payload and how far the shell's clock moved (ms; sometimes back). */
const message = fc.tuple(
  fc.oneof({ weight: 2, arbitrary: wellFormed }, { weight: 3, arbitrary: fc.tuple(topic, payload) }),
  fc.oneof({ weight: 20, arbitrary: fc.integer({ min: 0, max: 1500 }) }, { weight: 1, arbitrary: fc.constantFrom(-3_600_000, 0, 86_400_000) }),
).map(([[t, p], step]) => [t, p, step] as const);

function expectFiniteTracks(engine: Engine): void {
  for (const [, tracks] of engine.tracks()) {
    for (const [entity, track] of tracks) {
      const finite = Array.from(track.x).every(Number.isFinite) && Array.from(track.P).every(Number.isFinite);
      expect(finite, `track ${entity}`).toBe(true);
    }
  }
}

describe('hostile input: Engine.handleMessage', () => {
  it('never throws, gives one verdict per matching sensor (or one no-route), and keeps every state finite', () => {
    const prototypeBefore = Object.getOwnPropertyNames(Object.prototype).sort();
    let acceptedOverall = 0;
    fc.assert(fc.property(fc.array(message, { minLength: 20, maxLength: 60 }), (messages) => {
      const published: string[] = [];
      const engine = new Engine(CONFIG.estimators, { publish: (_t, p) => void published.push(p) });
      let accepted = 0;
      let rejected = 0;
      let noRoute = 0;
      engine.events.on('measurement:accepted', () => (accepted += 1));
      engine.events.on('measurement:rejected', (e) => {
        rejected += 1;
        if (e.reason === 'no-route') noRoute += 1;
      });
      let nowMs = ARRIVAL_MS;
      for (const [t, makePayload, stepMs] of messages) {
        nowMs += stepMs;
        const bytes = makePayload(nowMs / 1000);
        accepted = rejected = noRoute = 0;
        expect(() => engine.handleMessage(t, bytes, nowMs)).not.toThrow();
        const expected = matchingSensors(t);
        if (expected === 0) {
          expect({ accepted, rejected, noRoute }).toEqual({ accepted: 0, rejected: 1, noRoute: 1 });
        } else {
          expect(accepted + rejected).toBe(expected);
          expect(noRoute).toBe(0);
        }
        acceptedOverall += accepted;
      }
      expect(() => {
        engine.evaluateHealth(nowMs);
        for (const name of engine.estimatorNames()) engine.publishPredictions(name, nowMs);
        engine.evictIdle(nowMs);
      }).not.toThrow();
      expectFiniteTracks(engine);
      for (const p of published) expect(() => JSON.parse(p) as unknown).not.toThrow();
    }), { numRuns: 200 });
    // The stream reached the filters, not only the decoders' refusals.
    expect(acceptedOverall).toBeGreaterThan(1000);
    expect(Object.getOwnPropertyNames(Object.prototype).sort()).toEqual(prototypeBefore);
    expect(({} as Record<string, unknown>)['polluted']).toBeUndefined();
  });
});
