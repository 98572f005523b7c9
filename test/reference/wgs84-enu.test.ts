/**
 * Published WGS-84 checks (REFERENCE-CHECKS.md, C14). Sources named beside each check:
 * [TR8350] NIMA TR8350.2, "Department of Defense World Geodetic System 1984", 3rd ed. (2000),
 *          Table 3.1 (defining) and Table 3.3 (derived constants); table numbers from memory.
 * [GN7-2]  IOGP Publication 373-7-2 (EPSG Guidance Note 7-2), "Coordinate Conversions and
 *          Transformations including Formulas", methods 9602, 9836, 9837.
 */
import { describe, expect, it } from 'vitest';
import { LocalTangentFrame } from '../../src/estimation/measurements/local-tangent-frame.js';
import {
  WGS84_ECCENTRICITY_SQUARED, WGS84_SECOND_ECCENTRICITY_SQUARED, WGS84_SEMI_MAJOR_AXIS_M, WGS84_SEMI_MINOR_AXIS_M,
  ecefToGeodeticInto, geodeticToEcefInto, meridianRadiusM, primeVerticalRadiusM,
} from '../../src/estimation/measurements/wgs84.js';
import { expectCloseToMatrix } from '../estimation/models/close-to-matrix.js';

const DEG = Math.PI / 180;
const dms = (d: number, m: number, s: number): number => d + m / 60 + s / 3600;
// GN7-2 method 9602 example point: 53°48′33.820″N, 2°07′46.380″E, h = 73.0 m.
const LAT_9602 = dms(53, 48, 33.82);
const LON_9602 = dms(2, 7, 46.38);

describe('WGS-84 constants', () => {
  it('derives b, e² and e′² from a and 1/f', () => {
    // [TR8350] Table 3.3 (from memory): b = 6356752.314245 m, e² = 6.69437999014e-3, e′² = 6.73949674228e-3.
    expect(Math.abs(WGS84_SEMI_MINOR_AXIS_M - 6356752.314245)).toBeLessThan(1e-6);
    expect(Math.abs(WGS84_ECCENTRICITY_SQUARED - 6.69437999014e-3)).toBeLessThan(1e-14);
    expect(Math.abs(WGS84_SECOND_ECCENTRICITY_SQUARED - 6.73949674228e-3)).toBeLessThan(1e-14);
  });

  it('gives the meridian and prime-vertical radii at 45°', () => {
    // [TR8350] formulas; values C14: M = 6367381.815620 m, N = 6388838.290121 m.
    expect(Math.abs(meridianRadiusM(45 * DEG) - 6367381.81562)).toBeLessThan(1e-6);
    expect(Math.abs(primeVerticalRadiusM(45 * DEG) - 6388838.290121)).toBeLessThan(1e-6);
  });
});

describe('geodeticToEcefInto', () => {
  const out = new Float64Array(3);

  it('puts (0°, 0°, 0) at (a, 0, 0)', () => {
    geodeticToEcefInto(0, 0, 0, out); // [TR8350] a
    expectCloseToMatrix(out, [WGS84_SEMI_MAJOR_AXIS_M, 0, 0], 1e-6);
  });

  it('puts (0°, 90°E, 0) at (0, a, 0)', () => {
    geodeticToEcefInto(0, 90 * DEG, 0, out); // [TR8350] a
    expectCloseToMatrix(out, [0, WGS84_SEMI_MAJOR_AXIS_M, 0], 1e-6);
  });

  it('puts the north pole at (0, 0, b) for any longitude', () => {
    for (const lon of [0, 37, -120]) {
      geodeticToEcefInto(90 * DEG, lon * DEG, 0, out); // [TR8350] b
      expectCloseToMatrix(out, [0, 0, 6356752.314245], 1e-6);
    }
  });

  it('converts (−33.8688°, 151.2093°, 58 m) in the southern and eastern hemispheres', () => {
    geodeticToEcefInto(-33.8688 * DEG, 151.2093 * DEG, 58, out); // C14, [GN7-2] method 9602 formulas
    expectCloseToMatrix(out, [-4646093.477288, 2553229.535817, -3534404.71091], 1e-6);
  });

  it('reproduces the EPSG 9602 example', () => {
    geodeticToEcefInto(LAT_9602 * DEG, LON_9602 * DEG, 73, out);
    // [GN7-2] method 9602 example (mm values from memory; unrounded 3771793.967642, 140253.341900, 5124304.349351).
    expectCloseToMatrix(out, [3771793.968, 140253.342, 5124304.349], 5e-4);
  });
});

