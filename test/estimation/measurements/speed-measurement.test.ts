import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { SpeedMeasurement } from '../../../src/estimation/measurements/speed-measurement.js';
import { ModelConfigError } from '../../../src/estimation/model-config-error.js';
import { expectCloseToMatrix } from '../models/close-to-matrix.js';
import { analyticJacobian, centralDifferenceJacobian } from './finite-difference.js';

// A tow tractor (tug-01..tug-12) state: [east, north, vEast, vNorth].
const tug = (): SpeedMeasurement => new SpeedMeasurement({ stateDim: 4, velocityIndices: [2, 3], speedSigmaMps: 0.2 });
const velocity = fc.double({ min: -15, max: 15, noNaN: true });

describe('SpeedMeasurement', () => {
  it('predicts the Euclidean norm of the velocity components', () => {
    const yhat = new Float64Array(1);
    tug().measureInto(Float64Array.of(100, -40, 3, -4), yhat);
    expect(yhat[0]!).toBeCloseTo(5, 14);
  });

  it('reads a three-component velocity when given three indices', () => {
    const m = new SpeedMeasurement({ stateDim: 6, velocityIndices: [3, 4, 5], speedSigmaMps: 0.2 });
    const yhat = new Float64Array(1);
    m.measureInto(Float64Array.of(0, 0, 0, 2, 3, 6), yhat);
    expect(yhat[0]!).toBeCloseTo(7, 14);
  });

  it('has a Jacobian equal to central differences away from rest', () => {
    const m = tug();
    fc.assert(
      fc.property(velocity, velocity, (ve, vn) => {
        fc.pre(Math.hypot(ve, vn) > 0.1);
        const x = Float64Array.of(12, -7, ve, vn);
        expectCloseToMatrix(analyticJacobian(m, x), centralDifferenceJacobian(m, x, 1e-5), 1e-8);
      }),
    );
  });

  it('gives a zero Jacobian row at rest', () => {
    expectCloseToMatrix(analyticJacobian(tug(), Float64Array.of(5, 5, 0, 0)), [0, 0, 0, 0], 0);
  });

  it('forms the innovation as a plain difference', () => {
    const nu = new Float64Array(1);
    tug().innovationInto(Float64Array.of(4.5), Float64Array.of(5), nu);
    expect(nu[0]!).toBeCloseTo(-0.5, 15);
  });

  it('builds R from the speed sigma', () => {
    expectCloseToMatrix(tug().R, [0.04], 1e-17);
  });

  it('cannot initialize a track and leaves x and P untouched', () => {
    const x = Float64Array.of(1, 2, 3, 4);
    const P = new Float64Array(16).fill(7);
    expect(tug().initializeInPlace(Float64Array.of(5), Float64Array.of(0.04), x, P)).toBe(false);
    expectCloseToMatrix(x, [1, 2, 3, 4], 0);
    expectCloseToMatrix(P, new Float64Array(16).fill(7), 0);
  });

  it('rejects a velocity index outside the state naming the field', () => {
    expect(() => new SpeedMeasurement({ stateDim: 4, velocityIndices: [2, 4], speedSigmaMps: 0.2 }))
      .toThrow('velocityIndices[1] must be an integer state index in [0, 3], got 4');
  });

  it('rejects a repeated velocity index', () => {
    expect(() => new SpeedMeasurement({ stateDim: 4, velocityIndices: [2, 2], speedSigmaMps: 0.2 }))
      .toThrow('velocityIndices[1] must differ from the other indices, got 2 twice');
  });

  it('rejects a non-positive sigma with a ModelConfigError', () => {
    expect(() => new SpeedMeasurement({ stateDim: 4, velocityIndices: [2, 3], speedSigmaMps: 0 })).toThrow(ModelConfigError);
    expect(() => new SpeedMeasurement({ stateDim: 4, velocityIndices: [2, 3], speedSigmaMps: 0 }))
      .toThrow('speedSigmaMps must be a positive finite number, got 0');
  });

  it('rejects a state dimension that is not a positive integer', () => {
    expect(() => new SpeedMeasurement({ stateDim: 2.5, velocityIndices: [0, 1], speedSigmaMps: 1 }))
      .toThrow('stateDim must be a positive integer, got 2.5');
  });
});
