import { describe, expect, it } from 'vitest';
import { FilterWorkspace } from '../../src/estimation/filters/filter-workspace.js';
import { kalmanPredictInPlace } from '../../src/estimation/filters/kalman-predict.js';
import { unscentedUpdateInPlace } from '../../src/estimation/filters/ukf-update.js';
import {
  UnscentedWorkspace,
  unscentedTransformInto,
  type UnscentedMap,
  type UnscentedParameters,
} from '../../src/estimation/filters/unscented-transform.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import type { ProcessModel } from '../../src/estimation/models/process-model.js';

// Reference values: /work/shared/REFERENCE-CHECKS.md, check C9.
// Sigma points and weights: Julier, "The scaled unscented transformation", ACC 2002;
// Wan & van der Merwe 2000 (from memory).

function expectClose(actual: ArrayLike<number>, expected: ArrayLike<number>, tol: number): void {
  expect(actual.length).toBe(expected.length);
  for (let i = 0; i < expected.length; i++) {
    expect(Math.abs(actual[i]! - expected[i]!), `entry ${i}: ${actual[i]} vs ${expected[i]}`).toBeLessThanOrEqual(tol);
  }
}

/** CWNA constant velocity, Q = q[[T³/3, T²/2], [T²/2, T]], q = 0.5 (C8 setup). */
const cwna: ProcessModel = {
  dim: 2,
  stateNames: ['level', 'level_rate'],
  discretizeInto(dtS, A, Q) {
    const q = 0.5;
    A.set([1, dtS, 0, 1]);
    Q.set([q * dtS ** 3 / 3, q * dtS ** 2 / 2, q * dtS ** 2 / 2, q * dtS]);
  },
};

describe('C9 (a): the UKF equals the KF on a linear model', () => {
  // C8 measurements z_1..z_6 of a tank level; filtered values from C8's table (Rauch, Tung,
  // Striebel 1965; Särkkä 2013 ch. 8–10, from memory).
  const z = [1.1, 1.9, 3.2, 3.8, 5.3, 6.0];
  const filtered = [
    [0.88, 1.0, 0.8, 0, 1.0],
    [1.893258427, 1.0084269663, 0.6629213483, 0.4213483146, 0.9733146067],
    [3.1181713112, 1.1430075767, 0.7256966739, 0.4511365096, 0.731347117],
    [3.9307943985, 0.9556467425, 0.7163911837, 0.4062649856, 0.649379177],
    [5.1763638448, 1.1170715668, 0.7010433884, 0.3903309549, 0.6397458443],
    [6.0892411491, 1.0028360423, 0.6958746438, 0.3893038125, 0.641407066],
  ];
  const sets: UnscentedParameters[] = [
    { alpha: 1, beta: 0, kappa: 1 },
    { alpha: 1e-3, beta: 2, kappa: 0 },
    { alpha: 0.5, beta: 2, kappa: 1 },
  ];
  for (const params of sets) {
    it(`reproduces the C8 filtered sequence for (α, β, κ) = (${params.alpha}, ${params.beta}, ${params.kappa})`, () => {
      const sensor = new LinearMeasurement({ C: [1, 0], dim: 1, stateDim: 2, Rv: [1] });
      const ws = new FilterWorkspace(2, 1);
      const uws = new UnscentedWorkspace(2, 1, params);
      const x = Float64Array.of(0, 1);
      const P = Float64Array.of(4, 0, 0, 1);
      for (let k = 0; k < z.length; k++) {
        if (k > 0) expect(kalmanPredictInPlace(cwna, 1, x, P, ws)).toBe(true);
        const verdict = unscentedUpdateInPlace(sensor, Float64Array.of(z[k]!), sensor.R, Infinity, x, P, ws, uws);
        expect(verdict).toBe('applied');
        const [x1, x2, p11, p12, p22] = filtered[k]!;
        expectClose(x, [x1!, x2!], 1e-9);
        expectClose(P, [p11!, p12!, p12!, p22!], 1e-9);
      }
    });
  }
});

