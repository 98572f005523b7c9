/**
 * Exact WGS-84 conversions for the simulator: geodetic ↔ ECEF ↔ local east/north/up.
 *
 * Self-contained on purpose: the simulator is the ground truth that the estimation core is
 * checked against, so it must not share that core's geodesy code.
 *
 * Constants: NIMA TR8350.2, "Department of Defense World Geodetic System 1984", 3rd ed. (2000),
 * defining parameters a and 1/f. Formulas: IOGP Publication 373-7-2 (EPSG Guidance Note 7-2),
 * methods 9602 (geographic/geocentric) and 9836 (geocentric/topocentric).
 */

/** WGS-84 semi-major axis a in metres. */
export const WGS84_A_M = 6378137.0;
/** WGS-84 flattening f = 1/298.257223563. */
export const WGS84_F = 1 / 298.257223563;
/** WGS-84 first eccentricity squared e² = f(2 − f). */
export const WGS84_E2 = WGS84_F * (2 - WGS84_F);

const DEG = Math.PI / 180;

/** A geodetic position: latitude and longitude in degrees, ellipsoidal height in metres. */
export interface GeodeticPosition {
  readonly latDeg: number;
  readonly lonDeg: number;
  readonly heightM: number;
}

/** Earth-centred, Earth-fixed Cartesian coordinates in metres. */
export interface EcefPosition {
  readonly xM: number;
  readonly yM: number;
  readonly zM: number;
}

/** Local tangent-plane coordinates in metres: east, north, up from a frame origin. */
export interface EnuPosition {
  readonly eastM: number;
  readonly northM: number;
  readonly upM: number;
}

/** Geodetic to ECEF (EPSG 9602 forward): X = (N + h)cosφcosλ, Y = (N + h)cosφsinλ, Z = (N(1 − e²) + h)sinφ. */
export function geodeticToEcef(position: GeodeticPosition): EcefPosition {
  const lat = position.latDeg * DEG;
  const lon = position.lonDeg * DEG;
  const sinLat = Math.sin(lat);
  const cosLat = Math.cos(lat);
  const n = WGS84_A_M / Math.sqrt(1 - WGS84_E2 * sinLat * sinLat);
  const h = position.heightM;
  return {
    xM: (n + h) * cosLat * Math.cos(lon),
    yM: (n + h) * cosLat * Math.sin(lon),
    zM: (n * (1 - WGS84_E2) + h) * sinLat,
  };
}

/**
 * ECEF to geodetic (EPSG 9602 reverse) by fixed-point iteration of tan φ = (Z + e²N sin φ)/p.
 * The start φ0 = atan(Z / (p(1 − e²))) is exact on the ellipsoid and off by about e²·h/N rad at
 * height h; each step multiplies the error by about e² ≈ 0.0067, so near the surface two steps
 * reach double precision. The loop stops when φ stops changing (at most 10 steps).
 */
export function ecefToGeodetic(position: EcefPosition): GeodeticPosition {
  const { xM, yM, zM } = position;
  const p = Math.hypot(xM, yM);
  let lat = Math.atan2(zM, p * (1 - WGS84_E2));
  for (let i = 0; i < 10; i += 1) {
    const sinLat = Math.sin(lat);
    const n = WGS84_A_M / Math.sqrt(1 - WGS84_E2 * sinLat * sinLat);
    const next = Math.atan2(zM + WGS84_E2 * n * sinLat, p);
    const done = Math.abs(next - lat) < 1e-15;
    lat = next;
    if (done) break;
  }
  const sinLat = Math.sin(lat);
  const cosLat = Math.cos(lat);
  const n = WGS84_A_M / Math.sqrt(1 - WGS84_E2 * sinLat * sinLat);
  // Two height forms, each well conditioned away from the pole or the equator respectively.
  const heightM =
    Math.abs(cosLat) > Math.SQRT1_2 ? p / cosLat - n : zM / sinLat - n * (1 - WGS84_E2);
  return { latDeg: lat / DEG, lonDeg: Math.atan2(yM, xM) / DEG, heightM };
}

/** A local east/north/up frame at a fixed geodetic origin, with its rotation precomputed. */
export interface LocalFrame {
  /** The frame origin. */
  readonly origin: GeodeticPosition;
  /** Local ENU offset (m) to geodetic position. */
  toGeodetic(eastM: number, northM: number, upM: number): GeodeticPosition;
  /** Geodetic position to local ENU offset (m). */
  fromGeodetic(position: GeodeticPosition): EnuPosition;
}

/**
 * Builds the ENU frame at `origin`: ENU = R(φ0, λ0)·(X − X0) with rows
 * E = [−sinλ0, cosλ0, 0], N = [−sinφ0cosλ0, −sinφ0sinλ0, cosφ0], U = [cosφ0cosλ0, cosφ0sinλ0, sinφ0]
 * (EPSG 9836); the inverse uses the transpose, since R is orthonormal.
 */
export function createLocalFrame(origin: GeodeticPosition): LocalFrame {
  const o = geodeticToEcef(origin);
  const sLat = Math.sin(origin.latDeg * DEG);
  const cLat = Math.cos(origin.latDeg * DEG);
  const sLon = Math.sin(origin.lonDeg * DEG);
  const cLon = Math.cos(origin.lonDeg * DEG);
  return {
    origin,
    toGeodetic(eastM, northM, upM) {
      const dx = -sLon * eastM - sLat * cLon * northM + cLat * cLon * upM;
      const dy = cLon * eastM - sLat * sLon * northM + cLat * sLon * upM;
      const dz = cLat * northM + sLat * upM;
      return ecefToGeodetic({ xM: o.xM + dx, yM: o.yM + dy, zM: o.zM + dz });
    },
    fromGeodetic(position) {
      const p = geodeticToEcef(position);
      const dx = p.xM - o.xM;
      const dy = p.yM - o.yM;
      const dz = p.zM - o.zM;
      return {
        eastM: -sLon * dx + cLon * dy,
        northM: -sLat * cLon * dx - sLat * sLon * dy + cLat * dz,
        upM: cLat * cLon * dx + cLat * sLon * dy + sLat * dz,
      };
    },
  };
}

/** The vehicle-yard origin: 51.9500° N, 4.0500° E, height 0 m on the WGS-84 ellipsoid (invented site). */
export const YARD_ORIGIN: GeodeticPosition = { latDeg: 51.95, lonDeg: 4.05, heightM: 0 };
