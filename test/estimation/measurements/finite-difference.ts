/** Central finite-difference Jacobians for checking the analytic ones of the measurement models. */
import type { MeasurementModel } from '../../../src/estimation/measurements/measurement-model.js';

/**
 * ∂h/∂x by central differences, (h(x + δe_j) − h(x − δe_j))/(2δ), with the difference taken
 * through innovationInto so wrapped components do not jump across ±π. Returns M×P row-major.
 */
export function centralDifferenceJacobian(model: MeasurementModel, x: Float64Array, stepSize: number): Float64Array {
  const m = model.dim;
  const n = model.stateDim;
  const J = new Float64Array(m * n);
  const plus = new Float64Array(m);
  const minus = new Float64Array(m);
  const diff = new Float64Array(m);
  const xs = Float64Array.from(x);
  for (let j = 0; j < n; j++) {
    xs[j] = x[j]! + stepSize;
    model.measureInto(xs, plus);
    xs[j] = x[j]! - stepSize;
    model.measureInto(xs, minus);
    xs[j] = x[j]!;
    model.innovationInto(plus, minus, diff);
    for (let i = 0; i < m; i++) J[i * n + j] = diff[i]! / (2 * stepSize);
  }
  return J;
}

/** The analytic Jacobian of a model at x, as a fresh M×P array. */
export function analyticJacobian(model: MeasurementModel, x: Float64Array): Float64Array {
  const H = new Float64Array(model.dim * model.stateDim).fill(Number.NaN);
  model.jacobianInto(x, H);
  return H;
}
