import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { LocalTangentFrame } from '../../../src/estimation/measurements/local-tangent-frame.js';
import { geodeticToEcefInto } from '../../../src/estimation/measurements/wgs84.js';
import { ModelConfigError } from '../../../src/estimation/model-config-error.js';
import { expectCloseToMatrix } from '../models/close-to-matrix.js';

const DEG = Math.PI / 180;
// Tank farm origin (invented): tank-a's datum point.
const TANK_FARM = { latDeg: 47.3812, lonDeg: 8.5401, hM: 412 };
const offset = fc.double({ min: -0.5, max: 0.5, noNaN: true }); // degrees, ±55 km
const height = fc.double({ min: -200, max: 3000, noNaN: true });

describe('LocalTangentFrame', () => {
  const frame = new LocalTangentFrame(TANK_FARM);

  it('agrees with the plain ECEF route (R0·(X − X0)) to 1e-8 m within 55 km', () => {
    const viaEcef = new Float64Array(3);
    const direct = new Float64Array(3);
    const ecef = new Float64Array(3);
    fc.assert(
      fc.property(offset, offset, height, (dLat, dLon, h) => {
        const lat = TANK_FARM.latDeg + dLat;
        const lon = TANK_FARM.lonDeg + dLon;
        geodeticToEcefInto(lat * DEG, lon * DEG, h, ecef);
        frame.ecefToEnuInto(ecef[0]!, ecef[1]!, ecef[2]!, viaEcef);
        frame.geodeticToEnuInto(lat, lon, h, direct);
        expectCloseToMatrix(direct, viaEcef, 1e-8);
      }),
      { numRuns: 300 },
    );
  });

  it('inverts geodeticToEnuInto with enuToGeodeticInto to 1e-12° and 1e-9 m', () => {
    const enu = new Float64Array(3);
    const geo = new Float64Array(3);
    fc.assert(
      fc.property(offset, offset, height, (dLat, dLon, h) => {
        const lat = TANK_FARM.latDeg + dLat;
        const lon = TANK_FARM.lonDeg + dLon;
        frame.geodeticToEnuInto(lat, lon, h, enu);
        frame.enuToGeodeticInto(enu[0]!, enu[1]!, enu[2]!, geo);
        expect(Math.abs(geo[0]! - lat)).toBeLessThan(1e-12);
        expect(Math.abs(geo[1]! - lon)).toBeLessThan(1e-12);
        expect(Math.abs(geo[2]! - h)).toBeLessThan(1e-9);
      }),
      { numRuns: 300 },
    );
  });

  it('round-trips a point 1 mm from the origin to 1e-13 m (no 6e6 m intermediates)', () => {
    const enu = new Float64Array(3);
    const off = new Float64Array(3);
    frame.enuToGeodeticOffsetInto(1e-3, -2e-3, 5e-4, off);
    frame.geodeticOffsetToEnuInto(off[0]!, off[1]!, off[2]!, enu);
    expectCloseToMatrix(enu, [1e-3, -2e-3, 5e-4], 1e-13);
  });

  it('has a geodetic-offset Jacobian equal to central differences of the inverse map', () => {
    const J = new Float64Array(9);
    const plus = new Float64Array(3);
    const minus = new Float64Array(3);
    const at = new Float64Array(3);
    const enuRange = fc.double({ min: -40_000, max: 40_000, noNaN: true });
    fc.assert(
      fc.property(enuRange, enuRange, fc.double({ min: -100, max: 2000, noNaN: true }), (e, n, u) => {
        frame.enuToGeodeticOffsetInto(e, n, u, at);
        frame.geodeticOffsetJacobianInto(at[0]!, at[1]!, at[2]!, J);
        const step = 1;
        for (let c = 0; c < 3; c++) {
          const d = [0, 0, 0];
          d[c] = step;
          frame.enuToGeodeticOffsetInto(e + d[0]!, n + d[1]!, u + d[2]!, plus);
          frame.enuToGeodeticOffsetInto(e - d[0]!, n - d[1]!, u - d[2]!, minus);
          // Angle rows in radians (1 rad ≈ 6.4e6 m): compare at 1e-14 rad ≈ 0.06 µm per metre.
          expect(Math.abs((plus[0]! - minus[0]!) / (2 * step) - J[c]!)).toBeLessThan(1e-14);
          expect(Math.abs((plus[1]! - minus[1]!) / (2 * step) - J[3 + c]!)).toBeLessThan(1e-14);
          expect(Math.abs((plus[2]! - minus[2]!) / (2 * step) - J[6 + c]!)).toBeLessThan(1e-8);
        }
      }),
      { numRuns: 200 },
    );
  });

  it('wraps longitudes across the antimeridian', () => {
    const dateline = new LocalTangentFrame({ latDeg: -17, lonDeg: 179.999, hM: 0 });
    const enu = new Float64Array(3);
    dateline.geodeticToEnuInto(-17, -179.999, 0, enu);
    // 0.002° of longitude at 17°S is about 213 m east.
    expect(enu[0]!).toBeGreaterThan(212);
    expect(enu[0]!).toBeLessThan(214);
    const geo = new Float64Array(3);
    dateline.enuToGeodeticInto(enu[0]!, enu[1]!, enu[2]!, geo);
    expect(Math.abs(geo[1]! - -179.999)).toBeLessThan(1e-11);
  });

  it('converts a longitude across the antimeridian as exactly as the same longitude plus 360°', () => {
    const dateline = new LocalTangentFrame({ latDeg: -17, lonDeg: 179.9995, hM: 0 });
    const west = new Float64Array(3);
    const east = new Float64Array(3);
    dateline.geodeticToEnuInto(-17.0001, -179.9998, 3, west);
    dateline.geodeticToEnuInto(-17.0001, 180.0002, 3, east); // 180.0002 − 179.9995 is exact in floating point
    expectCloseToMatrix(west, east, 1e-12);
  });

  it('wraps the configured origin longitude to (−180, 180]', () => {
    expect(new LocalTangentFrame({ latDeg: 10, lonDeg: 370, hM: 0 }).lonDeg).toBeCloseTo(10, 12);
    expect(new LocalTangentFrame({ latDeg: 10, lonDeg: -180, hM: 0 }).lonDeg).toBe(180);
  });

  it('rejects a latitude outside [−90, 90] naming the field', () => {
    expect(() => new LocalTangentFrame({ latDeg: 91, lonDeg: 0, hM: 0 })).toThrow(ModelConfigError);
    expect(() => new LocalTangentFrame({ latDeg: 91, lonDeg: 0, hM: 0 })).toThrow('origin.latDeg must be a latitude in [−90, 90] degrees, got 91');
  });

  it('rejects a non-finite longitude or height naming the field', () => {
    expect(() => new LocalTangentFrame({ latDeg: 0, lonDeg: Number.NaN, hM: 0 })).toThrow('origin.lonDeg must be a finite longitude in degrees, got NaN');
    expect(() => new LocalTangentFrame({ latDeg: 0, lonDeg: 0, hM: Infinity })).toThrow('origin.hM must be a finite height in metres, got Infinity');
  });
});
