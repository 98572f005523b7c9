import type { FaultTarget } from './fault-plan.js';

/** True when `pattern` (exact, `*`, or prefix ending in `*`) matches `name`. */
export function matchesPattern(pattern: string, name: string): boolean {
  if (pattern === '*' || pattern === name) return true;
  return pattern.endsWith('*') && name.startsWith(pattern.slice(0, -1));
}

/** True when `fault` targets the stream `sensor` of `entity`. */
export function targets(fault: FaultTarget, entity: string, sensor: string): boolean {
  return matchesPattern(fault.entity, entity) && matchesPattern(fault.sensor, sensor);
}
