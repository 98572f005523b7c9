import { describe, expect, it } from 'vitest';
import { parseConfig } from '../../src/config/load-config.js';
import { defaultDemoConfig } from '../../src/config/default-demo-config.js';
import { Engine, type EstimatePublisher } from '../../src/engine/engine.js';
import { Estimator } from '../../src/estimation/estimator.js';
import { RandomWalkModel } from '../../src/estimation/models/random-walk-model.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';

const T0 = 1_764_633_600; // 2025-12-02T00:00:00Z, epoch seconds

function labConfig(extra: Record<string, unknown> = {}) {
  const result = parseConfig({
    estimators: [{
      name: 'lab',
      model: { type: 'random-walk', states: ['temp'], q: 0.001 },
      prior: { sigma: { temp: 50 } },
      entities: { max: 3, idleEvictS: 60 },
      sensors: {
        probe: {
          topic: 'lab/{probe}/temp',
          decode: { format: 'json', values: ['c'], time: 't' },
          measurement: { type: 'linear', reads: { temp: 1 }, sigma: 0.2 },
        },
      },
      ...extra,
    }],
  }, {});
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.config;
}

class Capture implements EstimatePublisher {
  readonly out: { topic: string; payload: string }[] = [];
  publish(topic: string, payload: string): void {
    this.out.push({ topic, payload });
  }
}

const msg = (c: number, t: number) => Buffer.from(JSON.stringify({ c, t }));