describe('ecefToGeodeticInto', () => {
  it('reverses the EPSG 9602 example to 1e-8° and 1 mm', () => {
    const out = new Float64Array(3);
    ecefToGeodeticInto(3771793.968, 140253.342, 5124304.349, out); // [GN7-2] method 9602 reverse (from memory)
    expect(Math.abs(out[0]! / DEG - LAT_9602)).toBeLessThan(1e-8);
    expect(Math.abs(out[1]! / DEG - LON_9602)).toBeLessThan(1e-8);
    expect(Math.abs(out[2]! - 73)).toBeLessThan(1e-3);
  });

  it('returns the pole and its height from a point on the axis', () => {
    const out = new Float64Array(3);
    ecefToGeodeticInto(0, 0, -(WGS84_SEMI_MINOR_AXIS_M + 1200), out);
    expect(Math.abs(out[0]! + Math.PI / 2)).toBeLessThan(1e-15);
    expect(Math.abs(out[2]! - 1200)).toBeLessThan(1e-8);
  });
});

describe('LocalTangentFrame (EPSG 9836 / 9837)', () => {
  const frame55 = new LocalTangentFrame({ latDeg: 55, lonDeg: 5, hM: 200 });
  const out = new Float64Array(3);

  it('places the 55°N 5°E 200 m origin at the EPSG 9836 geocentric coordinates', () => {
    // [GN7-2] method 9836 example: X0 = 3652755.3058, Y0 = 319574.6799, Z0 = 5201547.3536.
    expectCloseToMatrix(frame55.originEcefM, [3652755.3058, 319574.6799, 5201547.3536], 5e-5);
  });

  it('reproduces the EPSG 9836 geocentric → topocentric example', () => {
    frame55.ecefToEnuInto(3771793.968, 140253.342, 5124304.349, out);
    // [GN7-2] method 9836 example: U = −189013.869, V = −128642.040, W = −4220.171.
    expectCloseToMatrix(out, [-189013.869, -128642.04, -4220.171], 5e-4);
  });

  it('reproduces the EPSG 9837 geographic → topocentric example', () => {
    frame55.geodeticToEnuInto(LAT_9602, LON_9602, 73, out);
    // [GN7-2] method 9837 example (values from memory, tied to the confirmed 9836 point).
    expectCloseToMatrix(out, [-189013.869151, -128642.039806, -4220.170758], 1e-6);
  });

  it('round-trips the EPSG 9836 point through enuToEcefInto', () => {
    frame55.ecefToEnuInto(3771793.968, 140253.342, 5124304.349, out);
    const back = new Float64Array(3);
    frame55.enuToEcefInto(out[0]!, out[1]!, out[2]!, back);
    expectCloseToMatrix(back, [3771793.968, 140253.342, 5124304.349], 1e-8);
  });

  describe('small offsets about 45°N, 7°E, 300 m (C14, computed with the [GN7-2] 9837 formulas)', () => {
    const frame = new LocalTangentFrame({ latDeg: 45, lonDeg: 7, hM: 300 });
    const cases: ReadonlyArray<readonly [string, number, number, number, readonly number[]]> = [
      ['0.001° north', 45.001, 7, 300, [0, 111.137023168, -0.000969853]],
      ['0.001° east', 45, 7.001, 300, [78.850537492, 0.000486561, -0.000486561]],
      ['10 m up', 45, 7, 310, [0, 0, 10]],
      ['0.01° north-east and 50 m down', 45.01, 7.01, 250, [788.362031295, 1111.411026067, -50.145631917]],
    ];
    for (const [label, lat, lon, h, enu] of cases) {
      it(`gives the ENU of a point ${label} to 2e-9 m`, () => {
        frame.geodeticToEnuInto(lat, lon, h, out);
        expectCloseToMatrix(out, enu, 2e-9);
      });
    }

    it('gives the origin radii of curvature at 45°', () => {
      // C14 radii at 45° (h-independent): M = 6367381.815620 m, N = 6388838.290121 m.
      expect(Math.abs(frame.meridianRadiusM - 6367381.81562)).toBeLessThan(1e-6);
      expect(Math.abs(frame.primeVerticalRadiusM - 6388838.290121)).toBeLessThan(1e-6);
    });
  });
});
