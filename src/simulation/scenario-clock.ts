import type { FaultPlan } from './fault-plan.js';
import { checkPlan } from './check-fault.js';
import type { Scenario, ScenarioName, ScenarioOptions, SimulatedMessage } from './simulated-message.js';

/** Simulation step of every scenario, in seconds. */
export const TICK_S = 0.1;
/** Ticks per second; 1 Hz streams fire on every tenth tick. */
export const TICKS_PER_SECOND = 10;

/** Largest entity count a scenario accepts (keeps names at most 7 digits). */
export const MAX_ENTITIES = 1_000_000;

/**
 * Index of the last tick at or before epoch `tS`. Tick k sits at startTimeS + k/10; the
 * half-microsecond slack absorbs the rounding in a caller's own start + elapsed sum.
 */
export function lastTickAt(startTimeS: number, tS: number): number {
  return Math.floor((tS - startTimeS) * TICKS_PER_SECOND + 5e-6);
}

/** Entity names: the scenario's defaults, or `prefix-00001`… when a count is given. */
export function entityNames(defaults: readonly string[], prefix: string, count: number | undefined): string[] {
  if (count === undefined) return [...defaults];
  if (!Number.isInteger(count) || count < 1 || count > MAX_ENTITIES) {
    throw new RangeError(`entities must be an integer 1..${MAX_ENTITIES}, got ${count}`);
  }
  const width = Math.max(5, String(count).length);
  return Array.from({ length: count }, (_, i) => `${prefix}-${String(i + 1).padStart(width, '0')}`);
}

/** Throws a RangeError listing every problem with the options or the fault plan. */
export function assertScenarioOptions(
  scenario: string,
  options: ScenarioOptions,
  plan: FaultPlan,
  entities: readonly string[],
  sensors: readonly string[],
): void {
  const issues: string[] = [];
  if (!Number.isFinite(options.startTimeS)) issues.push(`startTimeS must be finite, got ${options.startTimeS}`);
  issues.push(...checkPlan(plan, entities, sensors));
  if (issues.length > 0) throw new RangeError(`${scenario}: ${issues.join('; ')}`);
}

/**
 * A scenario from its tick function: `advanceTo` runs each tick not yet run up to `tS`, in order,
 * so both scenarios share one notion of which ticks are due.
 */
export function tickedScenario(
  name: ScenarioName, entities: readonly string[], startTimeS: number,
  runTick: (k: number, out: SimulatedMessage[]) => void,
): Scenario {
  let nextTick = 0;
  return {
    name,
    entities,
    startTimeS,
    tickS: TICK_S,
    advanceTo(tS: number): SimulatedMessage[] {
      const out: SimulatedMessage[] = [];
      const last = lastTickAt(startTimeS, tS);
      for (; nextTick <= last; nextTick += 1) runTick(nextTick, out);
      return out;
    },
  };
}