describe('C9 (b): polar to Cartesian', () => {
  const polar: UnscentedMap = {
    dim: 2,
    measureInto(x, y) {
      y[0] = x[0]! * Math.cos(x[1]!);
      y[1] = x[0]! * Math.sin(x[1]!);
    },
  };
  const deg = Math.PI / 180;
  const ju = { r0: 1, theta0: 90 * deg, sigmaR: 0.02, sigmaTheta: 15 * deg };
  const b = { r0: 10, theta0: 30 * deg, sigmaR: 0.5, sigmaTheta: 5 * deg };

  /** Columns: mean x, mean y, var x, cov xy, var y. */
  function transform(c: typeof ju, params: UnscentedParameters): number[] {
    const uws = new UnscentedWorkspace(2, 2, params);
    const m = new Float64Array(2);
    const S = new Float64Array(4);
    const ok = unscentedTransformInto(polar, Float64Array.of(c.r0, c.theta0), Float64Array.of(c.sigmaR ** 2, 0, 0, c.sigmaTheta ** 2), uws, m, S);
    expect(ok).toBe(true);
    expect(S[1]).toBe(S[2]);
    return [m[0]!, m[1]!, S[0]!, S[1]!, S[3]!];
  }

  /** Exact converted-measurement moments (Lerro & Bar-Shalom, IEEE Trans. AES 29(3), 1993; from memory). */
  function exact(c: typeof ju): number[] {
    const { r0, theta0: t, sigmaR: sr, sigmaTheta: st } = c;
    const e1 = Math.exp(-st * st / 2);
    const e2 = Math.exp(-2 * st * st);
    const k = r0 * r0 + sr * sr;
    return [
      r0 * Math.cos(t) * e1,
      r0 * Math.sin(t) * e1,
      k * (1 + Math.cos(2 * t) * e2) / 2 - r0 * r0 * Math.cos(t) ** 2 * e1 * e1,
      k * Math.sin(2 * t) * e2 / 2 - r0 * r0 * Math.sin(t) * Math.cos(t) * e1 * e1,
      k * (1 - Math.cos(2 * t) * e2) / 2 - r0 * r0 * Math.sin(t) ** 2 * e1 * e1,
    ];
  }

  // Table C9 (b); Julier & Uhlmann, "Unscented filtering and nonlinear estimation",
  // Proc. IEEE 92(3), 2004 (from memory) for the range-bearing setup of the JU case.
  it('gives the tabulated moments for the JU case with (1, 0, 1)', () => {
    expectClose(transform(ju, { alpha: 1, beta: 0, kappa: 1 }), [0, 0.966313728361, 0.0639682485867, 0, 0.00266952979384], 1e-11);
  });

  it('gives the tabulated moments for the JU case with (1, 2, 1)', () => {
    expectClose(transform(ju, { alpha: 1, beta: 2, kappa: 1 }), [0, 0.966313728361, 0.0639682485867, 0, 0.00493905958768], 1e-11);
  });

  it('gives the tabulated moments for the JU case with (1e-3, 2, 0)', () => {
    expectClose(transform(ju, { alpha: 1e-3, beta: 2, kappa: 0 }), [0, 0.9657305406, 0.0685389163203, 0, 0.00274879287092], 1e-7);
  });

  it('gives the tabulated moments for the B case with (1, 0, 1)', () => {
    expectClose(transform(b, { alpha: 1, beta: 0, kappa: 1 }), [8.627340968332, 4.980997630457, 0.378606965573, -0.217750388102, 0.630043455947], 1e-11);
  });

  it('gives the tabulated moments for the B case with (1e-3, 2, 0)', () => {
    expectClose(transform(b, { alpha: 1e-3, beta: 2, kappa: 0 }), [8.627278235275, 4.98096141126, 0.3800606946, -0.220249226706, 0.634382595278], 1e-7);
  });

  it('matches the closed-form mean r0(2 + cos(√3 σθ))/3 of the (1, 0, 1) points in the JU case', () => {
    const y = transform(ju, { alpha: 1, beta: 0, kappa: 1 })[1]!;
    expect(Math.abs(y - ju.r0 * (2 + Math.cos(Math.sqrt(3) * ju.sigmaTheta)) / 3)).toBeLessThan(1e-14);
  });

  it('uses exact moments that reproduce the tabulated exact rows', () => {
    // Guards the comparisons below: the formulas in exact() are the ones the table was built on.
    expectClose(exact(ju), [0, 0.966311087632, 0.0640744417454, 0, 0.00256844017358], 1e-11);
    expectClose(exact(b), [8.627340936515, 4.980997612087, 0.377656950567, -0.219396496291, 0.630994202953], 1e-11);
  });

  it('lands far closer to the exact mean than linearization does in the JU case', () => {
    const ut = transform(ju, { alpha: 1, beta: 0, kappa: 1 });
    const ex = exact(ju);
    // The linearized mean is h(μ) = (0, r0); its bias is 3.4 % of range (C9).
    const linearBias = Math.abs(ju.r0 - ex[1]!);
    expect(linearBias).toBeGreaterThan(0.03);
    expect(Math.abs(ut[1]! - ex[1]!)).toBeLessThan(linearBias / 1000);
  });

  it('stays within 1 % of the exact covariance in the B case', () => {
    const ut = transform(b, { alpha: 1, beta: 0, kappa: 1 });
    const ex = exact(b);
    for (const i of [2, 3, 4]) expect(Math.abs(ut[i]! - ex[i]!) / Math.abs(ex[i]!)).toBeLessThan(0.01);
  });
});
