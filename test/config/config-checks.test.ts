import { describe, expect, it } from 'vitest';
import { parseConfig } from '../../src/config/load-config.js';
import { modelStateNames } from '../../src/config/model-schema.js';
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { issuesOf, labEstimator } from './config-fixtures.js';

/** The yard estimator as plain mutable data. */
function yard(): any {
  return structuredClone(yardEstimatorInput());
}

describe('estimator checks', () => {
  it('reports a state a sensor reads that the model lacks', () => {
    const e = yard();
    e.sensors.gnss.measurement.position = ['east', 'up'];
    expect(issuesOf({ estimators: [e] })).toEqual([
      {
        path: 'estimators[0].sensors.gnss.measurement.position[1]',
        message: 'unknown state "up"; the model has east, north, v_east, v_north',
      },
    ]);
  });

  it('reports a linear reads entry that names no state', () => {
    const e = labEstimator();
    (e['sensors'] as any).probe.measurement.reads = { tmp: 1 };
    expect(issuesOf({ estimators: [e] })).toEqual([
      { path: 'estimators[0].sensors.probe.measurement.reads.tmp', message: 'unknown state "tmp"; the model has temp' },
    ]);
  });

  it('reports a prior sigma for a state the model lacks', () => {
    const e = labEstimator();
    e['prior'] = { sigma: { humidity: 3 } };
    expect(issuesOf({ estimators: [e] })[0]?.path).toBe('estimators[0].prior.sigma.humidity');
  });

  it('reports decode values that do not match the measurement dimension', () => {
    const e = yard();
    e.sensors.gnss.decode.values = ['lat'];
    expect(issuesOf({ estimators: [e] })).toEqual([
      {
        path: 'estimators[0].sensors.gnss.decode.values',
        message: 'expected 2 field paths (the measurement dimension of geodetic without height), got 1',
      },
    ]);
  });

  it('counts three values for a geodetic sensor with height', () => {
    const e = yard();
    e.model.axes = ['east', 'north', 'up'];
    Object.assign(e.sensors.gnss.measurement, { withHeight: true, position: ['east', 'north', 'up'] });
    expect(issuesOf({ estimators: [e] })[0]).toMatchObject({ path: 'estimators[0].sensors.gnss.decode.values' });
  });

  it('reports sensors of one estimator that name different wildcards', () => {
    const e = yard();
    e.sensors.wheel.topic = 'yard/{truck}/wheel';
    expect(issuesOf({ estimators: [e] })).toEqual([
      {
        path: 'estimators[0].sensors.wheel.topic',
        message: 'uses {truck} but sensor "gnss" uses {vehicle}; every sensor of an estimator must name the same wildcards',
      },
    ]);
  });

  it('reports a malformed topic pattern', () => {
    const e = labEstimator();
    (e['sensors'] as any).probe.topic = 'lab/+/temp';
    expect(issuesOf({ estimators: [e] })[0]?.message).toMatch(/^topic pattern level 2 \("\+"\) uses an MQTT wildcard/);
  });

  it('reports a duplicate estimator name', () => {
    expect(issuesOf({ estimators: [labEstimator('lab'), labEstimator('other'), labEstimator('lab')] })).toEqual([
      { path: 'estimators[2].name', message: 'duplicate name "lab" (also estimators[0])' },
    ]);
  });

  it('reports a duplicate estimator name while another estimator is broken', () => {
    const broken = labEstimator('lab');
    broken['model'] = 'random-walk';
    const paths = issuesOf({ estimators: [broken, labEstimator('lab')] }).map((i) => i.path);
    expect(paths).toEqual(['estimators[0].model', 'estimators[1].name']);
  });

  it('requires rateHz in fixed-rate mode', () => {
    const e = labEstimator();
    e['publish'] = { mode: 'fixed-rate' };
    expect(issuesOf({ estimators: [e] })).toEqual([
      { path: 'estimators[0].publish.rateHz', message: 'required when mode is "fixed-rate"' },
    ]);
  });

  it('reports a publish placeholder that is neither built in nor a wildcard', () => {
    const e = labEstimator();
    e['publish'] = { topic: 'out/{estimator}/{tank}' };
    expect(issuesOf({ estimators: [e] })).toEqual([
      { path: 'estimators[0].publish.topic', message: 'unknown placeholder {tank}; use {estimator}, {entity}, {probe}' },
    ]);
  });

  it('accepts a publish topic built from the wildcard names instead of {entity}', () => {
    const e = labEstimator();
    e['publish'] = { topic: 'out/{probe}/temp' };
    expect(parseConfig({ estimators: [e] }, {}).ok).toBe(true);
  });

  it('reports a publish topic that would send every entity to one topic', () => {
    const e = labEstimator();
    e['publish'] = { topic: 'out/{estimator}' };
    expect(issuesOf({ estimators: [e] })[0]?.path).toBe('estimators[0].publish.topic');
  });

  it('refuses a nonlinear sensor under a plain KF', () => {
    const e = yard();
    e.filter = { kind: 'kf' };
    expect(issuesOf({ estimators: [e] })).toEqual([
      {
        path: 'estimators[0].filter.kind',
        message: 'kf needs linear sensors, but "gnss" (geodetic), "wheel" (speed) is not; use ekf or ukf',
      },
    ]);
  });

  it('reports a linear C with the wrong number of columns', () => {
    const e = labEstimator();
    (e['sensors'] as any).probe.measurement = { type: 'linear', C: [[1, 0]], sigma: 0.2 };
    expect(issuesOf({ estimators: [e] })).toEqual([
      { path: 'estimators[0].sensors.probe.measurement.C', message: 'expected 1×1, got 1×2 (one column per state: temp)' },
    ]);
  });

  it('requires exactly one of C or reads', () => {
    const e = labEstimator();
    (e['sensors'] as any).probe.measurement = { type: 'linear', C: [[1]], reads: { temp: 1 }, sigma: 0.2 };
    expect(issuesOf({ estimators: [e] })).toEqual([
      { path: 'estimators[0].sensors.probe.measurement', message: 'give exactly one of "C" or "reads"' },
    ]);
  });
});

