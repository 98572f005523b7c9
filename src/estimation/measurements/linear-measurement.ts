import type { MeasurementModel } from './measurement-model.js';

/** Settings of a linear sensor y = C x + D v, cov(v) = Rv. */
export interface LinearMeasurementOptions {
  /** Observation matrix C (M×P, row-major). */
  readonly C: ArrayLike<number>;
  /** Measurement dimension M. */
  readonly dim: number;
  /** State dimension P. */
  readonly stateDim: number;
  /** Noise covariance Rv (r×r); with D omitted, r = M and R = Rv. */
  readonly Rv: ArrayLike<number>;
  /** Noise input matrix D (M×r); identity when omitted. */
  readonly D?: ArrayLike<number>;
  /** Noise dimension r (columns of D); M when D is omitted. */
  readonly noiseDim?: number;
  /** Names of the measurement components; `y0`, `y1`, … by default. */
  readonly componentNames?: readonly string[];
}

/**
 * A linear sensor y(n) = C x(n) + D v(n). R = D Rv Dᵀ is formed once at construction.
 * Initialization: each row of C with a single nonzero c (a sensor reading one state, perhaps
 * scaled) sets that state to y/c with variance R/c²; rows mixing states leave the prior alone.
 */
export class LinearMeasurement implements MeasurementModel {
  readonly dim: number;
  readonly stateDim: number;
  readonly linear = true;
  readonly componentNames: readonly string[];
  readonly R: Float64Array;
  readonly C: Float64Array;
  /** For each row, the state it reads alone (−1 when the row mixes states). */
  private readonly selectorColumn: Int32Array;

  /** Builds the sensor; throws on inconsistent shapes (shapes and PSD are validated by the caller's checks). */
  constructor(opts: LinearMeasurementOptions) {
    const m = opts.dim;
    const n = opts.stateDim;
    const r = opts.noiseDim ?? m;
    if (opts.C.length !== m * n) throw new Error(`C must be ${m}×${n} (${m * n} entries), got ${opts.C.length}`);
    if (opts.Rv.length !== r * r) throw new Error(`R must be ${r}×${r} (${r * r} entries), got ${opts.Rv.length}`);
    if (opts.D !== undefined && opts.D.length !== m * r) throw new Error(`D must be ${m}×${r} (${m * r} entries), got ${opts.D.length}`);
    this.dim = m;
    this.stateDim = n;
    this.C = Float64Array.from(opts.C);
    this.componentNames = opts.componentNames ?? Array.from({ length: m }, (_, i) => `y${i}`);
    if (this.componentNames.length !== m) throw new Error(`componentNames must have ${m} names, got ${this.componentNames.length}`);
    this.R = new Float64Array(m * m);
    const D = opts.D;
    for (let i = 0; i < m; i++) {
      for (let j = 0; j < m; j++) {
        let s = 0;
        for (let a = 0; a < r; a++) {
          for (let b = 0; b < r; b++) {
            const dia = D === undefined ? (i === a ? 1 : 0) : D[i * r + a]!;
            const djb = D === undefined ? (j === b ? 1 : 0) : D[j * r + b]!;
            s += dia * opts.Rv[a * r + b]! * djb;
          }
        }
        this.R[i * m + j] = s;
      }
    }
    this.selectorColumn = new Int32Array(m).fill(-1);
    for (let i = 0; i < m; i++) {
      let col = -1;
      let count = 0;
      for (let j = 0; j < n; j++) if (this.C[i * n + j] !== 0) { col = j; count++; }
      if (count === 1) this.selectorColumn[i] = col;
    }
  }

  /** Identity: linear sensors report in model units. */
  normalizeInPlace(_y: Float64Array): void {}

  /** ŷ = C x. */
  measureInto(x: Float64Array, yhat: Float64Array): void {
    const n = this.stateDim;
    for (let i = 0; i < this.dim; i++) {
      let s = 0;
      for (let j = 0; j < n; j++) s += this.C[i * n + j]! * x[j]!;
      yhat[i] = s;
    }
  }

  /** H = C. */
  jacobianInto(_x: Float64Array, H: Float64Array): void {
    H.set(this.C);
  }

  /** ν = y − ŷ. */
  innovationInto(y: Float64Array, yhat: Float64Array, nu: Float64Array): void {
    for (let i = 0; i < this.dim; i++) nu[i] = y[i]! - yhat[i]!;
  }

  /** Sets the states read alone by a row of C from y; false when no row does. */
  initializeInPlace(y: Float64Array, R: Float64Array, x: Float64Array, P: Float64Array): boolean {
    const n = this.stateDim;
    const m = this.dim;
    let any = false;
    for (let i = 0; i < m; i++) {
      const col = this.selectorColumn[i]!;
      if (col < 0) continue;
      any = true;
      const c = this.C[i * n + col]!;
      x[col] = y[i]! / c;
      for (let j = 0; j < n; j++) { P[col * n + j] = 0; P[j * n + col] = 0; }
    }
    if (!any) return false;
    for (let i = 0; i < m; i++) {
      const ci = this.selectorColumn[i]!;
      if (ci < 0) continue;
      for (let k = 0; k < m; k++) {
        const ck = this.selectorColumn[k]!;
        if (ck < 0) continue;
        P[ci * n + ck] = R[i * m + k]! / (this.C[i * n + ci]! * this.C[k * n + ck]!);
      }
    }
    return true;
  }
}
