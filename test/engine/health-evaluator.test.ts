import { describe, expect, it } from 'vitest';
import { HealthLatch, rawSensorHealth, rawTrackHealth, type HealthThresholds } from '../../src/engine/health-evaluator.js';
import type { HealthReason, HealthState } from '../../src/engine/health-change.js';
import { Estimator } from '../../src/estimation/estimator.js';
import { RandomWalkModel } from '../../src/estimation/models/random-walk-model.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import { SpeedMeasurement } from '../../src/estimation/measurements/speed-measurement.js';

const thresholds = (over: Partial<HealthThresholds> = {}): HealthThresholds => ({
  gateRateLimit: 0.2, silentFactor: 3, sigmaLimits: new Float64Array([Number.NaN]), enterAfter: 3, leaveAfter: 5, flagLowNis: true, ...over,
});

function probe(windowN = 20) {
  return new Estimator({
    process: new RandomWalkModel({ stateNames: ['temp'], spectralDensity: 1e-6 }),
    sensors: [{ name: 'probe', model: new LinearMeasurement({ C: [1], dim: 1, stateDim: 1, Rv: [1] }), expectedPeriodS: 1 }],
    priorCovariance: [100], gateProbability: 0.99, healthWindowN: windowN, healthConfidence: 0.95, maxCoastS: 30,
  }).createTrack();
}

function feedLatch(latch: HealthLatch, raws: HealthState[]): HealthState[] {
  return raws.map((r) => {
    latch.feed(r, r === 'ok' ? [] : ['nis-high'], thresholds());
    return latch.state;
  });
}

function raw(track: ReturnType<typeof probe>, nowS: number, t = thresholds(), lastHeardS = nowS): { state: HealthState; reasons: HealthReason[] } {
  const reasons: HealthReason[] = [];
  const state = rawSensorHealth(track, 0, nowS, t, reasons, lastHeardS);
  return { state, reasons };
}

describe('health latch', () => {
  it('enters a worse state only after enterAfter consecutive bad evaluations', () => {
    expect(feedLatch(new HealthLatch(), ['degraded', 'degraded', 'degraded'])).toEqual(['ok', 'ok', 'degraded']);
  });

  it('does not flap when bad and good evaluations alternate', () => {
    expect(feedLatch(new HealthLatch(), ['degraded', 'ok', 'degraded', 'ok', 'degraded', 'ok'])).toEqual(Array(6).fill('ok'));
  });

  it('leaves a bad state only after leaveAfter consecutive good evaluations', () => {
    const latch = new HealthLatch();
    feedLatch(latch, ['failed', 'failed', 'failed']);
    expect(feedLatch(latch, ['ok', 'ok', 'ok', 'ok', 'ok'])).toEqual(['failed', 'failed', 'failed', 'failed', 'ok']);
  });

  it('keeps the reasons of the state it steps down to', () => {
    const latch = new HealthLatch();
    for (let k = 0; k < 3; k++) latch.feed('failed', ['stale'], thresholds());
    latch.feed('degraded', ['gate-rate'], thresholds());
    for (let k = 0; k < 4; k++) latch.feed('ok', [], thresholds());
    expect(latch.state).toBe('degraded');
    expect(latch.reasons).toEqual(['gate-rate']);
  });

  it('enters the least severe state the streak sustained', () => {
    expect(feedLatch(new HealthLatch(), ['failed', 'degraded', 'failed'])).toEqual(['ok', 'ok', 'degraded']);
  });

  it('keeps no reference to the reasons it is fed, and keeps its own while they hold', () => {
    const latch = new HealthLatch();
    const scratch: HealthReason[] = [];
    for (let k = 0; k < 3; k++) {
      scratch.length = 0;
      scratch.push('silent', 'gate-rate');
      latch.feed('degraded', scratch, thresholds());
    }
    const held = latch.reasons;
    scratch.length = 0;
    scratch.push('silent', 'gate-rate');
    latch.feed('degraded', scratch, thresholds());
    expect(latch.reasons).toBe(held);
    scratch.length = 0;
    scratch.push('nis-high');
    expect(held).toEqual(['silent', 'gate-rate']);
    latch.feed('degraded', scratch, thresholds());
    expect(latch.reasons).toEqual(['nis-high']);
    expect(latch.reasons).not.toBe(scratch);
  });
});

