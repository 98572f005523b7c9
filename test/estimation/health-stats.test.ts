import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { REJECTION_REASONS, SensorHealthStats, type SensorHealthOptions } from '../../src/estimation/health-stats.js';
import { ModelConfigError } from '../../src/estimation/model-config-error.js';

// Scenario: the level sensor of tank-b (m = 1) and the 2-D position fix of tow tractor tug-07.
const levelOptions: SensorHealthOptions = { measurementDim: 1, windowN: 3, confidence: 0.95 };
const fixOptions: SensorHealthOptions = { measurementDim: 2, windowN: 50, confidence: 0.95 };
const none = new Float64Array(2);
const unit = Float64Array.of(1, 1);

function accept(stats: SensorHealthStats, nis: number, tS = 0): void {
  stats.recordAccepted(nis, none, unit, tS);
}

describe('SensorHealthStats windowed NIS mean', () => {
  it('is NaN with an empty window, then the mean of what it holds', () => {
    const stats = new SensorHealthStats(levelOptions);
    expect(stats.windowedNisMean).toBeNaN();
    expect(stats.windowFill).toBe(0);
    accept(stats, 0.5);
    accept(stats, 2.5);
    expect(stats.windowFill).toBe(2);
    expect(stats.windowedNisMean).toBeCloseTo(1.5, 15);
  });

  it('keeps only the last windowN values as the ring wraps', () => {
    const stats = new SensorHealthStats(levelOptions);
    for (const nis of [1, 2, 3, 4, 5, 6, 7]) accept(stats, nis);
    // Window of 3 after seven values: 5, 6, 7.
    expect(stats.windowFill).toBe(3);
    expect(stats.windowedNisMean).toBeCloseTo(6, 14);
    expect(stats.snapshot().nisWindow).toEqual([5, 6, 7]);
  });

  it('recovers full precision once a huge value has left the window', () => {
    const stats = new SensorHealthStats(levelOptions);
    accept(stats, 1e15);
    for (const nis of [0.1, 0.2, 0.3]) accept(stats, nis);
    expect(stats.windowedNisMean).toBeCloseTo(0.2, 14);
  });

  it('stays equal to the direct mean of the last N values over a long run', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 1e6, noNaN: true }), { minLength: 1, maxLength: 600 }), fc.integer({ min: 1, max: 40 }), (values, n) => {
        const stats = new SensorHealthStats({ measurementDim: 1, windowN: n, confidence: 0.95 });
        for (const v of values) accept(stats, v);
        const tail = values.slice(-n);
        const direct = tail.reduce((s, v) => s + v, 0) / tail.length;
        return Math.abs(stats.windowedNisMean - direct) <= 1e-9 * Math.max(1, direct);
      }),
      { numRuns: 200, seed: 42 },
    );
  });

  it('keeps a non-finite NIS out of the window but reports it as lastNis', () => {
    const stats = new SensorHealthStats(levelOptions);
    accept(stats, 2);
    accept(stats, Number.POSITIVE_INFINITY);
    expect(stats.windowFill).toBe(1);
    expect(stats.windowedNisMean).toBe(2);
    expect(stats.lastNis).toBe(Number.POSITIVE_INFINITY);
  });
});

describe('SensorHealthStats NIS band', () => {
  it('precomputes the full-window band of C2', () => {
    // m = 2, N = 50, 95 %: [1.484439, 2.591224] (Bar-Shalom, Li, Kirubarajan 2001, §5.4, from
    // memory; REFERENCE-CHECKS C2, tolerance 1e-6).
    const stats = new SensorHealthStats(fixOptions);
    expect(Math.abs(stats.nisBandLower - 1.484439)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(stats.nisBandUpper - 2.591224)).toBeLessThanOrEqual(1e-6);
  });

  it('gives the band of a partially filled window', () => {
    // m = 2, N = 10, 95 %: [0.959078, 3.416961] (REFERENCE-CHECKS C2, source as above).
    const stats = new SensorHealthStats(fixOptions);
    for (let i = 0; i < 10; i++) accept(stats, 2);
    const band = stats.nisBandForFill();
    expect(Math.abs(band.lower - 0.959078)).toBeLessThanOrEqual(1e-6);
    expect(Math.abs(band.upper - 3.416961)).toBeLessThanOrEqual(1e-6);
    expect(stats.nisBandForFill(50)).toEqual({ lower: stats.nisBandLower, upper: stats.nisBandUpper });
    expect(stats.nisBandForFill(0).lower).toBeNaN();
  });
});

