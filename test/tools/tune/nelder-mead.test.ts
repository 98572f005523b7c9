import { describe, expect, it } from 'vitest';
import { nelderMead, nelderMeadSteps } from '../../../src/tools/tune/nelder-mead.js';

// Rosenbrock's valley: minimum 0 at (1, 1) (Rosenbrock, Computer Journal 3(3), 1960).
const rosenbrock = (x: Float64Array): number => 100 * (x[1]! - x[0]! ** 2) ** 2 + (1 - x[0]!) ** 2;
// On the box [−5, 2] × [0, 5] the minimum of this quadratic lies in the corner (2, 0): f = 1 + 2 = 3.
const cornered = (x: Float64Array): number => (x[0]! - 3) ** 2 + 2 * (x[1]! + 1) ** 2;

describe('nelderMead', () => {
  it('finds the minimum of the Rosenbrock function from (−1.2, 1)', () => {
    const r = nelderMead(rosenbrock, [-1.2, 1], { maxIterations: 1000 });
    expect(r.converged).toBe(true);
    expect(r.bestX[0]).toBeCloseTo(1, 4);
    expect(r.bestX[1]).toBeCloseTo(1, 4);
    expect(r.bestF).toBeLessThan(1e-8);
  });

  it('finds a minimum that lies on the bounds of a quadratic', () => {
    const r = nelderMead(cornered, [0, 3], { lower: [-5, 0], upper: [2, 5] });
    expect(r.bestX[0]).toBeCloseTo(2, 8);
    expect(r.bestX[1]).toBeCloseTo(0, 8);
    expect(r.bestF).toBeCloseTo(3, 8);
  });

  it('finds an interior minimum of a bounded quadratic in three dimensions', () => {
    const f = (x: Float64Array): number => (x[0]! - 0.5) ** 2 + 3 * (x[1]! + 0.25) ** 2 + 0.5 * (x[2]! - 1) ** 2;
    const r = nelderMead(f, [2, 2, 2], { lower: [-3, -3, -3], upper: [3, 3, 3] });
    expect(Array.from(r.bestX).map((v) => Number(v.toFixed(4)))).toEqual([0.5, -0.25, 1]);
  });

  it('never evaluates a point outside the bounds', () => {
    let outside = 0;
    nelderMead((x) => {
      if (x[0]! < -1 || x[0]! > 1 || x[1]! < 0 || x[1]! > 0.5) outside += 1;
      return rosenbrock(x);
    }, [0.9, 0.4], { lower: [-1, 0], upper: [1, 0.5], initialStep: 1 });
    expect(outside).toBe(0);
  });

  it('reports no convergence when the iteration budget runs out', () => {
    const r = nelderMead(rosenbrock, [-1.2, 1], { maxIterations: 5 });
    expect(r.converged).toBe(false);
    expect(r.iteration).toBe(5);
  });

  it('yields after each iteration with a best value that never rises', () => {
    const seen: number[] = [];
    const steps = nelderMeadSteps(rosenbrock, [-1.2, 1], { maxIterations: 50 });
    for (let next = steps.next(); next.done !== true; next = steps.next()) seen.push(next.value.bestF);
    expect(seen).toHaveLength(50);
    expect(seen.every((v, i) => i === 0 || v <= seen[i - 1]!)).toBe(true);
  });

  it('treats a non-finite value as worse than any finite one', () => {
    const r = nelderMead((x) => (x[0]! < 0.5 ? Number.NaN : (x[0]! - 1) ** 2), [3]);
    expect(r.bestX[0]).toBeCloseTo(1, 5);
  });
});