describe('raw health reasons', () => {
  it('uses the two-sided chi-square band of the windowed NIS from the published table', () => {
    // Bar-Shalom, Li, Kirubarajan (2001) §5.4 (from memory), via REFERENCE-CHECKS C2:
    // m = 1, N = 20, 95 %: [0.479539, 1.708480].
    const track = probe(20);
    expect(track.stats[0]!.nisBandLower).toBeCloseTo(0.479539, 6);
    expect(track.stats[0]!.nisBandUpper).toBeCloseTo(1.708480, 6);
  });

  it('reports nis-high when a biased sensor keeps the NIS mean above its band', () => {
    const track = probe();
    for (let k = 0; k < 40; k++) track.ingest(0, [k % 2 === 0 ? 1.8 : -1.8], null, k, k);
    expect(raw(track, 40)).toEqual({ state: 'degraded', reasons: ['nis-high'] });
  });

  it('reports nis-low when the measurements are far quieter than R says, unless switched off', () => {
    const track = probe();
    for (let k = 0; k < 40; k++) track.ingest(0, [0.01 * (k % 2)], null, k, k);
    expect(raw(track, 40).reasons).toEqual(['nis-low']);
    expect(raw(track, 40, thresholds({ flagLowNis: false })).state).toBe('ok');
  });

  it('reports gate-rate, failed when most decisions are rejections', () => {
    const track = probe();
    for (let k = 0; k < 10; k++) track.ingest(0, [0.1], null, k, k);
    for (let k = 10; k < 30; k++) track.ingest(0, [k % 4 === 0 ? 0.1 : 50], null, k, k);
    const r = raw(track, 30);
    expect(r.reasons).toContain('gate-rate');
    expect(r.state).toBe('failed');
  });

  it('reports a sensor silent past silentFactor periods, failed past three times that', () => {
    const track = probe();
    track.ingest(0, [0.1], null, 0, 0);
    expect(raw(track, 10, thresholds(), 8).state).toBe('ok');
    expect(raw(track, 10, thresholds(), 6.5)).toEqual({ state: 'degraded', reasons: ['silent'] });
    expect(raw(track, 20, thresholds(), 6.5)).toEqual({ state: 'failed', reasons: ['silent'] });
  });

  it('reports a track stale past its coast limit, and numerics and uncertainty when asked', () => {
    const track = probe();
    track.ingest(0, [0.1], null, 0, 0);
    const reasons: HealthReason[] = [];
    expect(rawTrackHealth(track, 31, thresholds(), false, reasons)).toBe('failed');
    expect(reasons).toEqual(['stale']);
    reasons.length = 0;
    expect(rawTrackHealth(track, 1, thresholds({ traceLimit: 0.5 }), true, reasons)).toBe('degraded');
    expect(reasons).toEqual(['uncertainty', 'numerics']);
    reasons.length = 0;
    expect(rawTrackHealth(track, 1, thresholds({ sigmaLimits: new Float64Array([0.5]) }), false, reasons)).toBe('degraded');
  });

  it('reports a track that cannot initialize', () => {
    const track = new Estimator({
      process: new RandomWalkModel({ stateNames: ['ve', 'vn'], spectralDensity: 1 }),
      sensors: [{ name: 'wheel', model: new SpeedMeasurement({ stateDim: 2, velocityIndices: [0, 1], speedSigmaMps: 0.1 }) }],
    }).createTrack();
    expect(track.ingest(0, [2], null, 0, 0)).toBe('not-initialized');
    const reasons: HealthReason[] = [];
    expect(rawTrackHealth(track, 1, thresholds(), false, reasons)).toBe('degraded');
    expect(reasons).toEqual(['not-initialized']);
  });
});