describe('model checks', () => {
  function withModel(model: unknown) {
    return { estimators: [{ ...labEstimator(), model }] };
  }

  it('reports a matrix of the wrong shape with its path and both shapes', () => {
    const model = {
      type: 'composite',
      blocks: [
        { type: 'random-walk', states: ['temp'], q: 1 },
        { type: 'discrete', states: ['a', 'b'], stepS: 1, A: [[1, 0], [0, 1]], Q: [[1, 0, 0], [0, 1, 0]] },
      ],
    };
    expect(issuesOf(withModel(model))).toEqual([
      { path: 'estimators[0].model.blocks[1].Q', message: 'expected 2×2, got 2×3' },
    ]);
  });

  it('reports a process-noise covariance that is not positive semi-definite', () => {
    const model = { type: 'continuous', states: ['temp'], F: [[0]], G: [[1]], Qc: [[-1]] };
    expect(issuesOf(withModel(model))[0]).toMatchObject({
      path: 'estimators[0].model.Qc',
      message: expect.stringMatching(/not positive semi-definite/),
    });
  });

  it('reports a state name defined by two blocks', () => {
    const model = {
      type: 'composite',
      blocks: [
        { type: 'random-walk', states: ['temp'], q: 1 },
        { type: 'gauss-markov', state: 'temp', tauS: 10, sigma: 1 },
      ],
    };
    expect(issuesOf(withModel(model))).toEqual([
      { path: 'estimators[0].model.blocks[1]', message: 'state name "temp" is defined twice' },
    ]);
  });

  it('reports a per-state q list of the wrong length', () => {
    expect(issuesOf(withModel({ type: 'random-walk', states: ['temp'], q: [1, 2] }))).toEqual([
      { path: 'estimators[0].model.q', message: 'expected one number or 1 (one per state), got 2' },
    ]);
  });

  it('orders constant-velocity states all positions, then all rates, as the model does', () => {
    const result = parseConfig({ estimators: [yard()] }, {});
    if (!result.ok) throw new Error(JSON.stringify(result.issues));
    expect(modelStateNames(result.config.estimators[0]!.model)).toEqual(['east', 'north', 'v_east', 'v_north']);
  });

  it('keeps explicit rate names', () => {
    const e = yard();
    e.model.rateNames = ['ve', 'vn'];
    e.sensors.wheel.measurement.velocity = ['ve', 'vn'];
    e.prior = {};
    const result = parseConfig({ estimators: [e] }, {});
    expect(result.ok && result.config.estimators[0]!.model).toMatchObject({ rateNames: ['ve', 'vn'] });
  });
});
