/**
 * Fault plans for simulated runs: a plain list of typed faults, all deterministic for a seed.
 *
 * Times are seconds since scenario start; windows are half-open [fromS, toS). Each fault names
 * its target by `entity` and `sensor`; either may be `*` (any) or end in `*` (prefix match,
 * e.g. `tug-0*`). Sensors are `level` and `pressure` (tank farm), `gnss` and `wheel` (yard).
 * Ground-truth messages are never faulted.
 */

import { targets } from './fault-target.js';

// Re-exported so callers (the CLI, offline tools) need one import for everything about plans.
/** Parse and write the compact command-line form. */
export { parseFaultSpec, formatFaultSpec } from './parse-fault-spec.js';
/** Validate one fault or a whole plan against a scenario's streams. */
export { checkFault, checkPlan } from './check-fault.js';
/** Match fault targets to entity and sensor names. */
export { matchesPattern, targets } from './fault-target.js';

/** Which sensor streams a fault applies to. */
export interface FaultTarget {
  /** Entity name, `*`, or a prefix ending in `*`. */
  readonly entity: string;
  /** Sensor name, `*`, or a prefix ending in `*`. */
  readonly sensor: string;
}

/** A half-open time window [fromS, toS) in seconds since scenario start. */
export interface FaultWindow {
  readonly fromS: number;
  readonly toS: number;
}

/** Nothing is sent in the window (sequence numbers still advance, so gaps are visible). */
export interface DropoutFault extends FaultTarget, FaultWindow {
  readonly kind: 'dropout';
}

/** Random store-and-forward outages: gaps exponential with the given mean, durations uniform. */
export interface RandomOutages {
  readonly meanIntervalS: number;
  readonly minDurationS: number;
  readonly maxDurationS: number;
}

/**
 * Messages are held during an outage and released, shuffled, at the first sample after it,
 * with their original event times; the outage is either one window or random outages.
 */
export type LateBurstFault = FaultTarget & { readonly kind: 'lateBurst' } & (FaultWindow | RandomOutages);

/** Each message is re-sent verbatim right after itself with this probability. */
export interface DuplicatesFault extends FaultTarget {
  readonly kind: 'duplicates';
  readonly probability: number;
}

/** Each sample is offset by ±magnitude (metres, or m/s for wheel speed; a random direction for GNSS) with this probability. */
export interface SpikesFault extends FaultTarget {
  readonly kind: 'spikes';
  readonly probability: number;
  readonly magnitude: number;
}

/** The sensor repeats its last value from before the window, with fresh times and sequence numbers. */
export interface StuckFault extends FaultTarget, FaultWindow {
  readonly kind: 'stuck';
}

/** The reading is offset by `sigmas` times the sensor's 1-sigma noise (GNSS: hacc, towards east). */
export interface BiasJumpFault extends FaultTarget, FaultWindow {
  readonly kind: 'biasJump';
  readonly sigmas: number;
}

/** `offsetS` is added to the reported time `t`; the event time of the message stays true. */
export interface ClockSkewFault extends FaultTarget {
  readonly kind: 'clockSkew';
  readonly offsetS: number;
}

/** One fault of any kind. */
export type Fault =
  | DropoutFault
  | LateBurstFault
  | DuplicatesFault
  | SpikesFault
  | StuckFault
  | BiasJumpFault
  | ClockSkewFault;

/** The faults of one run, applied in list order where order matters (none does today). */
export type FaultPlan = readonly Fault[];

/** Faults resolved for one sensor stream, in the shape the measurement channel applies them. */
export interface ChannelFaults {
  readonly dropouts: readonly FaultWindow[];
  readonly stuck: readonly FaultWindow[];
  readonly biasJumps: readonly (FaultWindow & { readonly sigmas: number })[];
  readonly spikes: readonly { readonly probability: number; readonly magnitude: number }[];
  /** Combined probability 1 − Π(1 − pᵢ) over all matching duplicate faults. */
  readonly duplicateProbability: number;
  /** Sum of all matching clock offsets. */
  readonly clockSkewS: number;
  readonly outageWindows: readonly FaultWindow[];
  /** The last matching random-outage fault, if any. */
  readonly randomOutages: RandomOutages | undefined;
}

/** Collects the faults of `plan` that apply to one sensor stream. */
export function compileChannelFaults(plan: FaultPlan, entity: string, sensor: string): ChannelFaults {
  const dropouts: FaultWindow[] = [];
  const stuck: FaultWindow[] = [];
  const biasJumps: (FaultWindow & { sigmas: number })[] = [];
  const spikes: { probability: number; magnitude: number }[] = [];
  const outageWindows: FaultWindow[] = [];
  let keepProbability = 1;
  let clockSkewS = 0;
  let randomOutages: RandomOutages | undefined;
  for (const fault of plan) {
    if (!targets(fault, entity, sensor)) continue;
    switch (fault.kind) {
      case 'dropout':
        dropouts.push({ fromS: fault.fromS, toS: fault.toS });
        break;
      case 'stuck':
        stuck.push({ fromS: fault.fromS, toS: fault.toS });
        break;
      case 'biasJump':
        biasJumps.push({ fromS: fault.fromS, toS: fault.toS, sigmas: fault.sigmas });
        break;
      case 'spikes':
        spikes.push({ probability: fault.probability, magnitude: fault.magnitude });
        break;
      case 'duplicates':
        keepProbability *= 1 - fault.probability;
        break;
      case 'clockSkew':
        clockSkewS += fault.offsetS;
        break;
      case 'lateBurst':
        if ('fromS' in fault) outageWindows.push({ fromS: fault.fromS, toS: fault.toS });
        else randomOutages = fault;
        break;
      default: {
        const unreachable: never = fault;
        throw new Error(`unknown fault ${JSON.stringify(unreachable)}`);
      }
    }
  }
  return {
    dropouts,
    stuck,
    biasJumps,
    spikes,
    duplicateProbability: 1 - keepProbability,
    clockSkewS,
    outageWindows,
    randomOutages,
  };
}

/** True when any window contains `elapsedS` (half-open). */
export function inAnyWindow(windows: readonly FaultWindow[], elapsedS: number): boolean {
  for (const w of windows) if (elapsedS >= w.fromS && elapsedS < w.toS) return true;
  return false;
}
