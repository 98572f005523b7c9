import type { Fault, FaultPlan, FaultWindow } from './fault-plan.js';
import { matchesPattern } from './fault-target.js';

/** Problems with one fault's numbers (empty when valid), worded for a person editing a plan. */
export function checkFault(fault: Fault): string[] {
  const issues: string[] = [];
  const finite = (name: string, v: number): void => {
    if (!Number.isFinite(v)) issues.push(`${name} must be a finite number, got ${v}`);
  };
  const window = (w: FaultWindow): void => {
    finite('start', w.fromS);
    finite('end', w.toS);
    if (w.fromS < 0) issues.push(`window start ${w.fromS} s must not be negative`);
    if (!(w.toS > w.fromS)) issues.push(`window end ${w.toS} s must be after start ${w.fromS} s`);
  };
  const probability = (p: number): void => {
    if (!(p >= 0 && p <= 1)) issues.push(`probability must be in [0, 1], got ${p}`);
  };
  if (fault.entity === '' || fault.sensor === '') issues.push('entity and sensor must not be empty');
  switch (fault.kind) {
    case 'dropout':
    case 'stuck':
      window(fault);
      break;
    case 'biasJump':
      window(fault);
      finite('sigmas', fault.sigmas);
      break;
    case 'lateBurst':
      if ('fromS' in fault) window(fault);
      else {
        if (!(fault.meanIntervalS > 0)) issues.push(`mean interval must be > 0 s, got ${fault.meanIntervalS}`);
        if (!(fault.minDurationS > 0 && fault.maxDurationS >= fault.minDurationS && Number.isFinite(fault.maxDurationS))) {
          issues.push(`durations need 0 < min ≤ max, got ${fault.minDurationS}-${fault.maxDurationS} s`);
        }
      }
      break;
    case 'duplicates':
      probability(fault.probability);
      break;
    case 'spikes':
      probability(fault.probability);
      finite('magnitude', fault.magnitude);
      break;
    case 'clockSkew':
      finite('offset', fault.offsetS);
      break;
    default: {
      const unreachable: never = fault;
      issues.push(`unknown fault kind in ${JSON.stringify(unreachable)}`);
    }
  }
  return issues;
}

/**
 * Problems with a whole plan for a scenario: each fault's numbers, and whether its target
 * matches at least one of the scenario's sensor streams (a fault that matches nothing is
 * almost always a typing slip in an entity or sensor name).
 */
export function checkPlan(
  plan: FaultPlan,
  entities: readonly string[],
  sensors: readonly string[],
): string[] {
  const issues: string[] = [];
  plan.forEach((fault, i) => {
    const label = `fault ${i + 1} (${fault.kind} ${fault.entity}/${fault.sensor})`;
    for (const problem of checkFault(fault)) issues.push(`${label}: ${problem}`);
    const hitsEntity = entities.some((e) => matchesPattern(fault.entity, e));
    const hitsSensor = sensors.some((s) => matchesPattern(fault.sensor, s));
    if (!hitsEntity) issues.push(`${label}: no entity matches "${fault.entity}"`);
    if (!hitsSensor) issues.push(`${label}: no sensor matches "${fault.sensor}" (sensors: ${sensors.join(', ')})`);
  });
  return issues;
}
