import { describe, expect, it } from 'vitest';
import { RtsWorkspace, rtsSmoothStepInto, smoothBatch, type SmootherStep } from '../../../src/estimation/filters/rts-smoother.js';

function expectClose(actual: ArrayLike<number>, expected: ArrayLike<number>, tol: number): void {
  expect(actual.length).toBe(expected.length);
  for (let i = 0; i < expected.length; i++) {
    expect(Math.abs(actual[i]! - expected[i]!), `entry ${i}: ${actual[i]} vs ${expected[i]}`).toBeLessThanOrEqual(tol);
  }
}

const f = (...v: number[]): Float64Array => Float64Array.from(v);

describe('rtsSmoothStepInto', () => {
  it('applies the RTS step to a scalar random walk', () => {
    // By hand: P_f = 1, Q = 1 → P_p = 2, G = 1/2; x_s = 0 + (1 − 0)/2, P_s = 1 + (1 − 2)/4.
    const x = new Float64Array(1);
    const P = new Float64Array(1);
    expect(rtsSmoothStepInto(f(0), f(1), f(0), f(2), f(1), f(1), f(1), x, P, new RtsWorkspace(1))).toBe(true);
    expectClose(x, [0.5], 1e-15);
    expectClose(P, [0.75], 1e-15);
  });

  it('gives the same result when the outputs alias the smoothed inputs', () => {
    const args = [f(1, 0.5), f(0.8, 0.1, 0.1, 0.6), f(1.5, 0.5), f(1.7, 0.8, 0.8, 1.1), f(1, 1, 0, 1)] as const;
    const sws = new RtsWorkspace(2);
    const x1 = new Float64Array(2);
    const P1 = new Float64Array(4);
    rtsSmoothStepInto(...args, f(1.4, 0.45), f(0.5, 0.1, 0.1, 0.4), x1, P1, sws);
    const x2 = f(1.4, 0.45);
    const P2 = f(0.5, 0.1, 0.1, 0.4);
    rtsSmoothStepInto(...args, x2, P2, x2, P2, sws);
    expect([...x2]).toEqual([...x1]);
    expect([...P2]).toEqual([...P1]);
  });

  it('returns false and writes nothing when the predicted covariance is not positive definite', () => {
    const x = f(7, 7);
    const P = f(7, 7, 7, 7);
    const ok = rtsSmoothStepInto(f(0, 0), f(1, 0, 0, 1), f(0, 0), f(0, 0, 0, 0), f(1, 0, 0, 1), f(1, 1), f(1, 0, 0, 1), x, P, new RtsWorkspace(2));
    expect(ok).toBe(false);
    expect([...x]).toEqual([7, 7]);
    expect([...P]).toEqual([7, 7, 7, 7]);
  });

  it('returns false for inputs that are not finite', () => {
    const ok = rtsSmoothStepInto(f(Number.NaN), f(1), f(0), f(2), f(1), f(1), f(1), new Float64Array(1), new Float64Array(1), new RtsWorkspace(1));
    expect(ok).toBe(false);
  });
});

describe('smoothBatch', () => {
  /** Scalar random walk, Q = 1, R = 1, prior N(0, 1), readings of tank-c's level. */
  function randomWalkSteps(z: number[]): SmootherStep[] {
    const steps: SmootherStep[] = [];
    let x = 0;
    let P = 1;
    z.forEach((y, k) => {
      const xp = x;
      const Pp = k === 0 ? P : P + 1;
      const K = Pp / (Pp + 1);
      x = xp + K * (y - xp);
      P = (1 - K) * Pp;
      steps.push({ tS: k, xFiltered: f(x), PFiltered: f(P), xPredicted: f(xp), PPredicted: f(Pp), A: f(1) });
    });
    return steps;
  }

  it('returns nothing for no steps', () => {
    expect(smoothBatch([])).toEqual([]);
  });

  it('returns a single step as its own smoothed estimate', () => {
    const out = smoothBatch([{ tS: 3, xFiltered: f(1, 2), PFiltered: f(1, 0, 0, 1) }]);
    expect(out).toHaveLength(1);
    expect([...out[0]!.x]).toEqual([1, 2]);
    expect(out[0]!.tS).toBe(3);
  });

  it('smooths the first of two random-walk steps as the two-measurement average', () => {
    // Prior N(0, 1), Q = R = 1, z = (2, 4): minimizing x₁² + (x₁ − 2)² + (x₂ − x₁)² + (x₂ − 4)²
    // by hand gives x₁ = 8/5; the information matrix [[3, −1], [−1, 2]] gives P₁ = 2/5.
    const out = smoothBatch(randomWalkSteps([2, 4]));
    expectClose(out[0]!.x, [1.6], 1e-14);
    expectClose(out[0]!.P, [0.4], 1e-14);
  });

  it('restarts from the filtered estimate where a predicted covariance cannot be factorized', () => {
    const steps = randomWalkSteps([2, 4, 3]);
    steps[2] = { ...steps[2]!, PPredicted: f(0) };
    const out = smoothBatch(steps);
    expect(out[1]!.restarted).toBe(true);
    expect([...out[1]!.x]).toEqual([...steps[1]!.xFiltered]);
    // Step 0 is smoothed from step 1 alone, as if the data ended there.
    const twoSteps = smoothBatch(randomWalkSteps([2, 4]));
    expect(out[0]!.restarted).toBe(false);
    expectClose(out[0]!.x, twoSteps[0]!.x, 1e-15);
  });

  it('throws for a step after the first without its prediction', () => {
    const steps = randomWalkSteps([2, 4]);
    const { xPredicted: _drop, ...rest } = steps[1]!;
    expect(() => smoothBatch([steps[0]!, rest])).toThrow(/step 1: xPredicted/);
  });
});
