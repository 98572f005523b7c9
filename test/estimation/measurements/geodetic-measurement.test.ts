import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { FilterWorkspace } from '../../../src/estimation/filters/filter-workspace.js';
import { kalmanUpdateInPlace } from '../../../src/estimation/filters/kalman-update.js';
import { GeodeticMeasurement } from '../../../src/estimation/measurements/geodetic-measurement.js';
import { expectCloseToMatrix } from '../models/close-to-matrix.js';
import { analyticJacobian, centralDifferenceJacobian } from './finite-difference.js';

// Invented vehicle yard for the tow tractors tug-01..tug-12.
const YARD = { latDeg: 51.9231, lonDeg: 4.4712, hM: 47 };
const DEG = Math.PI / 180;
/** State [east, north, up, vEast, vNorth, vUp] with height fixes. */
const with3d = (): GeodeticMeasurement => new GeodeticMeasurement({
  stateDim: 6, positionIndices: [0, 1, 2], origin: YARD, withHeight: true, horizontalSigmaM: 2.5, verticalSigmaM: 4,
});
/** State [east, north, vEast, vNorth] on the tangent plane, latitude/longitude fixes. */
const with2d = (): GeodeticMeasurement => new GeodeticMeasurement({
  stateDim: 4, positionIndices: [0, 1], origin: YARD, horizontalSigmaM: 2.5,
});
const dDeg = fc.double({ min: -0.2, max: 0.2, noNaN: true }); // about ±22 km
const heightM = fc.double({ min: -50, max: 500, noNaN: true });
const enuM = fc.double({ min: -20_000, max: 20_000, noNaN: true });

function innovationOf(m: GeodeticMeasurement, report: readonly number[], x: Float64Array): Float64Array {
  const y = Float64Array.from(report);
  m.normalizeInPlace(y);
  const yhat = new Float64Array(m.dim);
  const nu = new Float64Array(m.dim);
  m.measureInto(x, yhat);
  m.innovationInto(y, yhat, nu);
  return nu;
}

