/**
 * A local east/north/up (ENU) tangent frame on WGS-84 about a fixed origin. Degrees at the
 * public geodetic edge (what a GNSS receiver reports), radians for the offset methods that the
 * measurement models call on the hot path.
 */
import { ModelConfigError } from '../model-config-error.js';
import { wrapAngle } from './measurement-model.js';
import {
  WGS84_ECCENTRICITY_SQUARED as E2, WGS84_SEMI_MAJOR_AXIS_M as A,
  ecefToGeodeticInto, geodeticToEcefInto, meridianRadiusM, primeVerticalRadiusM,
} from './wgs84.js';

const DEG = Math.PI / 180;

/** A point on WGS-84: latitude and longitude in degrees, ellipsoidal height in metres. */
export interface GeodeticOrigin {
  /** Geodetic latitude in degrees, within [−90, 90]. */
  readonly latDeg: number;
  /** Longitude in degrees, positive east; any finite value (wrapped to (−180, 180]). */
  readonly lonDeg: number;
  /** Ellipsoidal height in metres. */
  readonly hM: number;
}

/**
 * ENU about an origin: ENU = R0·(X − X0), R0 with rows E = [−sinλ0, cosλ0, 0],
 * N = [−sinφ0 cosλ0, −sinφ0 sinλ0, cosφ0], U = [cosφ0 cosλ0, cosφ0 sinλ0, sinφ0]
 * (IOGP Publication 373-7-2, EPSG methods 9836 and 9837).
 *
 * Geodetic offsets are converted without forming absolute ECEF coordinates: X − X0 is built from
 * half-angle differences (sinφ − sinφ0 = 2 cos φ̄ sin(Δφ/2), and so on), so a point metres from
 * the origin keeps full relative precision instead of the ~1e-9 m rounding of 6e6 m numbers.
 * The inverse starts from the ECEF route and takes one Newton step on that accurate forward map.
 */
export class LocalTangentFrame {
  /** Origin latitude in degrees. */
  readonly latDeg: number;
  /** Origin longitude in degrees, wrapped to (−180, 180]. */
  readonly lonDeg: number;
  /** Origin ellipsoidal height in metres. */
  readonly hM: number;
  /** Origin latitude in radians. */
  readonly latRad: number;
  /** Origin longitude in radians. */
  readonly lonRad: number;
  /** Meridian radius of curvature M0 at the origin latitude, in metres. */
  readonly meridianRadiusM: number;
  /** Prime-vertical radius of curvature N0 at the origin latitude, in metres. */
  readonly primeVerticalRadiusM: number;
  /** Origin ECEF coordinates X0, Y0, Z0 in metres. */
  readonly originEcefM: Float64Array;
  /** ECEF → ENU rotation R0 (3×3, row-major, rows E, N, U). */
  readonly rotation: Float64Array;
  private readonly sinLat: number;
  private readonly cosLat: number;
  private readonly sinLon: number;
  private readonly cosLon: number;
  private readonly w0: number;
  private readonly scratch = new Float64Array(3);
  private readonly jacobian = new Float64Array(9);

  /** Builds the frame; throws ModelConfigError for a latitude outside [−90, 90] or a non-finite value. */
  constructor(origin: GeodeticOrigin, path = 'origin') {
    const { latDeg, lonDeg, hM } = origin;
    if (typeof latDeg !== 'number' || !(latDeg >= -90 && latDeg <= 90)) {
      throw new ModelConfigError(`${path}.latDeg`, `${path}.latDeg must be a latitude in [−90, 90] degrees, got ${String(latDeg)}`);
    }
    if (typeof lonDeg !== 'number' || !Number.isFinite(lonDeg)) {
      throw new ModelConfigError(`${path}.lonDeg`, `${path}.lonDeg must be a finite longitude in degrees, got ${String(lonDeg)}`);
    }
    if (typeof hM !== 'number' || !Number.isFinite(hM)) {
      throw new ModelConfigError(`${path}.hM`, `${path}.hM must be a finite height in metres, got ${String(hM)}`);
    }
    this.latDeg = latDeg;
    this.lonDeg = wrapDegrees(lonDeg);
    this.hM = hM;
    this.latRad = latDeg * DEG;
    this.lonRad = this.lonDeg * DEG;
    this.sinLat = Math.sin(this.latRad);
    this.cosLat = Math.cos(this.latRad);
    this.sinLon = Math.sin(this.lonRad);
    this.cosLon = Math.cos(this.lonRad);
    this.w0 = Math.sqrt(1 - E2 * this.sinLat * this.sinLat);
    this.meridianRadiusM = meridianRadiusM(this.latRad);
    this.primeVerticalRadiusM = primeVerticalRadiusM(this.latRad);
    this.originEcefM = new Float64Array(3);
    geodeticToEcefInto(this.latRad, this.lonRad, hM, this.originEcefM);
    const { sinLat: sp, cosLat: cp, sinLon: sl, cosLon: cl } = this;
    this.rotation = Float64Array.of(-sl, cl, 0, -sp * cl, -sp * sl, cp, cp * cl, cp * sl, sp);
  }

