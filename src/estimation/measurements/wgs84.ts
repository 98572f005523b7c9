/**
 * The WGS-84 ellipsoid and the geodetic ↔ ECEF conversions on it. Angles are radians here; the
 * degree-facing edge is LocalTangentFrame.
 *
 * Constants: NIMA TR8350.2, "Department of Defense World Geodetic System 1984", 3rd ed. (2000),
 * defining parameters a and 1/f; b, e², e′² derived from them. Forward conversion: IOGP
 * Publication 373-7-2 (EPSG Guidance Note 7-2), method 9602.
 */

/** Semi-major axis a in metres (defining constant). */
export const WGS84_SEMI_MAJOR_AXIS_M = 6378137;
/** Inverse flattening 1/f (defining constant). */
export const WGS84_INVERSE_FLATTENING = 298.257223563;
/** Flattening f = 1/298.257223563. */
export const WGS84_FLATTENING = 1 / WGS84_INVERSE_FLATTENING;
/** Semi-minor axis b = a(1 − f) ≈ 6356752.314245 m. */
export const WGS84_SEMI_MINOR_AXIS_M = WGS84_SEMI_MAJOR_AXIS_M * (1 - WGS84_FLATTENING);
/** First eccentricity squared e² = f(2 − f) ≈ 6.69437999014e-3. */
export const WGS84_ECCENTRICITY_SQUARED = WGS84_FLATTENING * (2 - WGS84_FLATTENING);
/** Second eccentricity squared e′² = e²/(1 − e²) ≈ 6.73949674228e-3. */
export const WGS84_SECOND_ECCENTRICITY_SQUARED =
  WGS84_ECCENTRICITY_SQUARED / (1 - WGS84_ECCENTRICITY_SQUARED);

const A = WGS84_SEMI_MAJOR_AXIS_M;
const B = WGS84_SEMI_MINOR_AXIS_M;
const E2 = WGS84_ECCENTRICITY_SQUARED;
const EP2 = WGS84_SECOND_ECCENTRICITY_SQUARED;
const ONE_MINUS_F = 1 - WGS84_FLATTENING;

/** Iterations stop once the latitude moves less than this (radians; about 6e-9 mm on the ground). */
const LATITUDE_STEP_TOLERANCE_RAD = 1e-15;
/** Bowring's iteration gains several digits per step near the surface; this cap is never reached there. */
const MAX_ITERATIONS = 8;

/** Prime-vertical radius of curvature N(φ) = a/√(1 − e² sin²φ), in metres. */
export function primeVerticalRadiusM(latRad: number): number {
  const s = Math.sin(latRad);
  return A / Math.sqrt(1 - E2 * s * s);
}

/** Meridian radius of curvature M(φ) = a(1 − e²)/(1 − e² sin²φ)^1.5, in metres. */
export function meridianRadiusM(latRad: number): number {
  const s = Math.sin(latRad);
  const w2 = 1 - E2 * s * s;
  return (A * (1 - E2)) / (w2 * Math.sqrt(w2));
}

/**
 * Geodetic (latitude, longitude in radians, ellipsoidal height in metres) to ECEF metres, into
 * out[0..2] = X, Y, Z (EPSG method 9602, forward).
 */
export function geodeticToEcefInto(latRad: number, lonRad: number, hM: number, out: Float64Array): void {
  const sinLat = Math.sin(latRad);
  const cosLat = Math.cos(latRad);
  const n = A / Math.sqrt(1 - E2 * sinLat * sinLat);
  out[0] = (n + hM) * cosLat * Math.cos(lonRad);
  out[1] = (n + hM) * cosLat * Math.sin(lonRad);
  out[2] = (n * (1 - E2) + hM) * sinLat;
}

/**
 * ECEF metres to geodetic, into out[0..2] = latitude (rad), longitude (rad, (−π, π]), height (m).
 *
 * Latitude by Bowring's formula tan φ = (Z + e′² b sin³β)/(p − e² a cos³β), iterated on the
 * parametric latitude tan β = (1 − f) tan φ until the step is below 1e-15 rad (B. R. Bowring,
 * "Transformation from spatial to geographical coordinates", Survey Review 23(181), 1976).
 * Height by h = p cos φ + Z sin φ − a√(1 − e² sin²φ), which stays well conditioned at every
 * latitude, the poles included (no division by cos φ). Valid for any point more than about
 * 50 km from the Earth's centre (closer in, p − e² a cos³β can change sign).
 */
export function ecefToGeodeticInto(x: number, y: number, z: number, out: Float64Array): void {
  const p = Math.hypot(x, y);
  let beta = Math.atan2(z, ONE_MINUS_F * p);
  let lat = beta;
  for (let i = 0; i < MAX_ITERATIONS; i++) {
    const sb = Math.sin(beta);
    const cb = Math.cos(beta);
    const next = Math.atan2(z + EP2 * B * sb * sb * sb, p - E2 * A * cb * cb * cb);
    const step = Math.abs(next - lat);
    lat = next;
    if (step < LATITUDE_STEP_TOLERANCE_RAD) break;
    beta = Math.atan2(ONE_MINUS_F * Math.sin(lat), Math.cos(lat));
  }
  const sinLat = Math.sin(lat);
  out[0] = lat;
  const lon = Math.atan2(y, x);
  // atan2(−0, x < 0) is −π; the convention here is (−π, π].
  out[1] = lon === -Math.PI ? Math.PI : lon;
  out[2] = p * Math.cos(lat) + z * sinLat - A * Math.sqrt(1 - E2 * sinLat * sinLat);
}
