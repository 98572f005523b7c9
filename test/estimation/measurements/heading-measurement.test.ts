import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { HeadingMeasurement } from '../../../src/estimation/measurements/heading-measurement.js';
import { expectCloseToMatrix } from '../models/close-to-matrix.js';
import { analyticJacobian, centralDifferenceJacobian } from './finite-difference.js';

// A tow tractor state [east, north, vEast, vNorth].
const tug = (): HeadingMeasurement => new HeadingMeasurement({ stateDim: 4, velocityIndices: [2, 3], headingSigmaRad: 0.05 });
const velocity = fc.double({ min: -15, max: 15, noNaN: true });

describe('HeadingMeasurement', () => {
  it('measures clockwise from north: north 0, east π/2, south π, west −π/2', () => {
    const m = tug();
    const yhat = new Float64Array(1);
    const cases: ReadonlyArray<readonly [number, number, number]> = [[0, 2, 0], [2, 0, Math.PI / 2], [0, -2, Math.PI], [-2, 0, -Math.PI / 2]];
    for (const [ve, vn, expected] of cases) {
      m.measureInto(Float64Array.of(0, 0, ve, vn), yhat);
      expect(Math.abs(yhat[0]! - expected)).toBeLessThan(1e-15);
    }
  });

  it('has a Jacobian equal to central differences away from rest', () => {
    const m = tug();
    fc.assert(
      fc.property(velocity, velocity, (ve, vn) => {
        fc.pre(Math.hypot(ve, vn) > 0.1);
        const x = Float64Array.of(-3, 8, ve, vn);
        expectCloseToMatrix(analyticJacobian(m, x), centralDifferenceJacobian(m, x, 1e-6), 1e-6);
      }),
    );
  });

  it('gives a zero Jacobian row at rest', () => {
    expectCloseToMatrix(analyticJacobian(tug(), Float64Array.of(1, 1, 0, 0)), [0, 0, 0, 0], 0);
  });

  it('wraps the innovation across ±π (179° against −179° is −2°)', () => {
    const nu = new Float64Array(1);
    const deg = Math.PI / 180;
    tug().innovationInto(Float64Array.of(179 * deg), Float64Array.of(-179 * deg), nu);
    expect(Math.abs(nu[0]! - -2 * deg)).toBeLessThan(1e-14);
    tug().innovationInto(Float64Array.of(-179 * deg), Float64Array.of(179 * deg), nu);
    expect(Math.abs(nu[0]! - 2 * deg)).toBeLessThan(1e-14);
  });

  it('keeps every innovation in (−π, π]', () => {
    const m = tug();
    const nu = new Float64Array(1);
    fc.assert(
      fc.property(fc.double({ min: -10, max: 10, noNaN: true }), fc.double({ min: -Math.PI, max: Math.PI, noNaN: true }), (y, yhat) => {
        m.innovationInto(Float64Array.of(y), Float64Array.of(yhat), nu);
        expect(nu[0]!).toBeGreaterThan(-Math.PI);
        expect(nu[0]!).toBeLessThanOrEqual(Math.PI);
        // Same angle modulo 2π.
        expect(Math.abs(Math.sin(nu[0]!) - Math.sin(y - yhat))).toBeLessThan(1e-12);
        expect(Math.abs(Math.cos(nu[0]!) - Math.cos(y - yhat))).toBeLessThan(1e-12);
      }),
    );
  });

  it('normalizes a report in [0, 2π) to (−π, π]', () => {
    const y = Float64Array.of(1.5 * Math.PI);
    tug().normalizeInPlace(y);
    expect(Math.abs(y[0]! - -0.5 * Math.PI)).toBeLessThan(1e-15);
  });

  it('cannot initialize a track', () => {
    const x = Float64Array.of(1, 2, 3, 4);
    expect(tug().initializeInPlace(Float64Array.of(0.3), Float64Array.of(0.0025), x, new Float64Array(16))).toBe(false);
    expectCloseToMatrix(x, [1, 2, 3, 4], 0);
  });

  it('rejects three velocity indices (heading is horizontal)', () => {
    expect(() => new HeadingMeasurement({ stateDim: 6, velocityIndices: [3, 4, 5], headingSigmaRad: 0.05 }))
      .toThrow('velocityIndices must have 2 entries, got 3 entries');
  });

  it('rejects a non-finite sigma', () => {
    expect(() => new HeadingMeasurement({ stateDim: 4, velocityIndices: [2, 3], headingSigmaRad: Number.NaN }))
      .toThrow('headingSigmaRad must be a positive finite number, got NaN');
  });
});
