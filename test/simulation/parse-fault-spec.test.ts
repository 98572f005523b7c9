import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import type { Fault } from '../../src/simulation/fault-plan.js';
import { formatFaultSpec, parseFaultSpec } from '../../src/simulation/fault-plan.js';

function planOf(text: string): readonly Fault[] {
  const result = parseFaultSpec(text);
  if (!result.ok) throw new Error(result.message);
  return result.plan;
}

function issuesOf(text: string): string {
  const result = parseFaultSpec(text);
  if (result.ok) throw new Error(`expected "${text}" to be rejected`);
  return result.message;
}

describe('parseFaultSpec', () => {
  it('parses a bias jump and a dropout', () => {
    expect(planOf('bias-jump:tank-b/pressure:5:60-120,dropout:tug-03/gnss:30-50')).toEqual([
      { kind: 'biasJump', entity: 'tank-b', sensor: 'pressure', sigmas: 5, fromS: 60, toS: 120 },
      { kind: 'dropout', entity: 'tug-03', sensor: 'gnss', fromS: 30, toS: 50 },
    ]);
  });

  it('parses every kind with wildcards and prefixes', () => {
    const plan = planOf(
      [
        'late-burst:tug-0*/gnss:10-20',
        'late-burst:*/gnss:random:120:5-30',
        'duplicates:*/*:0.01',
        'spikes:tank-a/level:0.02:0.5',
        'stuck:tank-c/level:100-160.5',
        'clock-skew:tug-07/gnss:-2.5',
      ].join(', '),
    );
    expect(plan).toEqual([
      { kind: 'lateBurst', entity: 'tug-0*', sensor: 'gnss', fromS: 10, toS: 20 },
      { kind: 'lateBurst', entity: '*', sensor: 'gnss', meanIntervalS: 120, minDurationS: 5, maxDurationS: 30 },
      { kind: 'duplicates', entity: '*', sensor: '*', probability: 0.01 },
      { kind: 'spikes', entity: 'tank-a', sensor: 'level', probability: 0.02, magnitude: 0.5 },
      { kind: 'stuck', entity: 'tank-c', sensor: 'level', fromS: 100, toS: 160.5 },
      { kind: 'clockSkew', entity: 'tug-07', sensor: 'gnss', offsetS: -2.5 },
    ]);
  });

  it('returns an empty plan for blank text', () => {
    expect(planOf('  ')).toEqual([]);
  });

  it('names an unknown kind and its item number', () => {
    expect(issuesOf('dropout:tug-01/gnss:1-2,wobble:tug-01/gnss:3')).toBe(
      'fault item 2 "wobble:tug-01/gnss:3": unknown fault kind "wobble" (dropout, late-burst, duplicates, spikes, stuck, bias-jump, clock-skew)',
    );
  });

  it('rejects a window that ends before it starts', () => {
    expect(issuesOf('dropout:tug-03/gnss:50-30')).toContain('window end 30 s must be after start 50 s');
  });

  it('rejects a malformed window', () => {
    expect(issuesOf('stuck:tank-a/level:60')).toContain('window must be FROM-TO in seconds');
  });

  it('rejects a probability above one', () => {
    expect(issuesOf('duplicates:*/*:1.5')).toContain('probability must be in [0, 1], got 1.5');
  });

  it('rejects a non-numeric argument', () => {
    expect(issuesOf('bias-jump:tank-b/pressure:five:60-120')).toContain('sigmas must be a number, got "five"');
  });

  it('rejects a target without a sensor', () => {
    expect(issuesOf('dropout:tank-a:1-2')).toContain('target must be ENTITY/SENSOR');
  });

  it('rejects the wrong number of arguments', () => {
    expect(issuesOf('spikes:tank-a/level:0.1')).toContain('expected spikes:ENTITY/SENSOR:PROBABILITY:MAGNITUDE');
  });

  it('rejects an empty item between commas', () => {
    expect(issuesOf('dropout:a/b:1-2,,stuck:a/b:1-2')).toBe('fault item 2 "": empty item');
  });

  it('rejects random outages whose minimum exceeds the maximum', () => {
    expect(issuesOf('late-burst:*/gnss:random:60:30-5')).toContain('durations need 0 < min ≤ max');
  });

  it('reports every bad item, not only the first', () => {
    const result = parseFaultSpec('dropout:a/b:9-1,ok:a/b,clock-skew:a/b:x');
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.issues.map((i) => i.index)).toEqual([1, 2, 3]);
  });
});

describe('formatFaultSpec', () => {
  it('writes a plan that parses back to itself', () => {
    const target = { entity: fc.constantFrom('tug-01', '*', 'tank-*'), sensor: fc.constantFrom('gnss', '*') };
    const windowArb = fc
      .tuple(fc.integer({ min: 0, max: 1000 }), fc.integer({ min: 1, max: 1000 }))
      .map(([fromS, len]) => ({ fromS, toS: fromS + len }));
    const fault: fc.Arbitrary<Fault> = fc.oneof(
      fc.record({ kind: fc.constant('dropout' as const), ...target }).chain((f) => windowArb.map((w) => ({ ...f, ...w }))),
      fc.record({ kind: fc.constant('stuck' as const), ...target }).chain((f) => windowArb.map((w) => ({ ...f, ...w }))),
      fc.record({ kind: fc.constant('duplicates' as const), ...target, probability: fc.double({ min: 0, max: 1, noNaN: true }) }),
      fc.record({ kind: fc.constant('clockSkew' as const), ...target, offsetS: fc.double({ min: -100, max: 100, noNaN: true }).map((x) => x + 0) }),
      fc.record({
        kind: fc.constant('biasJump' as const),
        ...target,
        sigmas: fc.integer({ min: -10, max: 10 }),
        fromS: fc.constant(5),
        toS: fc.constant(9.5),
      }),
    );
    fc.assert(
      fc.property(fc.array(fault, { minLength: 1, maxLength: 5 }), (plan) => {
        expect(planOf(formatFaultSpec(plan))).toEqual(plan);
      }),
    );
  });
});
