import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import {
  WGS84_A_M,
  createLocalFrame,
  ecefToGeodetic,
  geodeticToEcef,
  YARD_ORIGIN,
} from '../../src/simulation/yard-geodesy.js';

// Reference values in this file: /work/shared/REFERENCE-CHECKS.md C14, from NIMA TR8350.2
// (WGS-84 constants, 3rd ed. 2000) and IOGP Publication 373-7-2 (EPSG Guidance Note 7-2),
// methods 9602 and 9837; recomputed there by two independent computations.

function expectWithin(actual: number, expected: number, tolerance: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(tolerance);
}

describe('geodeticToEcef', () => {
  it('puts the equator/prime meridian point at (a, 0, 0) and the pole at (0, 0, b)', () => {
    const onEquator = geodeticToEcef({ latDeg: 0, lonDeg: 0, heightM: 0 });
    expectWithin(onEquator.xM, WGS84_A_M, 1e-6);
    expectWithin(onEquator.yM, 0, 1e-6);
    const pole = geodeticToEcef({ latDeg: 90, lonDeg: 0, heightM: 0 });
    expectWithin(pole.xM, 0, 1e-6);
    // b = a(1 − f) = 6356752.314245 m (C14, derived constants).
    expectWithin(pole.zM, 6356752.314245, 1e-6);
  });

  it('matches the C14 ECEF value at (−33.8688°, 151.2093°, 58 m)', () => {
    const p = geodeticToEcef({ latDeg: -33.8688, lonDeg: 151.2093, heightM: 58 });
    expectWithin(p.xM, -4646093.477288, 1e-6);
    expectWithin(p.yM, 2553229.535817, 1e-6);
    expectWithin(p.zM, -3534404.710910, 1e-6);
  });
});

describe('ecefToGeodetic', () => {
  it('inverts the EPSG 9602 example to 1e-8° and 1 mm', () => {
    // EPSG 9602 example: 53°48′33.820″N, 2°07′46.380″E, h = 73.0 m; XYZ rounded to mm.
    const back = ecefToGeodetic({ xM: 3771793.968, yM: 140253.342, zM: 5124304.349 });
    expectWithin(back.latDeg, 53 + 48 / 60 + 33.82 / 3600, 1e-8);
    expectWithin(back.lonDeg, 2 + 7 / 60 + 46.38 / 3600, 1e-8);
    expectWithin(back.heightM, 73.0, 1e-3);
  });

  it('returns the pole without dividing by zero', () => {
    const pole = ecefToGeodetic({ xM: 0, yM: 0, zM: 6356752.314245 + 10 });
    expectWithin(pole.latDeg, 90, 1e-12);
    expectWithin(pole.heightM, 10, 1e-6);
  });
});

describe('createLocalFrame', () => {
  const frame = createLocalFrame({ latDeg: 45, lonDeg: 7, heightM: 300 });

  it('matches the C14 small-offset values at origin 45°N, 7°E, 300 m', () => {
    const cases: Array<[[number, number, number], [number, number, number]]> = [
      [[45.001, 7, 300], [0, 111.137023168, -0.000969853]],
      [[45, 7.001, 300], [78.850537492, 0.000486561, -0.000486561]],
      [[45, 7, 310], [0, 0, 10]],
      [[45.01, 7.01, 250], [788.362031295, 1111.411026067, -50.145631917]],
    ];
    for (const [[latDeg, lonDeg, heightM], [e, n, u]] of cases) {
      const enu = frame.fromGeodetic({ latDeg, lonDeg, heightM });
      expectWithin(enu.eastM, e, 2e-9);
      expectWithin(enu.northM, n, 2e-9);
      expectWithin(enu.upM, u, 2e-9);
    }
  });

  it('matches the EPSG 9837 example at origin 55°N, 5°E, 200 m', () => {
    const epsg = createLocalFrame({ latDeg: 55, lonDeg: 5, heightM: 200 });
    const enu = epsg.fromGeodetic({
      latDeg: 53 + 48 / 60 + 33.82 / 3600,
      lonDeg: 2 + 7 / 60 + 46.38 / 3600,
      heightM: 73,
    });
    expectWithin(enu.eastM, -189013.869151, 1e-6);
    expectWithin(enu.northM, -128642.039806, 1e-6);
    expectWithin(enu.upM, -4220.170758, 1e-6);
  });

  it('maps the small C14 offsets back to the same geodetic point', () => {
    const p = frame.toGeodetic(788.362031295, 1111.411026067, -50.145631917);
    expectWithin(p.latDeg, 45.01, 1e-11);
    expectWithin(p.lonDeg, 7.01, 1e-11);
    expectWithin(p.heightM, 250, 1e-6);
  });

  it('round-trips ENU → geodetic → ENU to 1e-6 m across and around the yard', () => {
    const yard = createLocalFrame(YARD_ORIGIN);
    const metres = fc.double({ min: -5000, max: 5000, noNaN: true });
    fc.assert(
      fc.property(metres, metres, fc.double({ min: -100, max: 100, noNaN: true }), (e, n, u) => {
        const back = yard.fromGeodetic(yard.toGeodetic(e, n, u));
        return (
          Math.abs(back.eastM - e) < 1e-6 &&
          Math.abs(back.northM - n) < 1e-6 &&
          Math.abs(back.upM - u) < 1e-6
        );
      }),
      { numRuns: 500 },
    );
  });

  it('returns the origin for a zero offset', () => {
    const p = createLocalFrame(YARD_ORIGIN).toGeodetic(0, 0, 0);
    expectWithin(p.latDeg, 51.95, 1e-12);
    expectWithin(p.lonDeg, 4.05, 1e-12);
    expectWithin(p.heightM, 0, 1e-6);
  });
});
