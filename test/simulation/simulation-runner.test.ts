import { describe, it, expect } from 'vitest';
import type { Scenario } from '../../src/simulation/scenario.js';
import { createScenario } from '../../src/simulation/scenario.js';
import type { Qos, SimulationTimer } from '../../src/simulation/simulation-runner.js';
import { generateRecording, runSimulation } from '../../src/simulation/simulation-runner.js';
import { START_S, hashMessages } from './message-helpers.js';

/** A timer whose clock only moves when the test says so; intervals fire in order. */
function fakeTimer(startMs = 5_000_000) {
  let nowMs = startMs;
  let nextId = 0;
  const intervals = new Map<number, { fn: () => void; ms: number; dueMs: number }>();
  const timer: SimulationTimer = {
    now: () => nowMs,
    setInterval(fn, ms) {
      nextId += 1;
      intervals.set(nextId, { fn, ms, dueMs: nowMs + ms });
      return nextId;
    },
    clearInterval(handle) {
      intervals.delete(handle as number);
    },
  };
  return {
    timer,
    active: () => intervals.size,
    advance(ms: number): void {
      const endMs = nowMs + ms;
      for (;;) {
        const due = [...intervals.values()].filter((i) => i.dueMs <= endMs).sort((a, b) => a.dueMs - b.dueMs)[0];
        if (due === undefined) break;
        nowMs = due.dueMs;
        due.dueMs += due.ms;
        due.fn();
      }
      nowMs = endMs;
    },
  };
}

interface Sent {
  topic: string;
  payload: string;
  qos: Qos;
}

function farm(): Scenario {
  return createScenario('tank-farm', { seed: 21, startTimeS: START_S });
}

function sink() {
  const sent: Sent[] = [];
  return { sent, publish: (topic: string, payload: string, qos: Qos) => void sent.push({ topic, payload, qos }) };
}

const asMessages = (sent: readonly Sent[]) => sent.map((s) => `${s.topic} ${s.payload}`);