  /** ECEF metres to ENU metres about the origin, into out[0..2] (EPSG method 9836). */
  ecefToEnuInto(x: number, y: number, z: number, out: Float64Array): void {
    this.rotateToEnuInto(x - this.originEcefM[0]!, y - this.originEcefM[1]!, z - this.originEcefM[2]!, out);
  }

  /** ENU metres about the origin to ECEF metres, into out[0..2] (X = X0 + R0ᵀ·ENU). */
  enuToEcefInto(e: number, n: number, u: number, out: Float64Array): void {
    const r = this.rotation;
    const o = this.originEcefM;
    out[0] = o[0]! + r[0]! * e + r[3]! * n + r[6]! * u;
    out[1] = o[1]! + r[1]! * e + r[4]! * n + r[7]! * u;
    out[2] = o[2]! + r[2]! * e + r[5]! * n + r[8]! * u;
  }

  /** Geodetic (degrees, metres) to ENU metres about the origin, into out[0..2] (EPSG method 9837). */
  geodeticToEnuInto(latDeg: number, lonDeg: number, hM: number, out: Float64Array): void {
    this.geodeticOffsetToEnuInto((latDeg - this.latDeg) * DEG, this.longitudeOffsetRad(lonDeg), hM, out);
  }

  /** λ − λ0 in radians, wrapped to (−π, π], exact in degrees before the conversion. */
  longitudeOffsetRad(lonDeg: number): number {
    let d = lonDeg - this.lonDeg;
    // Across the antimeridian, −179.9998 − 179.9995 would round; shifting the report by whole
    // turns first is exact near ±180°, and the difference of close values is then exact too.
    if (d > 180 || d <= -180) d = (lonDeg - 360 * Math.round(d / 360)) - this.lonDeg;
    return wrapAngle(d * DEG);
  }

  /** ENU metres about the origin to geodetic, into out[0..2] = latitude (deg), longitude (deg, (−180, 180]), height (m). */
  enuToGeodeticInto(e: number, n: number, u: number, out: Float64Array): void {
    this.enuToGeodeticOffsetInto(e, n, u, out);
    out[0] = this.latDeg + out[0]! / DEG;
    out[1] = wrapDegrees(this.lonDeg + out[1]! / DEG);
  }

  /**
   * A point given by its offsets from the origin (Δφ, Δλ in radians) and its ellipsoidal height
   * (metres) to ENU metres, into out[0..2]. Allocates nothing.
   */
  geodeticOffsetToEnuInto(dLatRad: number, dLonRad: number, hM: number, out: Float64Array): void {
    const sp0 = this.sinLat;
    const lat = this.latRad + dLatRad;
    const lon = this.lonRad + dLonRad;
    const sp = Math.sin(lat);
    const cp = Math.cos(lat);
    const halfLat = Math.sin(0.5 * dLatRad);
    const halfLon = Math.sin(0.5 * dLonRad);
    const midLat = this.latRad + 0.5 * dLatRad;
    const midLon = this.lonRad + 0.5 * dLonRad;
    const dSinLat = 2 * Math.cos(midLat) * halfLat;
    const dCosLat = -2 * Math.sin(midLat) * halfLat;
    const w = Math.sqrt(1 - E2 * sp * sp);
    // N − N0 = a(w0 − w)/(w w0) with w0 − w = e²(sinφ − sinφ0)(sinφ + sinφ0)/(w0 + w): no cancellation.
    const dN = (A * E2 * dSinLat * (sp + sp0)) / ((this.w0 + w) * w * this.w0);
    const dH = hM - this.hM;
    const n0h0 = this.primeVerticalRadiusM + this.hM;
    // A = (N + h)cosφ is the distance from the axis; Z = (N(1 − e²) + h)sinφ.
    const dAxis = (dN + dH) * cp + n0h0 * dCosLat;
    const dZ = (dN * (1 - E2) + dH) * sp + (this.primeVerticalRadiusM * (1 - E2) + this.hM) * dSinLat;
    const axis0 = n0h0 * this.cosLat;
    const dX = dAxis * Math.cos(lon) - axis0 * 2 * Math.sin(midLon) * halfLon;
    const dY = dAxis * Math.sin(lon) + axis0 * 2 * Math.cos(midLon) * halfLon;
    this.rotateToEnuInto(dX, dY, dZ, out);
  }

