import type { Scenario, ScenarioName, ScenarioOptions } from './simulated-message.js';
import { createTankFarmScenario } from './tank-farm-scenario.js';
import { createVehicleYardScenario } from './vehicle-yard-scenario.js';

/** The scenario types, re-exported so one import serves callers. */
export type { Scenario, ScenarioName, ScenarioOptions, SimulatedMessage } from './simulated-message.js';

/** Names accepted by `createScenario`, for command-line help and validation. */
export const SCENARIO_NAMES: readonly ScenarioName[] = ['tank-farm', 'vehicle-yard'];

/** True when `name` is a built-in scenario. */
export function isScenarioName(name: string): name is ScenarioName {
  return (SCENARIO_NAMES as readonly string[]).includes(name);
}

/**
 * Builds a built-in demo scenario. Pure and clock-free: messages appear only when the caller
 * moves time forward with `advanceTo`, and the same seed, options and fault plan always give
 * the identical message sequence. Throws RangeError on an unknown name or bad options
 * (including a fault that matches no entity or sensor of the scenario).
 */
export function createScenario(name: ScenarioName, options: ScenarioOptions): Scenario {
  switch (name) {
    case 'tank-farm':
      return createTankFarmScenario(options);
    case 'vehicle-yard':
      return createVehicleYardScenario(options);
    default: {
      const unknown: never = name;
      throw new RangeError(`unknown scenario "${String(unknown)}" (expected ${SCENARIO_NAMES.join(' or ')})`);
    }
  }
}
