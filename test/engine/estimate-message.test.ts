import { describe, expect, it } from 'vitest';
import { EstimateSerializer, EstimateTimeText } from '../../src/engine/estimate-message.js';

const T0 = 1_767_225_600; // 2026-01-01T00:00:00Z, epoch seconds
const OK = { state: 'ok', reasons: [] } as const;

/** A deterministic spread of values in [0, 1). */
function* spread(count: number): Generator<number> {
  let s = 0x2545f491;
  for (let i = 0; i < count; i++) {
    s ^= s << 13; s ^= s >>> 17; s ^= s << 5;
    yield (s >>> 0) / 2 ** 32;
  }
}

describe('estimate time text', () => {
  // Reference: the platform's own Number.prototype.toString (shortest round-trip, ECMA-262
  // Number::toString) and Date.prototype.toISOString of the same whole millisecond.
  it('writes t as String(tS) and time as the ISO text of that millisecond, second after second', () => {
    const times = new EstimateTimeText();
    for (const u of spread(20_000)) {
      const ms = Math.floor(u * 4e12);
      const tS = ms / 1000;
      times.set(tS);
      expect(times.seconds).toBe(String(tS));
      expect(times.iso).toBe(new Date(ms).toISOString());
    }
  });

  it('gives the same text when consecutive estimates fall within one second', () => {
    const times = new EstimateTimeText();
    for (let k = 0; k < 2500; k++) {
      const tS = (T0 * 1000 + k) / 1000;
      times.set(tS);
      expect(times.seconds).toBe(String(tS));
      expect(times.iso).toBe(new Date(T0 * 1000 + k).toISOString());
    }
  });

  it('names the millisecond of t even where tS × 1000 falls just below it', () => {
    const tS = 8_595_344_951.949;
    expect(tS * 1000).toBeLessThan(8_595_344_951_949);
    const times = new EstimateTimeText();
    times.set(tS);
    expect(times.seconds).toBe('8595344951.949');
    expect(times.iso).toBe('2242-05-18T03:49:11.949Z');
  });

  it('falls back to String and toISOString off the millisecond grid and outside the plain range', () => {
    const times = new EstimateTimeText();
    for (const tS of [T0 + 0.0001, T0 + 1 / 3, -1.5, 0, 3e11, 1e12]) {
      times.set(tS);
      expect(times.seconds).toBe(String(tS));
      expect(times.iso).toBe(new Date(tS * 1000).toISOString());
    }
    times.set(1e13); // beyond the range of a Date
    expect(times.seconds).toBe('10000000000000');
    expect(times.iso).toBe('');
    times.set(Number.NaN);
    expect(times.seconds).toBe('null');
    expect(times.iso).toBe('');
  });
});

describe('estimate serializer', () => {
  it('writes every documented field, numbers as String gives them', () => {
    const serializer = new EstimateSerializer('yard', ['east', 'v_east'], true);
    const x = Float64Array.of(12.345678901234567, -0.1);
    const P = Float64Array.of(2.25, 0.1, 0.1, 0.04);
    const text = serializer.serialize('tug-01', 'filtered', T0 + 0.1, x, P, 0, false, OK);
    expect(JSON.parse(text)).toEqual({
      v: 1, estimator: 'yard', entity: 'tug-01', kind: 'filtered', t: T0 + 0.1, time: '2026-01-01T00:00:00.100Z',
      state: { east: x[0], v_east: -0.1 }, sigma: { east: 1.5, v_east: 0.2 },
      covariance: [[2.25, 0.1], [0.1, 0.04]], coastS: 0, stale: false, health: { state: 'ok', reasons: [] },
    });
    expect(text).toContain(`"east":${String(x[0])}`);
  });

  it('writes non-finite numbers as null', () => {
    const serializer = new EstimateSerializer('yard', ['east'], false);
    const text = serializer.serialize('a"b', 'predicted', T0, Float64Array.of(Number.NaN), Float64Array.of(Infinity), Number.NaN, true, OK);
    const doc = JSON.parse(text);
    expect(doc.entity).toBe('a"b');
    expect(doc.state.east).toBeNull();
    expect(doc.sigma.east).toBeNull();
    expect(doc.coastS).toBeNull();
  });
});
