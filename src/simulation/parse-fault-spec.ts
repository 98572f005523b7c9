import type { Fault, FaultPlan } from './fault-plan.js';
import { checkFault } from './check-fault.js';

/**
 * Compact command-line form of a fault plan: items separated by commas, each
 * `KIND:ENTITY/SENSOR[:ARG...]`, times in seconds since scenario start, windows `FROM-TO`.
 *
 *   dropout:ENTITY/SENSOR:FROM-TO             nothing sent in the window
 *   late-burst:ENTITY/SENSOR:FROM-TO          held in the window, released shuffled after it
 *   late-burst:ENTITY/SENSOR:random:MEAN:MIN-MAX   random outages, mean gap MEAN s, MIN..MAX s long
 *   duplicates:ENTITY/SENSOR:PROBABILITY      messages re-sent verbatim
 *   spikes:ENTITY/SENSOR:PROBABILITY:MAGNITUDE
 *   stuck:ENTITY/SENSOR:FROM-TO               last value repeated
 *   bias-jump:ENTITY/SENSOR:SIGMAS:FROM-TO    offset in measurement sigmas
 *   clock-skew:ENTITY/SENSOR:OFFSET           seconds added to the reported time
 *
 * ENTITY and SENSOR may be `*` or end in `*`. Example:
 * `bias-jump:tank-b/pressure:5:60-120,dropout:tug-03/gnss:30-50`.
 */
export const FAULT_SPEC_SYNTAX =
  'KIND:ENTITY/SENSOR[:ARGS] items joined by commas; KIND is dropout, late-burst, duplicates, spikes, stuck, bias-jump or clock-skew';

/** One rejected item of a fault spec. */
export interface FaultSpecIssue {
  /** 1-based position of the item in the spec. */
  readonly index: number;
  /** The item's text as given. */
  readonly item: string;
  readonly message: string;
}

/** The parse verdict: a plan, or every bad item with a message naming it. */
export type FaultSpecResult =
  | { readonly ok: true; readonly plan: FaultPlan }
  | { readonly ok: false; readonly issues: readonly FaultSpecIssue[]; readonly message: string };

const NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
const WINDOW = /^(\d+(?:\.\d*)?|\.\d+)-(\d+(?:\.\d*)?|\.\d+)$/;
const NAME = /^(?:\*|[A-Za-z0-9_.-]+\*?)$/;

class ItemError extends Error {}

function num(text: string | undefined, what: string): number {
  if (text === undefined || !NUMBER.test(text)) throw new ItemError(`${what} must be a number, got "${text ?? ''}"`);
  return Number(text);
}

function window(text: string | undefined): { fromS: number; toS: number } {
  const m = text === undefined ? null : WINDOW.exec(text);
  if (m === null) throw new ItemError(`window must be FROM-TO in seconds (e.g. 60-120), got "${text ?? ''}"`);
  return { fromS: Number(m[1]), toS: Number(m[2]) };
}

function arity(args: readonly string[], count: number, usage: string): void {
  if (args.length !== count) throw new ItemError(`expected ${usage}, got ${args.length} argument(s)`);
}

