import { describe, expect, it } from 'vitest';
import { parseConfig } from '../../../src/config/load-config.js';
import { buildEstimatorRuntime } from '../../../src/engine/estimator-runtime.js';
import { tuningVariant } from '../../../src/tools/tune/config-patch.js';
import { decodeRecording, type RecordedMessage } from '../../../src/tools/tune/entity-measurements.js';
import { innovationsLogLikelihood } from '../../../src/tools/tune/innovations-likelihood.js';
import { levelEstimator, levelRecording, probeEstimator, T0_MS, type EstimatorInput } from './tune-fixtures.js';

const encoder = new TextEncoder();

function reading(tank: string, tS: number, tempC: number, arrivalS = tS): RecordedMessage {
  return { t: T0_MS + arrivalS * 1000, topic: `farm/${tank}/temp`, payload: encoder.encode(JSON.stringify({ t: T0_MS / 1000 + tS, temp_c: tempC })) };
}

function estimatorFor(input: EstimatorInput) {
  const parsed = parseConfig({ estimators: [input] }, {});
  if (!parsed.ok) throw new Error('invalid test config');
  const variant = tuningVariant(parsed.config.estimators[0]!);
  if (!variant.ok) throw new Error('invalid variant');
  return buildEstimatorRuntime(variant.config);
}

describe('innovationsLogLikelihood', () => {
  it('equals the hand-computed prediction-error decomposition of a scalar random walk', () => {
    const q = 0.05;
    const r = 0.2 ** 2;
    const runtime = estimatorFor(probeEstimator(q, 0.2));
    const decoded = decodeRecording(runtime, [reading('tank-a', 0, 1.0), reading('tank-a', 2, 1.3), reading('tank-a', 3, 0.8)]);
    // By hand: the first reading sets x = 1.0, P = r. Then for each reading: P⁻ = P + q·dt,
    // S = P⁻ + r, ν = z − x, K = P⁻/S, x += Kν, P = P⁻ r / S.
    const p2 = r + q * 2;
    const s2 = p2 + r;
    const nu2 = 0.3;
    const x2 = 1.0 + (p2 / s2) * nu2;
    const p3 = (p2 * r) / s2 + q * 1;
    const s3 = p3 + r;
    const nu3 = 0.8 - x2;
    const term = (s: number, nu: number) => Math.log(2 * Math.PI) + Math.log(s) + (nu * nu) / s;
    const result = innovationsLogLikelihood(runtime.estimator, decoded.entities);
    expect(result.logLikelihood).toBeCloseTo(-0.5 * (term(s2, nu2) + term(s3, nu3)), 12);
    expect(result.nisSum).toBeCloseTo((nu2 * nu2) / s2 + (nu3 * nu3) / s3, 12);
    expect(result.updates).toBe(2);
  });

  it('leaves out only the initializing reading of a one-state track', () => {
    const runtime = estimatorFor(probeEstimator(0.05, 0.2));
    const decoded = decodeRecording(runtime, [reading('tank-a', 0, 1), reading('tank-a', 1, 1.1), reading('tank-a', 2, 1.2)]);
    const result = innovationsLogLikelihood(runtime.estimator, decoded.entities);
    expect([result.initial, result.updates]).toEqual([1, 2]);
  });

  it('leaves out the first two readings of a constant-velocity track, whose rate starts unknown', () => {
    const runtime = estimatorFor(levelEstimator(1e-4, 0.02));
    const decoded = decodeRecording(runtime, levelRecording('2', 1e-4, 0.02, 10));
    const result = innovationsLogLikelihood(runtime.estimator, decoded.entities);
    expect([result.initial, result.updates, result.components]).toEqual([2, 8, 8]);
  });

  it('sums over the tracks of every entity', () => {
    const runtime = estimatorFor(probeEstimator(0.05, 0.2));
    const one = (tank: string) => [reading(tank, 0, 1), reading(tank, 1, 1.1), reading(tank, 2, 0.9)];
    const single = innovationsLogLikelihood(runtime.estimator, decodeRecording(runtime, one('tank-a')).entities);
    const both = innovationsLogLikelihood(runtime.estimator, decodeRecording(runtime, [...one('tank-a'), ...one('tank-c')]).entities);
    expect(both.logLikelihood).toBeCloseTo(2 * single.logLikelihood, 12);
    expect(both.updates).toBe(4);
  });
});

describe('decodeRecording', () => {
  it('orders each entity by event time, not arrival', () => {
    const runtime = estimatorFor(probeEstimator(0.05, 0.2));
    const decoded = decodeRecording(runtime, [reading('tank-a', 0, 1), reading('tank-a', 2, 1.2, 2), reading('tank-a', 1, 1.1, 3)]);
    expect(decoded.entities[0]!.records.map((m) => m.values[0])).toEqual([1, 1.1, 1.2]);
  });

  it('counts payloads the decoder refuses and messages on other topics', () => {
    const runtime = estimatorFor(probeEstimator(0.05, 0.2));
    const bad: RecordedMessage = { t: T0_MS, topic: 'farm/tank-a/temp', payload: encoder.encode('{"t":1}') };
    const other: RecordedMessage = { t: T0_MS, topic: 'yard/tug-01/gnss', payload: encoder.encode('{}') };
    const decoded = decodeRecording(runtime, [reading('tank-a', 0, 1), bad, other]);
    expect([decoded.decoded, decoded.refused, decoded.unrouted]).toEqual([1, 1, 1]);
  });
});

describe('innovationsLogLikelihood with a gate', () => {
  it('refuses an estimator whose gate is on', () => {
    const parsed = parseConfig({ estimators: [probeEstimator(0.05, 0.2)] }, {});
    if (!parsed.ok) throw new Error('invalid test config');
    const gated = buildEstimatorRuntime(parsed.config.estimators[0]!);
    expect(() => innovationsLogLikelihood(gated.estimator, [])).toThrow(/gate off/);
  });
});
