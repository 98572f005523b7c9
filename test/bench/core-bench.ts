/**
 * Estimation-core benchmark: ns per predict+update for CV-2D and 6-state/3-D filters, the same
 * CV-2D filter written plainly with ml-matrix (run side by side), the cost of one late
 * measurement inserted 10 and 100 entries back, and memory per track.
 */
import { Matrix, inverse } from 'ml-matrix';
import { ConstantVelocityModel } from '../../src/estimation/models/constant-velocity-model.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import { FilterWorkspace } from '../../src/estimation/filters/filter-workspace.js';
import { kalmanPredictInPlace } from '../../src/estimation/filters/kalman-predict.js';
import { kalmanUpdateInPlace } from '../../src/estimation/filters/kalman-update.js';
import { chiSquareQuantile } from '../../src/estimation/filters/chi-square.js';
import { Estimator } from '../../src/estimation/estimator.js';
import { canCollectGarbage, collectGarbage, nsPerCall, pairedNsPerCall } from './bench-timing.js';

const Q_SPECTRAL = 0.5;
const SIGMA = 3;

/** Pseudo-random but fixed measurement noise so both implementations see the same data. */
function noiseTable(count: number): Float64Array {
  const out = new Float64Array(count);
  let s = 12345;
  for (let i = 0; i < count; i++) {
    s = (s * 1103515245 + 12345) >>> 0;
    out[i] = ((s / 2 ** 32) - 0.5) * 2 * SIGMA;
  }
  return out;
}

function positionSensor(axes: number): LinearMeasurement {
  const n = 2 * axes;
  const C = new Float64Array(axes * n);
  for (let a = 0; a < axes; a++) C[a * n + a] = 1;
  const Rv = new Float64Array(axes * axes);
  for (let a = 0; a < axes; a++) Rv[a * axes + a] = SIGMA * SIGMA;
  return new LinearMeasurement({ C, dim: axes, stateDim: n, Rv });
}

/** One predict+update of our kernels on an `axes`-D constant-velocity filter, as a step function. */
function kernelStep(axes: number): (i: number) => void {
  const names = ['east', 'north', 'up'].slice(0, axes);
  const model = new ConstantVelocityModel({ positionNames: names, spectralDensity: Q_SPECTRAL });
  const sensor = positionSensor(axes);
  const n = model.dim;
  const ws = new FilterWorkspace(n, axes);
  const x = new Float64Array(n);
  const P = new Float64Array(n * n);
  for (let i = 0; i < n; i++) P[i * n + i] = 100;
  const y = new Float64Array(axes);
  const noise = noiseTable(4096);
  const gate = chiSquareQuantile(0.99, axes);
  let truth = 0;
  return (i) => {
    truth += 1;
    for (let a = 0; a < axes; a++) y[a] = truth + noise[(i * axes + a) & 4095]!;
    kalmanPredictInPlace(model, 1, x, P, ws);
    kalmanUpdateInPlace(sensor, y, sensor.R, gate, x, P, ws);
  };
}

/** The same CV-2D filter as a plain ml-matrix implementation would write it, as a step function. */
function naiveCv2dStep(): (i: number) => void {
  let x = Matrix.zeros(4, 1);
  let P = Matrix.eye(4, 4).mul(100);
  const H = new Matrix([[1, 0, 0, 0], [0, 1, 0, 0]]);
  const R = Matrix.eye(2, 2).mul(SIGMA * SIGMA);
  const I = Matrix.eye(4, 4);
  const noise = noiseTable(4096);
  const gate = chiSquareQuantile(0.99, 2);
  let truth = 0;
  return (i) => {
    truth += 1;
    const T = 1;
    const q = Q_SPECTRAL;
    const A = new Matrix([[1, 0, T, 0], [0, 1, 0, T], [0, 0, 1, 0], [0, 0, 0, 1]]);
    const Q = new Matrix([
      [q * T ** 3 / 3, 0, q * T ** 2 / 2, 0],
      [0, q * T ** 3 / 3, 0, q * T ** 2 / 2],
      [q * T ** 2 / 2, 0, q * T, 0],
      [0, q * T ** 2 / 2, 0, q * T],
    ]);
    x = A.mmul(x);
    P = A.mmul(P).mmul(A.transpose()).add(Q);
    const y = new Matrix([[truth + noise[(i * 2) & 4095]!], [truth + noise[(i * 2 + 1) & 4095]!]]);
    const nu = y.sub(H.mmul(x));
    const S = H.mmul(P).mmul(H.transpose()).add(R);
    const Si = inverse(S);
    const d2 = nu.transpose().mmul(Si).mmul(nu).get(0, 0);
    if (d2 > gate) return;
    const K = P.mmul(H.transpose()).mmul(Si);
    x = x.add(K.mmul(nu));
    const IKH = I.sub(K.mmul(H));
    P = IKH.mmul(P).mmul(IKH.transpose()).add(K.mmul(R).mmul(K.transpose()));
  };
}