  /**
   * ENU metres to the point's offsets from the origin, into out[0..2] = Δφ (rad), Δλ (rad,
   * (−π, π]), ellipsoidal height h (m). Allocates nothing.
   */
  enuToGeodeticOffsetInto(e: number, n: number, u: number, out: Float64Array): void {
    const g = this.scratch;
    this.enuToEcefInto(e, n, u, g);
    ecefToGeodeticInto(g[0]!, g[1]!, g[2]!, g);
    let dLat = g[0]! - this.latRad;
    let dLon = wrapAngle(g[1]! - this.lonRad);
    let h = g[2]!;
    // One Newton step on the accurate forward map removes the ECEF route's ~1e-9 m rounding.
    this.geodeticOffsetToEnuInto(dLat, dLon, h, g);
    const re = e - g[0]!;
    const rn = n - g[1]!;
    const ru = u - g[2]!;
    const j = this.jacobian;
    this.geodeticOffsetJacobianInto(dLat, dLon, h, j);
    dLat += j[0]! * re + j[1]! * rn + j[2]! * ru;
    if (Number.isFinite(j[3]!)) dLon += j[3]! * re + j[4]! * rn + j[5]! * ru;
    h += j[6]! * re + j[7]! * rn + j[8]! * ru;
    out[0] = dLat;
    out[1] = wrapAngle(dLon);
    out[2] = h;
  }

  /**
   * Jacobian ∂(Δφ, Δλ, h)/∂(E, N, U) at a point, into J (3×3, row-major):
   * diag(1/(M + h), 1/((N + h)cosφ), 1)·[n; e; u]·R0ᵀ, where n, e, u are the point's own north,
   * east and up unit vectors in ECEF. The longitude row grows without bound toward a pole.
   */
  geodeticOffsetJacobianInto(dLatRad: number, dLonRad: number, hM: number, J: Float64Array): void {
    const lat = this.latRad + dLatRad;
    const lon = this.lonRad + dLonRad;
    const sp = Math.sin(lat);
    const cp = Math.cos(lat);
    const sl = Math.sin(lon);
    const cl = Math.cos(lon);
    const rNorth = 1 / (meridianRadiusM(lat) + hM);
    const rEast = 1 / ((primeVerticalRadiusM(lat) + hM) * cp);
    this.rotateToEnuInto(-sp * cl * rNorth, -sp * sl * rNorth, cp * rNorth, this.scratch);
    J[0] = this.scratch[0]!; J[1] = this.scratch[1]!; J[2] = this.scratch[2]!;
    this.rotateToEnuInto(-sl * rEast, cl * rEast, 0, this.scratch);
    J[3] = this.scratch[0]!; J[4] = this.scratch[1]!; J[5] = this.scratch[2]!;
    this.rotateToEnuInto(cp * cl, cp * sl, sp, this.scratch);
    J[6] = this.scratch[0]!; J[7] = this.scratch[1]!; J[8] = this.scratch[2]!;
  }

  /** R0·d for an ECEF difference d, into out[0..2]. */
  private rotateToEnuInto(dx: number, dy: number, dz: number, out: Float64Array): void {
    const r = this.rotation;
    out[0] = r[0]! * dx + r[1]! * dy;
    out[1] = r[3]! * dx + r[4]! * dy + r[5]! * dz;
    out[2] = r[6]! * dx + r[7]! * dy + r[8]! * dz;
  }
}

/** Wraps degrees to (−180, 180]. */
function wrapDegrees(deg: number): number {
  let w = deg - 360 * Math.floor((deg + 180) / 360);
  if (w <= -180) w += 360;
  return w;
}