describe('SensorHealthStats last measurement', () => {
  it('stores the innovation ratios ν_i/√S_ii, the NIS and the time', () => {
    const stats = new SensorHealthStats(fixOptions);
    stats.recordAccepted(1.25, Float64Array.of(2, -3, 99), Float64Array.of(4, 9, 99), 1712.5);
    expect(Array.from(stats.innovationRatio)).toEqual([1, -1]);
    expect(stats.lastNis).toBe(1.25);
    expect(stats.lastTimeS).toBe(1712.5);
    expect(stats.accepted).toBe(1);
  });

  it('starts with NaN ratios, NaN last values and no last reason', () => {
    const stats = new SensorHealthStats(fixOptions);
    expect(stats.innovationRatio[0]).toBeNaN();
    expect(stats.lastNis).toBeNaN();
    expect(stats.lastTimeS).toBeNaN();
    expect(stats.lastRejectionReason).toBeNull();
  });
});

describe('SensorHealthStats rejections', () => {
  it('counts rejections by reason', () => {
    const stats = new SensorHealthStats(levelOptions);
    REJECTION_REASONS.forEach((reason, i) => {
      for (let k = 0; k <= i; k++) stats.recordRejected(reason, 10 + i);
    });
    REJECTION_REASONS.forEach((reason, i) => expect(stats.rejectionCount(reason)).toBe(i + 1));
    expect(stats.rejectedTotal).toBe(28); // 1 + 2 + … + 7
    expect(stats.lastRejectionReason).toBe('malformed');
    expect(stats.lastRejectionTimeS).toBe(16);
  });

  it('ignores a reason outside the closed set', () => {
    const stats = new SensorHealthStats(levelOptions);
    stats.recordRejected('toString' as never, 1);
    expect(stats.rejectedTotal).toBe(0);
    expect(stats.lastRejectionReason).toBeNull();
  });

  it('keeps the NIS of a gate rejection out of the window but remembers it', () => {
    const stats = new SensorHealthStats(levelOptions);
    accept(stats, 1);
    stats.recordRejected('gate', 5, 40);
    expect(stats.windowedNisMean).toBe(1);
    expect(stats.lastRejectedNis).toBe(40);
  });

  it('computes the gate rejection rate over the last windowN gate decisions only', () => {
    const stats = new SensorHealthStats({ measurementDim: 1, windowN: 4, confidence: 0.95 });
    expect(stats.gateRejectionRate).toBeNaN();
    accept(stats, 1);
    stats.recordRejected('gate', 1);
    accept(stats, 1);
    stats.recordRejected('duplicate', 2); // not a gate decision
    stats.recordRejected('gate', 3);
    stats.recordRejected('gate', 4);
    // Last four gate decisions: gate, accept, gate, gate.
    expect(stats.gateDecisionCount).toBe(4);
    expect(stats.gateRejectionRate).toBeCloseTo(0.75, 15);
  });

  it('counts consecutive gate rejections until an accepted measurement or a recovery', () => {
    const stats = new SensorHealthStats(levelOptions);
    stats.recordRejected('gate', 1);
    stats.recordRejected('too-late', 2);
    stats.recordRejected('gate', 3);
    expect(stats.consecutiveGateRejections).toBe(2);
    accept(stats, 1);
    expect(stats.consecutiveGateRejections).toBe(0);
    stats.recordRejected('gate', 4);
    stats.recordRecovered();
    expect(stats.consecutiveGateRejections).toBe(0);
    expect(stats.recovered).toBe(1);
  });

  it('counts late measurements', () => {
    const stats = new SensorHealthStats(levelOptions);
    stats.recordLate();
    stats.recordLate();
    expect(stats.late).toBe(2);
  });
});

