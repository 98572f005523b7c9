import type { FaultPlan } from './fault-plan.js';

/** The built-in demo scenarios. */
export type ScenarioName = 'tank-farm' | 'vehicle-yard';

/** One message a scenario publishes, in publish order. */
export interface SimulatedMessage {
  /** MQTT topic, e.g. `farm/tank-a/level` or `sim/truth/yard/tug-01`. */
  readonly topic: string;
  /** JSON text, sent as is. */
  readonly payload: string;
  /** True epoch time (s) the sample or truth state refers to; clock skew changes only the payload's `t`. */
  readonly eventTimeS: number;
  /** Epoch time (s) at which the message is due; later than `eventTimeS` for a late burst. */
  readonly publishTimeS: number;
  /** `truth` for ground-truth messages on `sim/truth/...`, else `measurement`. */
  readonly kind: 'measurement' | 'truth';
}

/** Options shared by every scenario. */
export interface ScenarioOptions {
  /** Seed of the run; the same seed, plan and options give the identical message sequence. */
  readonly seed: number | string;
  /** Epoch time (s) of scenario start: the first samples carry this time. */
  readonly startTimeS: number;
  /** Faults to inject (default none). */
  readonly faults?: FaultPlan;
  /** Whether the scenario's own faults apply (the yard's random GNSS link outages); default true. */
  readonly defaultFaults?: boolean;
  /** Entity count override for load tests; names become zero-padded (`tug-00001`, `tank-00001`). */
  readonly entities?: number;
}

/** A deterministic, clock-free message source: time only moves when `advanceTo` is called. */
export interface Scenario {
  readonly name: ScenarioName;
  /** Entity names in the order their messages appear within a tick. */
  readonly entities: readonly string[];
  /** Epoch time (s) of the first tick. */
  readonly startTimeS: number;
  /** Simulation step in seconds (0.1: every rate in both scenarios divides 10 Hz). */
  readonly tickS: number;
  /**
   * Runs every tick with time ≤ `tS` (epoch s) not yet run and returns the messages they
   * publish, in order. A `tS` at or before the last tick run returns nothing.
   */
  advanceTo(tS: number): SimulatedMessage[];
}
