import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ecefToGeodeticInto, geodeticToEcefInto } from '../../../src/estimation/measurements/wgs84.js';

const DEG = Math.PI / 180;

describe('ecefToGeodeticInto', () => {
  it('inverts geodeticToEcefInto from 1 km below the ellipsoid to 1000 km above it', () => {
    const ecef = new Float64Array(3);
    const geo = new Float64Array(3);
    const back = new Float64Array(3);
    fc.assert(
      fc.property(
        fc.double({ min: -90, max: 90, noNaN: true }),
        fc.double({ min: -179.999, max: 180, noNaN: true }),
        fc.double({ min: -1000, max: 1e6, noNaN: true }),
        (latDeg, lonDeg, hM) => {
          geodeticToEcefInto(latDeg * DEG, lonDeg * DEG, hM, ecef);
          ecefToGeodeticInto(ecef[0]!, ecef[1]!, ecef[2]!, geo);
          // Compare positions, not angles: the longitude is arbitrary at a pole.
          geodeticToEcefInto(geo[0]!, geo[1]!, geo[2]!, back);
          const dist = Math.hypot(back[0]! - ecef[0]!, back[1]! - ecef[1]!, back[2]! - ecef[2]!);
          expect(dist).toBeLessThan(1e-8);
          expect(Math.abs(geo[0]! - latDeg * DEG)).toBeLessThan(2e-15);
          expect(Math.abs(geo[2]! - hM)).toBeLessThan(1e-8);
        },
      ),
      { numRuns: 500 },
    );
  });

  it('returns +π, never −π, on the antimeridian (also for a signed zero y)', () => {
    const geo = new Float64Array(3);
    ecefToGeodeticInto(-6378137, -0, 0, geo);
    expect(geo[1]).toBe(Math.PI);
  });

  it('returns a longitude just above −π for a point 1 m east of the antimeridian', () => {
    const geo = new Float64Array(3);
    ecefToGeodeticInto(-6378137, -1, 0, geo);
    expect(Math.abs(geo[1]! - (-Math.PI + 1 / 6378137))).toBeLessThan(1e-12);
  });
});