describe('SensorHealthStats construction', () => {
  it('throws ModelConfigError naming the bad option', () => {
    expect(() => new SensorHealthStats({ measurementDim: 0, windowN: 3, confidence: 0.95 })).toThrow(ModelConfigError);
    expect(() => new SensorHealthStats({ measurementDim: 1, windowN: 2.5, confidence: 0.95 })).toThrow(/windowN must be an integer ≥ 1, got 2.5/);
    expect(() => new SensorHealthStats({ measurementDim: 1, windowN: 3, confidence: 1 })).toThrow(/confidence must lie strictly between 0 and 1, got 1/);
  });
});

describe('SensorHealthStats snapshot and restore', () => {
  function busyStats(): SensorHealthStats {
    const stats = new SensorHealthStats(fixOptions);
    for (let i = 0; i < 60; i++) stats.recordAccepted(0.5 + (i % 7) * 0.4, Float64Array.of(i % 3, -1), Float64Array.of(4, 1), i);
    stats.recordRejected('future', 60.5);
    stats.recordRejected('gate', 61, 31);
    stats.recordLate();
    stats.recordRecovered();
    return stats;
  }

  it('round-trips through JSON with every statistic intact', () => {
    const original = busyStats();
    const restored = SensorHealthStats.restore(JSON.parse(JSON.stringify(original.snapshot())), fixOptions);
    expect(restored.snapshot()).toEqual(original.snapshot());
    expect(restored.windowedNisMean).toBeCloseTo(original.windowedNisMean, 14);
    expect(restored.gateRejectionRate).toBe(original.gateRejectionRate);
    expect(restored.rejectionCount('future')).toBe(1);
    expect(restored.lastRejectedNis).toBe(31);
  });

  it('carries NaN through JSON as null', () => {
    const fresh = new SensorHealthStats(fixOptions);
    const snapshot = JSON.parse(JSON.stringify(fresh.snapshot()));
    expect(snapshot.lastNis).toBeNull();
    expect(SensorHealthStats.restore(snapshot, fixOptions).lastNis).toBeNaN();
  });

  it('continues like the original after a restore', () => {
    const original = busyStats();
    const restored = SensorHealthStats.restore(original.snapshot(), fixOptions);
    for (const s of [original, restored]) for (let i = 0; i < 30; i++) accept(s, 3 + i * 0.01);
    expect(restored.windowedNisMean).toBeCloseTo(original.windowedNisMean, 14);
    expect(restored.snapshot().nisWindow).toEqual(original.snapshot().nisWindow);
  });

  it('throws on a snapshot of another measurement dimension or window length', () => {
    const snapshot = busyStats().snapshot();
    expect(() => SensorHealthStats.restore(snapshot, { ...fixOptions, measurementDim: 3 })).toThrow(
      /snapshot\.measurementDim must be 3 \(from the options\), got 2/,
    );
    expect(() => SensorHealthStats.restore(snapshot, { ...fixOptions, windowN: 20 })).toThrow(/snapshot\.windowN must be 20 \(from the options\), got 50/);
  });

  it('throws on windows or ratios whose sizes do not fit', () => {
    const snapshot = busyStats().snapshot();
    const tooLong = { ...snapshot, nisWindow: new Array<number>(51).fill(1) };
    expect(() => SensorHealthStats.restore(tooLong, fixOptions)).toThrow(/snapshot\.nisWindow\.length must be at most 50 \(windowN\), got 51/);
    const shortRatio = { ...snapshot, innovationRatio: [0.1] };
    expect(() => SensorHealthStats.restore(shortRatio, fixOptions)).toThrow(/snapshot\.innovationRatio\.length must be 2 \(measurementDim\), got 1/);
    const badGate = { ...snapshot, gateWindow: [0, 2] };
    expect(() => SensorHealthStats.restore(badGate, fixOptions)).toThrow(/snapshot\.gateWindow\[1\] must be 0 or 1, got 2/);
  });

  it('throws on a malformed snapshot', () => {
    const snapshot = busyStats().snapshot();
    expect(() => SensorHealthStats.restore(null, fixOptions)).toThrow(ModelConfigError);
    expect(() => SensorHealthStats.restore({ ...snapshot, version: 2 }, fixOptions)).toThrow(/snapshot\.version must be 1, got 2/);
    const { gate: _gate, ...partial } = snapshot.rejections;
    expect(() => SensorHealthStats.restore({ ...snapshot, rejections: partial }, fixOptions)).toThrow(/snapshot\.rejections\.gate must be an integer ≥ 0, got undefined/);
  });
});