describe('runSimulation', () => {
  it('publishes the first tick at once, before any timer fires', () => {
    const { sent, publish } = sink();
    runSimulation({ scenario: farm(), publish, timer: fakeTimer().timer });
    expect(asMessages(sent)).toEqual(farm().advanceTo(START_S).map((m) => `${m.topic} ${m.payload}`));
  });

  it('advances the scenario with the fake clock', () => {
    const { sent, publish } = sink();
    const clock = fakeTimer();
    runSimulation({ scenario: farm(), publish, timer: clock.timer });
    clock.advance(3000);
    expect(asMessages(sent)).toEqual(farm().advanceTo(START_S + 3).map((m) => `${m.topic} ${m.payload}`));
  });

  it('runs scenario time at `speed` times the clock', () => {
    const { sent, publish } = sink();
    const clock = fakeTimer();
    runSimulation({ scenario: farm(), publish, timer: clock.timer, speed: 10, tickMs: 250 });
    clock.advance(1000);
    expect(asMessages(sent)).toEqual(farm().advanceTo(START_S + 10).map((m) => `${m.topic} ${m.payload}`));
  });

  it('publishes measurements at QoS 0 and truth at QoS 1 by default', () => {
    const { sent, publish } = sink();
    runSimulation({ scenario: farm(), publish, timer: fakeTimer().timer });
    expect(new Set(sent.filter((s) => s.topic.startsWith('sim/truth/')).map((s) => s.qos))).toEqual(new Set([1]));
    expect(new Set(sent.filter((s) => !s.topic.startsWith('sim/truth/')).map((s) => s.qos))).toEqual(new Set([0]));
  });

  it('leaves truth out when includeTruth is false', () => {
    const { sent, publish } = sink();
    const clock = fakeTimer();
    runSimulation({ scenario: farm(), publish, timer: clock.timer, includeTruth: false });
    clock.advance(2000);
    expect(sent.length).toBeGreaterThan(0);
    expect(sent.some((s) => s.topic.startsWith('sim/truth/'))).toBe(false);
  });

  it('stops publishing and clears its interval on stop, twice without harm', () => {
    const { sent, publish } = sink();
    const clock = fakeTimer();
    const run = runSimulation({ scenario: farm(), publish, timer: clock.timer });
    clock.advance(500);
    run.stop();
    run.stop();
    const count = sent.length;
    clock.advance(5000);
    expect(sent.length).toBe(count);
    expect(clock.active()).toBe(0);
  });

  it('keeps at most maxInFlight publishes pending and holds the scenario until they settle', async () => {
    const resolvers: (() => void)[] = [];
    const topics: string[] = [];
    const clock = fakeTimer();
    const scenario = farm();
    const run = runSimulation({
      scenario,
      timer: clock.timer,
      maxInFlight: 2,
      publish: (topic) => {
        topics.push(topic);
        return new Promise<void>((resolve) => resolvers.push(resolve));
      },
    });
    expect(topics).toHaveLength(2);
    clock.advance(1000);
    expect(topics).toHaveLength(2); // nothing settled: no new publishes and no advance
    while (resolvers.length > 0) {
      resolvers.shift()!();
      await Promise.resolve();
      await Promise.resolve();
    }
    // The tick-0 batch has drained; the next tick catches up to the clock in one advance.
    const tick0 = createScenario('tank-farm', { seed: 21, startTimeS: START_S }).advanceTo(START_S);
    expect(topics).toEqual(tick0.map((m) => m.topic));
    expect(run.stats()).toEqual({ published: tick0.length, failed: 0, pending: 0 });
    clock.advance(100);
    const caughtUp = createScenario('tank-farm', { seed: 21, startTimeS: START_S }).advanceTo(START_S + 1.1);
    expect(topics.length).toBe(tick0.length + 2);
    expect(topics).toEqual(caughtUp.slice(0, topics.length).map((m) => m.topic));
    run.stop();
  });

  it('counts failed publishes and reports each one', async () => {
    const errors: string[] = [];
    const run = runSimulation({
      scenario: farm(),
      timer: fakeTimer().timer,
      publish: (topic) => (topic.startsWith('sim/truth/') ? Promise.reject(new Error('refused')) : undefined),
      onError: (error, message) => errors.push(`${message.topic}: ${(error as Error).message}`),
    });
    await new Promise((resolve) => setImmediate(resolve));
    expect(errors).toEqual(['sim/truth/farm/tank-a: refused']);
    expect(run.stats()).toMatchObject({ failed: 1, pending: 0 });
  });

  it('keeps going after a publish that throws', () => {
    let calls = 0;
    const run = runSimulation({
      scenario: farm(),
      timer: fakeTimer().timer,
      publish: () => {
        calls += 1;
        if (calls === 1) throw new Error('socket closed');
      },
    });
    expect(run.stats()).toEqual({ published: calls - 1, failed: 1, pending: 0 });
  });

  it('rejects a non-positive speed', () => {
    expect(() => runSimulation({ scenario: farm(), publish: () => undefined, timer: fakeTimer().timer, speed: 0 })).toThrow(RangeError);
  });
});

describe('generateRecording', () => {
  it('returns every message due before start + duration, in publish order', () => {
    const recorded = generateRecording(farm(), 30);
    expect(hashMessages(recorded)).toBe(hashMessages(farm().advanceTo(START_S + 29.9)));
    expect(recorded.at(-1)!.publishTimeS).toBeLessThan(START_S + 30);
  });

  it('returns nothing for a zero duration', () => {
    expect(generateRecording(farm(), 0)).toEqual([]);
  });

  it('can leave truth out', () => {
    expect(generateRecording(farm(), 5, { includeTruth: false }).some((m) => m.kind === 'truth')).toBe(false);
  });

  it('makes a large yard recording', () => {
    const yard = createScenario('vehicle-yard', { seed: 1, startTimeS: START_S, entities: 100 });
    const recorded = generateRecording(yard, 100);
    // 100 tractors × 12 messages per second × 100 s, less fixes still held by a link outage.
    expect(recorded.length).toBeGreaterThan(119000);
    expect(recorded.length).toBeLessThanOrEqual(120000);
  });
});
