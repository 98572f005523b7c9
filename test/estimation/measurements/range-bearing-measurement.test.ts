import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { RangeBearingMeasurement } from '../../../src/estimation/measurements/range-bearing-measurement.js';
import { expectCloseToMatrix } from '../models/close-to-matrix.js';
import { analyticJacobian, centralDifferenceJacobian } from './finite-difference.js';

// A yard radar at (east 120 m, north −35 m) watching the tow tractors; state [east, north, vEast, vNorth].
const radar = (): RangeBearingMeasurement => new RangeBearingMeasurement({
  stateDim: 4, positionIndices: [0, 1], siteEastM: 120, siteNorthM: -35, rangeSigmaM: 0.5, bearingSigmaRad: 0.01,
});
const coordinate = fc.double({ min: -2000, max: 2000, noNaN: true });

describe('RangeBearingMeasurement', () => {
  it('measures range and a bearing clockwise from north', () => {
    const m = radar();
    const yhat = new Float64Array(2);
    m.measureInto(Float64Array.of(120 + 30, -35 + 40, 0, 0), yhat); // 3-4-5 triangle, north-east
    expect(Math.abs(yhat[0]! - 50)).toBeLessThan(1e-12);
    expect(Math.abs(yhat[1]! - Math.atan2(3, 4))).toBeLessThan(1e-15);
    m.measureInto(Float64Array.of(120 - 1, -35, 0, 0), yhat); // due west
    expect(Math.abs(yhat[1]! - -Math.PI / 2)).toBeLessThan(1e-15);
  });

  it('has a Jacobian equal to central differences at random positions', () => {
    const m = radar();
    fc.assert(
      fc.property(coordinate, coordinate, (e, n) => {
        fc.pre(Math.hypot(e - 120, n + 35) > 5);
        const x = Float64Array.of(e, n, 1, -1);
        expectCloseToMatrix(analyticJacobian(m, x), centralDifferenceJacobian(m, x, 1e-4), 1e-8);
      }),
    );
  });

  it('has a Jacobian equal to central differences due south, where the bearing crosses ±π', () => {
    const m = radar();
    const x = Float64Array.of(120, -35 - 200, 0, 0);
    expectCloseToMatrix(analyticJacobian(m, x), centralDifferenceJacobian(m, x, 1e-4), 1e-10);
  });

  it('gives zero Jacobian rows at the site', () => {
    expectCloseToMatrix(analyticJacobian(radar(), Float64Array.of(120, -35, 0, 0)), new Float64Array(8), 0);
  });

  it('wraps the bearing innovation across ±π and leaves the range difference plain', () => {
    const nu = new Float64Array(2);
    radar().innovationInto(Float64Array.of(101, Math.PI - 0.01), Float64Array.of(100, -Math.PI + 0.01), nu);
    expect(Math.abs(nu[0]! - 1)).toBeLessThan(1e-12);
    expect(Math.abs(nu[1]! - -0.02)).toBeLessThan(1e-14);
  });

  it('normalizes a bearing reported in [0, 2π) to (−π, π]', () => {
    const y = Float64Array.of(80, 1.75 * Math.PI);
    radar().normalizeInPlace(y);
    expect(y[0]).toBe(80);
    expect(Math.abs(y[1]! - -0.25 * Math.PI)).toBeLessThan(1e-15);
  });

  it('initializes position by the polar inverse, so measuring it returns the fix', () => {
    const m = radar();
    fc.assert(
      fc.property(fc.double({ min: 1, max: 3000, noNaN: true }), fc.double({ min: -Math.PI, max: Math.PI, noNaN: true }), (r, b) => {
        const x = Float64Array.of(0, 0, 2.5, -1.5);
        const P = new Float64Array(16);
        expect(m.initializeInPlace(Float64Array.of(r, b), m.R, x, P)).toBe(true);
        const yhat = new Float64Array(2);
        const nu = new Float64Array(2);
        m.measureInto(x, yhat);
        m.innovationInto(Float64Array.of(r, b), yhat, nu);
        expect(Math.abs(nu[0]!)).toBeLessThan(1e-9);
        expect(Math.abs(nu[1]!)).toBeLessThan(1e-12);
        expectCloseToMatrix(x.subarray(2), [2.5, -1.5], 0);
      }),
    );
  });

  it('sets the position covariance to J R Jᵀ and clears its cross terms', () => {
    const m = radar();
    const x = new Float64Array(4);
    const P = new Float64Array(16).fill(0.3);
    // Due east at 100 m: J = [[sin b, r cos b], [cos b, −r sin b]] = [[1, 0], [0, −100]].
    m.initializeInPlace(Float64Array.of(100, Math.PI / 2), m.R, x, P);
    expectCloseToMatrix(x.subarray(0, 2), [220, -35], 1e-12);
    const expected = [
      0.25, 0, 0, 0,
      0, 1, 0, 0, // (100 · 0.01)² = 1 m² across the beam
      0, 0, 0.3, 0.3,
      0, 0, 0.3, 0.3,
    ];
    expectCloseToMatrix(P, expected, 1e-12);
  });

  it('refuses to initialize from a negative or non-finite range', () => {
    const m = radar();
    const x = Float64Array.of(1, 2, 3, 4);
    expect(m.initializeInPlace(Float64Array.of(-1, 0), m.R, x, new Float64Array(16))).toBe(false);
    expect(m.initializeInPlace(Float64Array.of(Number.NaN, 0), m.R, x, new Float64Array(16))).toBe(false);
    expectCloseToMatrix(x, [1, 2, 3, 4], 0);
  });

  it('builds a diagonal R from the sigmas', () => {
    expectCloseToMatrix(radar().R, [0.25, 0, 0, 1e-4], 1e-18);
  });

  it('rejects a non-finite site coordinate naming the field', () => {
    expect(() => new RangeBearingMeasurement({
      stateDim: 4, positionIndices: [0, 1], siteEastM: Infinity, siteNorthM: 0, rangeSigmaM: 1, bearingSigmaRad: 0.1,
    })).toThrow('siteEastM must be a finite number of metres, got Infinity');
  });

  it('rejects a position index outside the state', () => {
    expect(() => new RangeBearingMeasurement({
      stateDim: 4, positionIndices: [0, -1], siteEastM: 0, siteNorthM: 0, rangeSigmaM: 1, bearingSigmaRad: 0.1,
    })).toThrow('positionIndices[1] must be an integer state index in [0, 3], got -1');
  });

  it('rejects a negative bearing sigma', () => {
    expect(() => new RangeBearingMeasurement({
      stateDim: 4, positionIndices: [0, 1], siteEastM: 0, siteNorthM: 0, rangeSigmaM: 1, bearingSigmaRad: -0.1,
    })).toThrow('bearingSigmaRad must be a positive finite number, got -0.1');
  });
});
