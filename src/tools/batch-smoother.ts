/**
 * The whole-batch smoother of `replay --smooth`: an entity's accepted measurements, re-filtered
 * in event-time order through a fresh track of the same estimator (the core path the daemon
 * runs), with the prediction into each step captured on the way — x̂(k|k−1), P(k|k−1) from the
 * track's own predictInto and A(dt) from the process model's discretizeInto — then one
 * Rauch–Tung–Striebel backward pass (Rauch, Tung, Striebel, AIAA J. 3(8), 1965) per stretch
 * between (re-)initializations, via smoothBatch.
 */
import type { Estimator } from '../estimation/estimator.js';
import { smoothBatch, type SmoothedStep, type SmootherStep } from '../estimation/filters/rts-smoother.js';
import { Float64Column } from './float64-column.js';

/** The accepted measurements of one entity, as the engine applied them (arrival order). */
export class MeasurementLog {
  readonly tS = new Float64Column();
  readonly sensor = new Float64Column();
  readonly values: Float64Column;
  /** The measurement's own covariance (model space), or NaN in the first cell for the sensor default. */
  readonly R: Float64Column;

  /** A log for measurements of at most maxM components. */
  constructor(readonly maxM: number) {
    this.values = new Float64Column(maxM);
    this.R = new Float64Column(maxM * maxM);
  }

  /** Rows held. */
  get length(): number {
    return this.tS.length;
  }

  /** Records one measurement: values (m of them) as decoded and R (m×m) or null. */
  add(tS: number, sensor: number, values: ArrayLike<number>, m: number, R: ArrayLike<number> | null): void {
    this.tS.push(tS);
    this.sensor.push(sensor);
    this.values.pushRow(values, m);
    if (R === null) this.R.pushRow([Number.NaN], 1);
    else this.R.pushRow(R, m * m);
  }
}

/** Smoothed estimates of one entity in event-time order. */
export interface SmoothedRun {
  readonly steps: readonly SmoothedStep[];
  /** Measurements the re-filter refused (gate, duplicates), which the live run had accepted. */
  readonly refused: number;
}

/** Re-filters and smooths one entity's log (see the module comment). Allocates per step. */
export function smoothLog(estimator: Estimator, log: MeasurementLog): SmoothedRun {
  const settings = estimator.settings;
  const n = settings.process.dim;
  const track = estimator.createTrack();
  const order = Array.from({ length: log.length }, (_, i) => i);
  // The track's own order (time, sensor, values), so every step lands at the end of its history
  // and is a plain predict-update; ties beyond that keep the live run's order.
  order.sort((a, b) => log.tS.at(a) - log.tS.at(b) || log.sensor.at(a) - log.sensor.at(b) || compareValues(log, a, b) || a - b);
  const xP = new Float64Array(n);
  const PP = new Float64Array(n * n);
  const A = new Float64Array(n * n);
  const Q = new Float64Array(n * n);
  const y = new Float64Array(log.maxM);
  const out: SmoothedStep[] = [];
  let segment: SmootherStep[] = [];
  let refused = 0;
  const close = (): void => {
    if (segment.length > 0) for (const s of smoothBatch(segment)) out.push(s);
    segment = [];
  };
  for (const i of order) {
    const tS = log.tS.at(i);
    const sensor = log.sensor.at(i);
    const m = settings.sensors[sensor]!.model.dim;
    for (let k = 0; k < m; k++) y[k] = log.values.at(i, k);
    const rRow = log.R.row(i);
    const R = Number.isNaN(rRow[0]!) ? null : rRow.subarray(0, m * m);
    const predicted = track.initialized && track.predictInto(tS, xP, PP);
    if (predicted) settings.process.discretizeInto(tS - track.tS, A, Q);
    // nowS = tS: the future-stamp check is about the live clock, which a re-filter does not have.
    const verdict = track.ingest(sensor, y.subarray(0, m), R, tS, tS);
    if (verdict === 'initialized') {
      close();
      segment.push({ tS, xFiltered: Float64Array.from(track.x), PFiltered: Float64Array.from(track.P) });
    } else if (verdict === 'applied' && predicted) {
      segment.push({
        tS,
        xFiltered: Float64Array.from(track.x),
        PFiltered: Float64Array.from(track.P),
        xPredicted: Float64Array.from(xP),
        PPredicted: Float64Array.from(PP),
        A: Float64Array.from(A),
      });
    } else {
      refused += 1;
    }
    // A refused step can reset the track (a rejection run, numerics): the next stretch starts anew.
    if (!track.initialized) close();
  }
  close();
  return { steps: out, refused };
}

function compareValues(log: MeasurementLog, a: number, b: number): number {
  for (let k = 0; k < log.maxM; k++) {
    const d = log.values.at(a, k) - log.values.at(b, k);
    if (d !== 0 && !Number.isNaN(d)) return d;
  }
  return 0;
}