describe('GeodeticMeasurement', () => {
  it('gives zero innovation (1e-9 m) for a state at the fix’s ENU position', () => {
    const m = with3d();
    const enu = new Float64Array(3);
    fc.assert(
      fc.property(dDeg, dDeg, heightM, (dLat, dLon, h) => {
        const fix = [YARD.latDeg + dLat, YARD.lonDeg + dLon, h];
        m.frame.geodeticToEnuInto(fix[0]!, fix[1]!, h, enu);
        const nu = innovationOf(m, fix, Float64Array.of(enu[0]!, enu[1]!, enu[2]!, 0, 0, 0));
        expectCloseToMatrix(nu, [0, 0, 0], 1e-9);
      }),
      { numRuns: 300 },
    );
  });

  it('gives zero innovation (1e-9 m) for a tangent-plane state at a latitude/longitude fix', () => {
    const m = with2d();
    const geo = new Float64Array(3);
    fc.assert(
      fc.property(enuM, enuM, (e, n) => {
        m.frame.enuToGeodeticInto(e, n, 0, geo);
        expectCloseToMatrix(innovationOf(m, [geo[0]!, geo[1]!], Float64Array.of(e, n, 1, 1)), [0, 0], 1e-9);
      }),
      { numRuns: 300 },
    );
  });

  it('scales latitude/longitude so one metre north or east near the origin is one scaled metre', () => {
    const m = with3d();
    const yhat = new Float64Array(3);
    m.measureInto(Float64Array.of(1, 0, 0, 0, 0, 0), yhat);
    expectCloseToMatrix(yhat, [0, 1, YARD.hM], 1e-6);
    m.measureInto(Float64Array.of(0, 1, 0, 0, 0, 0), yhat);
    expectCloseToMatrix(yhat, [1, 0, YARD.hM], 1e-6);
  });

  it('has the axis-swapping identity as its Jacobian at the origin', () => {
    expectCloseToMatrix(analyticJacobian(with3d(), new Float64Array(6)), [
      0, 1, 0, 0, 0, 0,
      1, 0, 0, 0, 0, 0,
      0, 0, 1, 0, 0, 0,
    ], 1e-12);
  });

  for (const [label, make, dims] of [
    ['with height', with3d, 3],
    ['on the tangent plane', with2d, 2],
    ['without height on a 3-D state', () => new GeodeticMeasurement({ stateDim: 6, positionIndices: [0, 1, 2], origin: YARD, horizontalSigmaM: 1 }), 3],
  ] as const) {
    it(`has a Jacobian equal to central differences at random positions (${label})`, () => {
      const m = make();
      fc.assert(
        fc.property(enuM, enuM, fc.double({ min: -100, max: 400, noNaN: true }), (e, n, u) => {
          const x = new Float64Array(m.stateDim);
          x[0] = e; x[1] = n;
          if (dims === 3) x[2] = u;
          expectCloseToMatrix(analyticJacobian(m, x), centralDifferenceJacobian(m, x, 0.5), 1e-8);
        }),
        { numRuns: 100 },
      );
    });
  }

  it('wraps the longitude innovation across the antimeridian', () => {
    const m = new GeodeticMeasurement({ stateDim: 4, positionIndices: [0, 1], origin: { latDeg: -16.5, lonDeg: 179.9995, hM: 0 }, horizontalSigmaM: 3 });
    const geo = new Float64Array(3);
    m.frame.enuToGeodeticInto(120, -30, 0, geo);
    expect(geo[1]!).toBeLessThan(-179.99); // the fix is reported west of the antimeridian
    expectCloseToMatrix(innovationOf(m, [geo[0]!, geo[1]!], Float64Array.of(120, -30, 0, 0)), [0, 0], 1e-9);
    const nu = new Float64Array(2);
    const turn = 2 * Math.PI * m.longitudeScaleM;
    m.innovationInto(Float64Array.of(0, turn / 2 - 1), Float64Array.of(0, -turn / 2 + 1), nu);
    expect(Math.abs(nu[1]! - -2)).toBeLessThan(1e-6);
  });

  it('converts a horizontal accuracy to R by the radius ratios at the fix (checked on ENU distances)', () => {
    const m = with3d();
    const fix = Float64Array.of(YARD.latDeg + 0.4, YARD.lonDeg - 0.3, 90);
    const y = Float64Array.from(fix);
    m.normalizeInPlace(y);
    const R = new Float64Array(9);
    expect(m.horizontalAccuracyToCovarianceInto(2, y, R)).toBe(true);
    // Scaled metres per ground metre, measured along the ellipsoid with the ENU frame (δ = 1e-6°).
    const a = new Float64Array(3);
    const b = new Float64Array(3);
    const step = 1e-6;
    m.frame.geodeticToEnuInto(fix[0]!, fix[1]!, 90, a);
    m.frame.geodeticToEnuInto(fix[0]! + step, fix[1]!, 90, b);
    const northRatio = (step * DEG * m.latitudeScaleM) / Math.hypot(b[0]! - a[0]!, b[1]! - a[1]!, b[2]! - a[2]!);
    m.frame.geodeticToEnuInto(fix[0]!, fix[1]! + step, 90, b);
    const eastRatio = (step * DEG * m.longitudeScaleM) / Math.hypot(b[0]! - a[0]!, b[1]! - a[1]!, b[2]! - a[2]!);
    expectCloseToMatrix(R, [4 * northRatio ** 2, 0, 0, 0, 4 * eastRatio ** 2, 0, 0, 0, 16], 1e-7);
  });

  it('uses the given vertical sigma when one is reported', () => {
    const m = with3d();
    const R = new Float64Array(9);
    m.horizontalAccuracyToCovarianceInto(1, Float64Array.of(0, 0, YARD.hM), R, 3);
    expectCloseToMatrix(R, [1, 0, 0, 0, 1, 0, 0, 0, 9], 1e-12);
  });

  it('refuses a non-positive or non-finite accuracy and leaves R untouched', () => {
    const m = with2d();
    const R = Float64Array.of(5, 0, 0, 5);
    expect(m.horizontalAccuracyToCovarianceInto(0, new Float64Array(2), R)).toBe(false);
    expect(m.horizontalAccuracyToCovarianceInto(Number.NaN, new Float64Array(2), R)).toBe(false);
    expectCloseToMatrix(R, [5, 0, 0, 5], 0);
  });

  describe('initializeInPlace', () => {
    /** H restricted to the position columns (k×k) at x. */
    function positionBlock(m: GeodeticMeasurement, x: Float64Array, cols: readonly number[]): Float64Array {
      const H = analyticJacobian(m, x);
      const k = cols.length;
      const out = new Float64Array(k * k);
      for (let r = 0; r < k; r++) for (let c = 0; c < k; c++) out[r * k + c] = H[r * m.stateDim + cols[c]!]!;
      return out;
    }
    /** B P Bᵀ for a k×k block B and the k×k sub-block of P at `cols`. */
    function project(B: Float64Array, P: Float64Array, n: number, cols: readonly number[]): Float64Array {
      const k = cols.length;
      const out = new Float64Array(k * k);
      for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) {
        let s = 0;
        for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) s += B[i * k + a]! * P[cols[a]! * n + cols[b]!]! * B[j * k + b]!;
        out[i * k + j] = s;
      }
      return out;
    }

    it('places a 3-D state exactly at the fix and maps R back to metres (H P Hᵀ = R)', () => {
      const m = with3d();
      const fix = Float64Array.of(YARD.latDeg + 0.12, YARD.lonDeg - 0.08, 130);
      const enu = new Float64Array(3);
      m.frame.geodeticToEnuInto(fix[0]!, fix[1]!, fix[2]!, enu);
      const y = Float64Array.from(fix);
      m.normalizeInPlace(y);
      const R = Float64Array.of(4, 0.5, 0, 0.5, 9, 0, 0, 0, 16);
      const x = Float64Array.of(0, 0, 0, 1.5, -2, 0.1);
      const P = new Float64Array(36).fill(0.2);
      expect(m.initializeInPlace(y, R, x, P)).toBe(true);
      expectCloseToMatrix(x, [enu[0]!, enu[1]!, enu[2]!, 1.5, -2, 0.1], 1e-9);
      expectCloseToMatrix(project(positionBlock(m, x, [0, 1, 2]), P, 6, [0, 1, 2]), R, 1e-9);
      for (let i = 0; i < 3; i++) for (let j = 3; j < 6; j++) {
        expect(P[i * 6 + j]).toBe(0);
        expect(P[j * 6 + i]).toBe(0);
      }
      expect(P[3 * 6 + 4]).toBe(0.2); // velocity block untouched
    });

    it('places a tangent-plane state so that measuring it returns the fix', () => {
      const m = with2d();
      const fix = [YARD.latDeg - 0.05, YARD.lonDeg + 0.1];
      const y = Float64Array.from(fix);
      m.normalizeInPlace(y);
      const x = Float64Array.of(0, 0, 3, 4);
      const P = new Float64Array(16).fill(1);
      expect(m.initializeInPlace(y, m.R, x, P)).toBe(true);
      expectCloseToMatrix(innovationOf(m, fix, x), [0, 0], 1e-9);
      expectCloseToMatrix(project(positionBlock(m, x, [0, 1]), P, 4, [0, 1]), m.R, 1e-9);
      expectCloseToMatrix(x.subarray(2), [3, 4], 0);
    });

    it('keeps the prior up and its variance on a 3-D state when the fix has no height', () => {
      const m = new GeodeticMeasurement({ stateDim: 6, positionIndices: [0, 1, 2], origin: YARD, horizontalSigmaM: 2 });
      const fix = [YARD.latDeg + 0.15, YARD.lonDeg + 0.15];
      const y = Float64Array.from(fix);
      m.normalizeInPlace(y);
      const x = Float64Array.of(0, 0, 35, 0, 0, 0);
      const P = new Float64Array(36);
      P[2 * 6 + 2] = 25;
      expect(m.initializeInPlace(y, m.R, x, P)).toBe(true);
      expect(Math.abs(x[2]! - 35)).toBeLessThan(1e-9);
      expect(P[2 * 6 + 2]).toBe(25);
      expectCloseToMatrix(innovationOf(m, fix, x), [0, 0], 1e-9);
    });

    it('refuses a non-finite fix and leaves the state alone', () => {
      const m = with3d();
      const x = Float64Array.of(1, 2, 3, 4, 5, 6);
      expect(m.initializeInPlace(Float64Array.of(Number.NaN, 0, 0), m.R, x, new Float64Array(36))).toBe(false);
      expectCloseToMatrix(x, [1, 2, 3, 4, 5, 6], 0);
    });
  });

  it('pulls an EKF estimate onto a precise fix through kalmanUpdateInPlace', () => {
    const m = with2d();
    const fix = new Float64Array(3);
    m.frame.enuToGeodeticInto(850, -420, 0, fix);
    const y = Float64Array.of(fix[0]!, fix[1]!);
    m.normalizeInPlace(y);
    const x = Float64Array.of(800, -400, 0, 0);
    const P = new Float64Array(16);
    for (let i = 0; i < 4; i++) P[i * 5] = 1e4;
    const R = Float64Array.of(1e-4, 0, 0, 1e-4);
    expect(kalmanUpdateInPlace(m, y, R, Infinity, x, P, new FilterWorkspace(4, 3))).toBe('applied');
    expectCloseToMatrix(x.subarray(0, 2), [850, -420], 1e-3);
  });

  describe('validation', () => {
    const base = { stateDim: 6, positionIndices: [0, 1, 2], origin: YARD, horizontalSigmaM: 2 } as const;

    it('rejects withHeight on a horizontal state', () => {
      expect(() => new GeodeticMeasurement({ ...base, positionIndices: [0, 1], withHeight: true, verticalSigmaM: 3 }))
        .toThrow('positionIndices must have 3 entries (east, north, up) when withHeight is true, got 2');
    });

    it('rejects withHeight without a vertical sigma', () => {
      expect(() => new GeodeticMeasurement({ ...base, withHeight: true }))
        .toThrow('verticalSigmaM must be a positive finite number when withHeight is true, got undefined');
    });

    it('rejects a vertical sigma that would be ignored', () => {
      expect(() => new GeodeticMeasurement({ ...base, verticalSigmaM: 3 }))
        .toThrow('verticalSigmaM must be omitted when withHeight is false, got 3');
    });

    it('rejects an origin at a pole, where longitude has no scale', () => {
      expect(() => new GeodeticMeasurement({ ...base, origin: { latDeg: 90, lonDeg: 0, hM: 0 } }))
        .toThrow('origin.latDeg must be strictly inside (−90, 90) for a longitude scale, got 90');
    });

    it('rejects an origin latitude outside [−90, 90]', () => {
      expect(() => new GeodeticMeasurement({ ...base, origin: { latDeg: -123, lonDeg: 0, hM: 0 } }))
        .toThrow('origin.latDeg must be a latitude in [−90, 90] degrees, got -123');
    });

    it('rejects a position list of the wrong length', () => {
      expect(() => new GeodeticMeasurement({ ...base, positionIndices: [0] }))
        .toThrow('positionIndices must have 2 or 3 entries, got 1 entries');
    });

    it('rejects a repeated position index', () => {
      expect(() => new GeodeticMeasurement({ ...base, positionIndices: [0, 1, 0] }))
        .toThrow('positionIndices[2] must differ from the other indices, got 0 twice');
    });

    it('rejects a non-positive horizontal sigma', () => {
      expect(() => new GeodeticMeasurement({ ...base, horizontalSigmaM: -1 }))
        .toThrow('horizontalSigmaM must be a positive finite number, got -1');
    });
  });
});