describe('engine', () => {
  it('publishes the estimate the core computes for the same measurements', () => {
    const sink = new Capture();
    const engine = new Engine(labConfig().estimators, sink);
    const values = [20.1, 20.4, 19.8, 20.0, 20.3];
    values.forEach((c, k) => engine.handleMessage('lab/bench-3/temp', msg(c, T0 + k), (T0 + k) * 1000));
    const core = new Estimator({
      process: new RandomWalkModel({ stateNames: ['temp'], spectralDensity: 0.001 }),
      sensors: [{ name: 'probe', model: new LinearMeasurement({ C: [1], dim: 1, stateDim: 1, Rv: [0.04] }) }],
      priorCovariance: [2500],
    }).createTrack();
    values.forEach((c, k) => core.ingest(0, [c], null, T0 + k, T0 + k));
    const last = JSON.parse(sink.out.at(-1)!.payload);
    expect(sink.out).toHaveLength(5);
    expect(sink.out[0]!.topic).toBe('statecast/lab/bench-3/estimate');
    expect(last.entity).toBe('bench-3');
    expect(last.kind).toBe('filtered');
    expect(last.state.temp).toBeCloseTo(core.x[0]!, 12);
    expect(last.sigma.temp).toBeCloseTo(Math.sqrt(core.P[0]!), 12);
    expect(last.time).toBe(new Date((T0 + 4) * 1000).toISOString());
  });

  it('without a publisher, gives listeners and latestEstimates the payloads a publisher gets', () => {
    const sink = new Capture();
    const published = new Engine(labConfig().estimators, sink);
    const offline = new Engine(labConfig().estimators, null);
    const heard: string[] = [];
    offline.events.on('estimate', (e) => heard.push(e.payload));
    [20.1, 20.4, 19.8].forEach((c, k) => {
      published.handleMessage('lab/a/temp', msg(c, T0 + k), (T0 + k) * 1000);
      offline.handleMessage('lab/a/temp', msg(c, T0 + k), (T0 + k) * 1000);
    });
    expect(heard).toEqual(sink.out.map((o) => o.payload));
    expect([...offline.latestEstimates()].map((l) => l.payload)).toEqual([sink.out.at(-1)!.payload]);
    expect(offline.counters().estimatesProduced).toBe(3);
  });

  it('keeps each latest payload as it was when made', () => {
    const engine = new Engine(labConfig({ publish: { mode: 'fixed-rate', rateHz: 1 } }).estimators, null);
    engine.handleMessage('lab/a/temp', msg(20, T0), T0 * 1000);
    engine.handleMessage('lab/b/temp', msg(30, T0), T0 * 1000);
    // Both predictions are computed in the same scratch; the text is only made below.
    engine.publishPredictions('lab', (T0 + 10) * 1000);
    engine.handleMessage('lab/a/temp', msg(25, T0 + 11), (T0 + 11) * 1000);
    const latest = new Map([...engine.latestEstimates()].map((l) => [l.entity, JSON.parse(l.payload)]));
    expect([...latest.keys()]).toEqual(['a', 'b']);
    expect(latest.get('a').kind).toBe('predicted');
    expect(latest.get('a').t).toBe(T0 + 10);
    expect(latest.get('a').state.temp).toBeCloseTo(20, 9);
    expect(latest.get('b').state.temp).toBeCloseTo(30, 9);
  });

  it('counts malformed payloads by reason and never touches a track', () => {
    const engine = new Engine(labConfig().estimators, new Capture());
    const reasons: string[] = [];
    engine.events.on('measurement:rejected', (e) => reasons.push(e.reason));
    engine.handleMessage('lab/a/temp', Buffer.from('not json'), T0 * 1000);
    engine.handleMessage('lab/a/temp', Buffer.from('{"c":"hot","t":1764633600}'), T0 * 1000);
    engine.handleMessage('lab/a/temp', Buffer.from('{"c":1e999,"t":1764633600}'), T0 * 1000);
    engine.handleMessage('other/topic', Buffer.from('1'), T0 * 1000);
    expect(reasons).toEqual(['not-json', 'wrong-type', 'non-finite', 'no-route']);
    expect(engine.trackCount('lab')).toBe(0);
  });

  it('refuses new entities beyond the cap and keeps the existing ones', () => {
    const engine = new Engine(labConfig().estimators, new Capture());
    const reasons: string[] = [];
    engine.events.on('measurement:rejected', (e) => reasons.push(e.reason));
    for (let k = 0; k < 10; k++) engine.handleMessage(`lab/p${k}/temp`, msg(20, T0), T0 * 1000);
    expect(engine.trackCount('lab')).toBe(3);
    expect(reasons.filter((r) => r === 'entity-cap')).toHaveLength(7);
  });

  it('evicts tracks idle for longer than the configured time', () => {
    const engine = new Engine(labConfig().estimators, new Capture());
    engine.handleMessage('lab/a/temp', msg(20, T0), T0 * 1000);
    engine.handleMessage('lab/b/temp', msg(20, T0 + 50), (T0 + 50) * 1000);
    expect(engine.evictIdle((T0 + 70) * 1000)).toBe(1);
    expect(engine.listTracks().map((t) => t.entity)).toEqual(['b']);
  });

  it('publishes predictions at the publish time in fixed-rate mode', () => {
    const sink = new Capture();
    const engine = new Engine(labConfig({ publish: { mode: 'fixed-rate', rateHz: 1 } }).estimators, sink);
    engine.handleMessage('lab/a/temp', msg(20, T0), T0 * 1000);
    expect(sink.out).toHaveLength(0);
    engine.publishPredictions('lab', (T0 + 10) * 1000);
    const p = JSON.parse(sink.out[0]!.payload);
    expect(p.kind).toBe('predicted');
    expect(p.t).toBe(T0 + 10);
    expect(p.sigma.temp).toBeCloseTo(Math.sqrt(0.04 + 0.001 * 10), 9);
  });

  it('runs the demo estimators on simulated-looking traffic', () => {
    const sink = new Capture();
    const engine = new Engine(defaultDemoConfig().estimators, sink);
    for (let k = 0; k < 20; k++) {
      const t = T0 + k;
      engine.handleMessage('farm/tank-a/level', Buffer.from(JSON.stringify({ t, level_m: 5 + 0.001 * k, seq: k })), t * 1000);
      engine.handleMessage('farm/tank-a/pressure', Buffer.from(JSON.stringify({ t: t + 0.05, head_m: 5.01 + 0.001 * k, seq: k })), t * 1000 + 50);
      engine.handleMessage('yard/tug-01/gnss', Buffer.from(JSON.stringify({ t, lat: 51.95 + 1e-5 * k, lon: 4.05, hacc: 2, seq: k })), t * 1000);
    }
    const yard = engine.trackDetail('yard', 'tug-01')!;
    expect(yard.initialized).toBe(true);
    expect(yard.state[yard.stateNames.indexOf('north')]!).toBeCloseTo(19 * 1.11, 0);
    const tank = engine.trackDetail('tanks', 'tank-a')!;
    expect(tank.state[0]!).toBeCloseTo(5.019, 2);
    expect(sink.out.some((o) => o.topic === 'statecast/tanks/tank-a/smoothed')).toBe(true);
  });
});
