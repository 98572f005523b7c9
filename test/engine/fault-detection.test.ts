/**
 * Detection and false alarms of the health evaluation on the tank-farm demo, run through the
 * engine exactly as the daemon runs it (messages in publish order, one health tick per second of
 * event time). The simulator's bias jump is the fault; the defaults of the config schema are the
 * thresholds (window 20, confidence 0.95, gate-rate limit 0.2, enter after 3, leave after 5).
 */
import { describe, expect, it } from 'vitest';
import { parseConfig } from '../../src/config/load-config.js';
import { tanksEstimatorInput } from '../../src/config/default-demo-config.js';
import { Engine } from '../../src/engine/engine.js';
import type { HealthChange } from '../../src/engine/health-change.js';
import { createScenario } from '../../src/simulation/scenario.js';
import { parseFaultSpec } from '../../src/simulation/fault-plan.js';
import { generateRecording } from '../../src/simulation/simulation-runner.js';

const START_S = 1_796_000_000;

function run(faults: string, durationS: number, seed: number) {
  const plan = parseFaultSpec(faults);
  if (!plan.ok) throw new Error(plan.message);
  const messages = generateRecording(createScenario('tank-farm', { seed, startTimeS: START_S, faults: plan.plan }), durationS, { includeTruth: true });
  const config = parseConfig({ estimators: [tanksEstimatorInput()] }, {});
  if (!config.ok) throw new Error(JSON.stringify(config.issues));
  const engine = new Engine(config.config.estimators, { publish() {} });
  const changes: HealthChange[] = [];
  engine.events.on('health:changed', (c) => changes.push(c));
  const truthLevel = new Map<string, number>();
  let worstLevelErrorSigmas = 0;
  let unflaggedLargeErrors = 0;
  let nextTickS = START_S + 1;
  let evaluations = 0;
  for (const m of messages) {
    while (m.publishTimeS >= nextTickS) {
      engine.evaluateHealth(nextTickS * 1000);
      evaluations += 1;
      nextTickS += 1;
    }
    if (m.kind === 'truth') {
      const truth = JSON.parse(m.payload) as { t: number; level: number };
      const entity = m.topic.split('/').at(-1)!;
      truthLevel.set(entity, truth.level);
      const d = engine.trackDetail('tanks', entity);
      if (d !== null && d.initialized && entity === 'tank-b') {
        const z = Math.abs(d.state[0]! - truth.level) / d.sigma[0]!;
        worstLevelErrorSigmas = Math.max(worstLevelErrorSigmas, z);
        if (z > 4 && d.health.state === 'ok') unflaggedLargeErrors += 1;
      }
      continue;
    }
    engine.handleMessage(m.topic, Buffer.from(m.payload), m.publishTimeS * 1000);
  }
  return { changes, evaluations, worstLevelErrorSigmas, unflaggedLargeErrors };
}

const firstTo = (changes: HealthChange[], entity: string, sensor: string | null, pred: (c: HealthChange) => boolean, afterS: number) =>
  changes.find((c) => c.entity === entity && c.sensor === sensor && c.tS >= afterS && pred(c));

describe('fault detection on the tank farm', () => {
  it('flags a 5-sigma pressure bias jump within the evaluations the hysteresis implies, and clears after it ends', { timeout: 120_000 }, () => {
    const faultFromS = 300;
    const faultToS = 420;
    const { changes, worstLevelErrorSigmas, unflaggedLargeErrors } = run(`bias-jump:tank-b/pressure:5:${faultFromS}-${faultToS}`, 600, 11);
    // Expected latency: the gate rejects the biased readings (5σ ≫ the 2.58σ gate at 0.99);
    // the gate rate over the last 20 decisions passes 0.2 after 5 of them (0.5 s at 10 Hz), so
    // the next tick is raw-bad, and the state is entered after enterAfter = 3 bad ticks:
    // at most 1 + 3 evaluations (s) after the jump, plus one tick of phase.
    const entered = firstTo(changes, 'tank-b', 'pressure', (c) => c.to !== 'ok', START_S + faultFromS);
    expect(entered).toBeDefined();
    expect(entered!.reasons).toContain('gate-rate');
    expect(entered!.tS - (START_S + faultFromS)).toBeLessThanOrEqual(1 + 3 + 1);
    const trackEntered = firstTo(changes, 'tank-b', null, (c) => c.to !== 'ok', START_S + faultFromS);
    expect(trackEntered!.tS - (START_S + faultFromS)).toBeLessThanOrEqual(5);
    // When the bias goes away the filter, which has partly absorbed it into the bias state,
    // sees the reverse jump: the pressure sensor is flagged again briefly, then health returns
    // to ok once the bias state has re-converged, and stays ok to the end of the run.
    const afterFault = changes.filter((c) => c.entity === 'tank-b' && c.sensor === null && c.tS >= START_S + faultToS);
    const last = afterFault.at(-1);
    expect(last?.to).toBe('ok');
    expect(last!.tS - (START_S + faultToS)).toBeLessThanOrEqual(30);
    // A 5σ jump (of R) is under 3σ of S, so some biased readings pass the gate and drag the
    // level estimate off the truth by several of its σ (measured: about 8σ at worst). Health
    // must say so: an error beyond 4σ while the track reports ok is allowed only while the
    // evidence builds up: the level gauge's NIS window spans windowN = 20 of its 1 Hz readings,
    // so at most 20 such seconds (measured at this seed: 13).
    expect(worstLevelErrorSigmas).toBeGreaterThan(4);
    expect(unflaggedLargeErrors).toBeLessThanOrEqual(20);
    // The other tanks see only the ordinary false alarms of the next test (degraded, never
    // failed: nothing there is refused wholesale).
    expect(changes.filter((c) => c.entity !== 'tank-b' && c.to === 'failed')).toEqual([]);
  });

  it('keeps false alarms without a fault within what the configured confidence allows', { timeout: 180_000 }, () => {
    const durationS = 1800;
    const { changes, evaluations } = run('', durationS, 5);
    // Ignore the first minute (windows filling, bias converging).
    const alarms = changes.filter((c) => c.to !== 'ok' && c.tS >= START_S + 60);
    // Bound: with a consistent filter, each sensor's windowed-NIS test is outside its 95 % band
    // at a given tick with probability α = 0.05 (whatever the correlation between ticks), and an
    // alarm needs enterAfter = 3 consecutive bad ticks, so E[alarms] ≤ α · ticks · streams / 3,
    // with 3 tanks × 2 sensors = 6 streams (sensor alarms; a track alarm follows one).
    // Measured at this seed over 1800 s: 48 alarms against a bound of 180 (mostly nis-low on
    // the level gauge: the simulated pump ramps are smoother than the model's random walk).
    const bound = (0.05 * evaluations * 6) / 3;
    process.stdout.write(`false alarms over ${durationS} s: ${alarms.length} (bound ${bound.toFixed(0)})\n`);
    expect(alarms.length).toBeLessThanOrEqual(bound);
  });
});