function cv2dEstimator(maxEntries: number): Estimator {
  return new Estimator({
    process: new ConstantVelocityModel({ spectralDensity: Q_SPECTRAL }),
    sensors: [{ name: 'fix', model: positionSensor(2) }],
    filter: 'kf',
    priorCovariance: [1e4, 0, 0, 0, 0, 1e4, 0, 0, 0, 0, 100, 0, 0, 0, 0, 100],
    gateProbability: null,
    horizonS: 1e9,
    maxEntries,
    futureToleranceS: 1e12,
  });
}

/** Extra cost of one late measurement inserted `depth` entries back, over an in-order one. */
function benchLateInsert(depth: number): number {
  const est = cv2dEstimator(256);
  const noise = noiseTable(4096);
  const y = new Float64Array(2);
  const run = (late: boolean): number => {
    const track = est.createTrack();
    let t = 0;
    for (; t < 300; t++) track.ingest(0, [t, t], null, t, 1e12);
    return nsPerCall((i) => {
      t += 1;
      y[0] = t + noise[i & 4095]!;
      y[1] = t - noise[(i + 7) & 4095]!;
      track.ingest(0, y, null, t, 1e12);
      if (late) {
        const h = track.history;
        const at = h.count - depth;
        const tLate = 0.5 * (h.timeAt(at - 1) + h.timeAt(at));
        track.ingest(0, y, null, tLate, 1e12);
      }
    }, depth >= 100 ? 4_000 : 20_000, 5);
  };
  const inOrder = run(false);
  return run(true) - inOrder;
}

/** Heap bytes per CV-2D track with a full 64-measurement history, over 10,000 tracks. */
function benchBytesPerTrack(): number {
  const est = cv2dEstimator(64);
  const count = 10_000;
  collectGarbage();
  const before = process.memoryUsage().heapUsed;
  const tracks = [];
  for (let k = 0; k < count; k++) {
    const track = est.createTrack();
    for (let t = 0; t < 70; t++) track.ingest(0, [t + (k % 7), t], null, t, 1e12);
    tracks.push(track);
  }
  collectGarbage();
  const after = process.memoryUsage().heapUsed;
  if (tracks.length !== count) throw new Error('unreachable');
  return (after - before) / count;
}

/** Runs the core benchmarks and returns their figures under `core.*`. */
export function benchCore(): Record<string, number> {
  // Ours and the naive filter alternate round by round, so their ratio survives load changes.
  const [cv2d, naive] = pairedNsPerCall(kernelStep(2), 100_000, naiveCv2dStep(), 20_000);
  const s6m3 = nsPerCall(kernelStep(3), 100_000);
  const figures: Record<string, number> = {
    'core.cv2d_ns': cv2d,
    'core.s6m3_ns': s6m3,
    'core.naive_cv2d_ns': naive,
    'core.speedup_vs_naive': naive / cv2d,
    'core.oosm_depth10_ns': benchLateInsert(10),
    'core.oosm_depth100_ns': benchLateInsert(100),
  };
  figures['core.bytes_per_track'] = canCollectGarbage() ? benchBytesPerTrack() : Number.NaN;
  return figures;
}