function parseItem(item: string): Fault {
  const [kind = '', targetText, ...args] = item.split(':');
  if (targetText === undefined) throw new ItemError('expected KIND:ENTITY/SENSOR[:ARGS]');
  const slash = targetText.split('/');
  const [entity = '', sensor = ''] = slash;
  if (slash.length !== 2 || !NAME.test(entity) || !NAME.test(sensor)) {
    throw new ItemError(`target must be ENTITY/SENSOR (names, * or prefix*), got "${targetText}"`);
  }
  const t = { entity, sensor };
  switch (kind) {
    case 'dropout':
      arity(args, 1, 'dropout:ENTITY/SENSOR:FROM-TO');
      return { kind: 'dropout', ...t, ...window(args[0]) };
    case 'stuck':
      arity(args, 1, 'stuck:ENTITY/SENSOR:FROM-TO');
      return { kind: 'stuck', ...t, ...window(args[0]) };
    case 'late-burst':
      if (args[0] === 'random') {
        arity(args, 3, 'late-burst:ENTITY/SENSOR:random:MEAN:MIN-MAX');
        const d = window(args[2]);
        return {
          kind: 'lateBurst',
          ...t,
          meanIntervalS: num(args[1], 'mean interval'),
          minDurationS: d.fromS,
          maxDurationS: d.toS,
        };
      }
      arity(args, 1, 'late-burst:ENTITY/SENSOR:FROM-TO or late-burst:ENTITY/SENSOR:random:MEAN:MIN-MAX');
      return { kind: 'lateBurst', ...t, ...window(args[0]) };
    case 'duplicates':
      arity(args, 1, 'duplicates:ENTITY/SENSOR:PROBABILITY');
      return { kind: 'duplicates', ...t, probability: num(args[0], 'probability') };
    case 'spikes':
      arity(args, 2, 'spikes:ENTITY/SENSOR:PROBABILITY:MAGNITUDE');
      return {
        kind: 'spikes',
        ...t,
        probability: num(args[0], 'probability'),
        magnitude: num(args[1], 'magnitude'),
      };
    case 'bias-jump':
      arity(args, 2, 'bias-jump:ENTITY/SENSOR:SIGMAS:FROM-TO');
      return { kind: 'biasJump', ...t, sigmas: num(args[0], 'sigmas'), ...window(args[1]) };
    case 'clock-skew':
      arity(args, 1, 'clock-skew:ENTITY/SENSOR:OFFSET');
      return { kind: 'clockSkew', ...t, offsetS: num(args[0], 'offset') };
    default:
      throw new ItemError(
        `unknown fault kind "${kind}" (dropout, late-burst, duplicates, spikes, stuck, bias-jump, clock-skew)`,
      );
  }
}

/** Parses the compact fault form (see `FAULT_SPEC_SYNTAX`); blank text is an empty plan. */
export function parseFaultSpec(text: string): FaultSpecResult {
  if (text.trim() === '') return { ok: true, plan: [] };
  const plan: Fault[] = [];
  const issues: FaultSpecIssue[] = [];
  text.split(',').forEach((raw, i) => {
    const item = raw.trim();
    try {
      if (item === '') throw new ItemError('empty item');
      const fault = parseItem(item);
      const problems = checkFault(fault);
      if (problems.length > 0) throw new ItemError(problems.join('; '));
      plan.push(fault);
    } catch (error) {
      if (!(error instanceof ItemError)) throw error;
      issues.push({ index: i + 1, item, message: error.message });
    }
  });
  if (issues.length === 0) return { ok: true, plan };
  const message = issues.map((s) => `fault item ${s.index} "${s.item}": ${s.message}`).join('\n');
  return { ok: false, issues, message };
}

/** Writes a plan in the compact form, so `parseFaultSpec(formatFaultSpec(plan))` gives it back. */
export function formatFaultSpec(plan: FaultPlan): string {
  return plan
    .map((f) => {
      const head = (kind: string): string => `${kind}:${f.entity}/${f.sensor}`;
      switch (f.kind) {
        case 'dropout':
          return `${head('dropout')}:${f.fromS}-${f.toS}`;
        case 'stuck':
          return `${head('stuck')}:${f.fromS}-${f.toS}`;
        case 'lateBurst':
          return 'fromS' in f
            ? `${head('late-burst')}:${f.fromS}-${f.toS}`
            : `${head('late-burst')}:random:${f.meanIntervalS}:${f.minDurationS}-${f.maxDurationS}`;
        case 'duplicates':
          return `${head('duplicates')}:${f.probability}`;
        case 'spikes':
          return `${head('spikes')}:${f.probability}:${f.magnitude}`;
        case 'biasJump':
          return `${head('bias-jump')}:${f.sigmas}:${f.fromS}-${f.toS}`;
        case 'clockSkew':
          return `${head('clock-skew')}:${f.offsetS}`;
        default: {
          const unreachable: never = f;
          throw new Error(`unknown fault ${JSON.stringify(unreachable)}`);
        }
      }
    })
    .join(',');
}
