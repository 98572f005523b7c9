import type { Scenario, SimulatedMessage } from './simulated-message.js';

/** MQTT quality of service level. */
export type Qos = 0 | 1 | 2;

/** The timer port: wall time in milliseconds and a repeating callback. Tests pass a fake one. */
export interface SimulationTimer {
  now(): number;
  setInterval(fn: () => void, ms: number): unknown;
  clearInterval(handle: unknown): void;
}

/** Options of `runSimulation`. */
export interface RunSimulationOptions {
  readonly scenario: Scenario;
  /** Sends one message; a returned promise counts as in flight until it settles. */
  readonly publish: (topic: string, payload: string, qos: Qos) => void | Promise<void>;
  readonly timer: SimulationTimer;
  /** Wall-clock period between scenario advances (ms); default 100. */
  readonly tickMs?: number;
  /** Scenario seconds per wall-clock second; default 1. */
  readonly speed?: number;
  /** Whether ground truth on `sim/truth/...` is published; default true. */
  readonly includeTruth?: boolean;
  /** QoS of measurements (default 0) and of ground truth (default 1, so consistency tools see all of it). */
  readonly measurementQos?: Qos;
  readonly truthQos?: Qos;
  /** Most publishes awaiting their promise at once (default 500, a level the MQTT client handles without warnings). */
  readonly maxInFlight?: number;
  /** Called with each failed publish; failures are also counted in `stats()`. */
  readonly onError?: (error: unknown, message: SimulatedMessage) => void;
}

/** Counters of a running simulation. */
export interface SimulationStats {
  /** Publishes completed (sync returns and resolved promises). */
  readonly published: number;
  /** Publishes that threw or rejected. */
  readonly failed: number;
  /** Messages waiting to be published plus those in flight. */
  readonly pending: number;
}

/** Handle of a running simulation. */
export interface SimulationRun {
  /** Stops advancing and drops unsent messages; idempotent. */
  stop(): void;
  stats(): SimulationStats;
}

/**
 * Plays a scenario in (scaled) real time: on start and every `tickMs` it advances the scenario
 * to start + elapsed·speed and publishes what that yields, in order. Flow control: at most
 * `maxInFlight` publishes are awaited at once, and while a batch is still going out the
 * scenario is not advanced; the next advance then catches up, so scenario time never drifts
 * from wall time, only the publishing lags.
 */
export function runSimulation(options: RunSimulationOptions): SimulationRun {
  const { scenario, publish, timer } = options;
  const tickMs = options.tickMs ?? 100;
  const speed = options.speed ?? 1;
  const maxInFlight = options.maxInFlight ?? 500;
  if (!(tickMs > 0) || !(speed > 0) || !Number.isFinite(speed) || !(maxInFlight >= 1)) {
    throw new RangeError(`runSimulation needs tickMs > 0, finite speed > 0, maxInFlight ≥ 1 (got ${tickMs}, ${speed}, ${maxInFlight})`);
  }
  const includeTruth = options.includeTruth ?? true;
  const measurementQos = options.measurementQos ?? 0;
  const truthQos = options.truthQos ?? 1;
  const startMs = timer.now();
  let queue: SimulatedMessage[] = [];
  let head = 0;
  let inFlight = 0;
  let published = 0;
  let failed = 0;
  let stopped = false;

  const fail = (error: unknown, m: SimulatedMessage): void => {
    failed += 1;
    options.onError?.(error, m);
  };

  const pump = (): void => {
    while (!stopped && head < queue.length && inFlight < maxInFlight) {
      const m = queue[head]!;
      head += 1;
      let result: void | Promise<void>;
      try {
        result = publish(m.topic, m.payload, m.kind === 'truth' ? truthQos : measurementQos);
      } catch (error) {
        fail(error, m);
        continue;
      }
      if (result === undefined || typeof result.then !== 'function') {
        published += 1;
        continue;
      }
      inFlight += 1;
      result.then(
        () => {
          inFlight -= 1;
          published += 1;
          pump();
        },
        (error: unknown) => {
          inFlight -= 1;
          fail(error, m);
          pump();
        },
      );
    }
  };

  const tick = (): void => {
    if (stopped) return;
    if (head >= queue.length) {
      const scenarioS = scenario.startTimeS + ((timer.now() - startMs) / 1000) * speed;
      const batch = scenario.advanceTo(scenarioS);
      queue = includeTruth ? batch : batch.filter((m) => m.kind !== 'truth');
      head = 0;
    }
    pump();
  };

  tick();
  const handle = timer.setInterval(tick, tickMs);
  return {
    stop(): void {
      if (stopped) return;
      stopped = true;
      timer.clearInterval(handle);
      queue = [];
      head = 0;
    },
    stats(): SimulationStats {
      return { published, failed, pending: queue.length - head + inFlight };
    },
  };
}

/**
 * Runs `scenario` without any timer and returns every message due before
 * scenario.startTimeS + durationS that it has not yet handed out, in publish order (for
 * recordings and replay benchmarks; 1M demo-yard messages took about 3 s and 190 MB here).
 */
export function generateRecording(
  scenario: Scenario,
  durationS: number,
  options: { readonly includeTruth?: boolean } = {},
): SimulatedMessage[] {
  if (!(durationS >= 0) || !Number.isFinite(durationS)) {
    throw new RangeError(`durationS must be finite and ≥ 0, got ${durationS}`);
  }
  const includeTruth = options.includeTruth ?? true;
  const out: SimulatedMessage[] = [];
  // Half a tick short of the end, so a tick exactly at start + durationS is left out.
  const endS = scenario.startTimeS + durationS - scenario.tickS / 2;
  // Ten-second chunks keep each intermediate batch small; pushing one by one avoids the
  // argument-count limit of push(...batch) on large batches.
  let t = scenario.startTimeS;
  do {
    t = Math.min(t + 10, endS);
    for (const m of scenario.advanceTo(t)) if (includeTruth || m.kind !== 'truth') out.push(m);
  } while (t < endS);
  return out;
}
