/**
 * What the page knows about every track: bounded histories of the estimates, the sensors'
 * readings and NIS, gate rejections, the latest per-sensor statistics, and the alert log.
 * Fed by WebSocket frames and the JSON API; the views read it and ask what changed.
 */
import { RingSeries } from './ring-series.js';

/** Most points kept per series (about 9 minutes of a 10 Hz track). */
export const HISTORY_POINTS = 6000;
/** Oldest point kept, seconds behind the newest of its series. */
export const HISTORY_S = 600;
/** Most alert log entries kept. */
export const ALERT_LOG_SIZE = 200;

const ACCEPTED = new Set(['applied', 'late-applied', 'initialized']);

/** The key of one track. */
export function trackKey(estimator, entity) {
  return `${estimator}/${entity}`;
}

class TrackRecord {
  constructor(estimator, entity) {
    this.estimator = estimator;
    this.entity = entity;
    this.key = trackKey(estimator, entity);
    this.health = { state: 'ok', reasons: [] };
    this.stale = false;
    this.stateNames = null;
    this.filtered = null; // columns: x0, σ0, x1, σ1, ..., trace(P)
    this.smoothed = null; // columns: x0, x1, ...
    /** sensor → RingSeries of readings: values..., NIS, accepted (1) or refused (0) */
    this.readings = new Map();
    /** sensor → RingSeries of polled statistics: windowed NIS mean, last NIS */
    this.nisPolled = new Map();
    /** sensor → the latest summary from the detail API */
    this.sensors = new Map();
    /** Gate rejections to mark: column 0 is the count at that time. */
    this.rejections = new RingSeries(1, 2000, HISTORY_S);
    this.gateCounts = new Map();
  }

  /** @param {string[]} names */
  ensureStates(names) {
    if (this.stateNames !== null && this.stateNames.join() === names.join()) return;
    this.stateNames = names;
    this.filtered = new RingSeries(2 * names.length + 1, HISTORY_POINTS, HISTORY_S);
    this.smoothed = new RingSeries(names.length, HISTORY_POINTS, HISTORY_S);
  }
}

export class TrackStore {
  constructor() {
    /** @type {Map<string, TrackRecord>} */
    this.tracks = new Map();
    this.alerts = [];
    /** Tracks whose histories changed since the last takeChanges(). */
    this.dataChanged = new Set();
    /** Tracks added or whose health changed since the last takeChanges(). */
    this.listChanged = new Set();
    this.alertsChanged = false;
  }

  track(estimator, entity) {
    const key = trackKey(estimator, entity);
    let record = this.tracks.get(key);
    if (record === undefined) {
      record = new TrackRecord(estimator, entity);
      this.tracks.set(key, record);
      this.listChanged.add(key);
    }
    return record;
  }

  /** One estimate payload (see the daemon's estimate-message.ts). */
  applyEstimate(p) {
    if (typeof p?.estimator !== 'string' || typeof p.entity !== 'string' || typeof p.state !== 'object') return;
    const record = this.track(p.estimator, p.entity);
    this.setHealth(record, p.health?.state, p.health?.reasons, p.stale === true);
    const names = Object.keys(p.state);
    record.ensureStates(names);
    if (p.kind === 'filtered') {
      const row = [];
      let trace = 0;
      for (const name of names) {
        const sigma = p.sigma?.[name];
        row.push(p.state[name], sigma);
        trace += typeof sigma === 'number' ? sigma * sigma : NaN;
      }
      row.push(trace);
      record.filtered.push(p.t, row);
    } else if (p.kind === 'smoothed') {
      record.smoothed.push(p.t, names.map((name) => p.state[name]));
    } else return;
    this.dataChanged.add(record.key);
  }

  /** One health change (track-level when `sensor` is null). */
  applyHealthChange(c) {
    if (typeof c?.estimator !== 'string' || typeof c.entity !== 'string') return;
    const record = this.track(c.estimator, c.entity);
    if (c.sensor === null) this.setHealth(record, c.to, c.reasons, record.stale);
    this.alerts.push(c);
    if (this.alerts.length > ALERT_LOG_SIZE) this.alerts.splice(0, this.alerts.length - ALERT_LOG_SIZE);
    this.alertsChanged = true;
  }

  /** One measurement frame: `{ estimator, entity, sensor, t, values, nis, verdict }`. */
  applyMeasurement(m) {
    if (typeof m?.estimator !== 'string' || typeof m.entity !== 'string' || !Array.isArray(m.values)) return;
    const record = this.track(m.estimator, m.entity);
    let series = record.readings.get(m.sensor);
    if (series === undefined) {
      series = new RingSeries(m.values.length + 2, HISTORY_POINTS, HISTORY_S);
      record.readings.set(m.sensor, series);
    }
    const accepted = ACCEPTED.has(m.verdict);
    series.push(m.t, [...m.values, m.nis, accepted ? 1 : 0]);
    if (m.verdict === 'gate') addRejection(record, m.t, 1);
    this.dataChanged.add(record.key);
  }

  /** The answer of GET /api/v1/tracks. */
  applyTrackList(body) {
    for (const t of body?.tracks ?? []) {
      const record = this.track(t.estimator, t.entity);
      this.setHealth(record, t.health?.state, t.health?.reasons, t.stale === true);
    }
  }

  /**
   * The answer of GET /api/v1/tracks/:estimator/:entity. Without measurement frames, the
   * growth of a sensor's gate count between two answers is marked as rejections then.
   */
  applyDetail(d) {
    if (typeof d?.estimator !== 'string' || !Array.isArray(d.sensors)) return;
    const record = this.track(d.estimator, d.entity);
    this.setHealth(record, d.health?.state, d.health?.reasons, d.stale === true);
    for (const s of d.sensors) {
      record.sensors.set(s.name, s);
      const tS = Number.isFinite(s.lastTimeS) ? s.lastTimeS : d.tS;
      // A refused reading leaves lastTimeS alone, so rejections found by polling are placed
      // at the newest time the page has seen for the track.
      const seenS = Math.max(tS, Number.isFinite(d.tS) ? d.tS : -Infinity, record.filtered?.lastTimeS ?? -Infinity);
      let polled = record.nisPolled.get(s.name);
      if (polled === undefined) {
        polled = new RingSeries(2, 2000, HISTORY_S);
        record.nisPolled.set(s.name, polled);
      }
      if (s.windowFill > 0) polled.push(tS, [s.windowedNisMean, s.lastNis]);
      const gate = s.rejected?.gate ?? 0;
      const before = record.gateCounts.get(s.name);
      record.gateCounts.set(s.name, gate);
      if (before !== undefined && gate > before && record.readings.size === 0) addRejection(record, seenS, gate - before);
    }
    this.dataChanged.add(record.key);
  }

  /** What changed since the last call; the sets are emptied. */
  takeChanges() {
    const changes = { data: this.dataChanged, list: this.listChanged, alerts: this.alertsChanged };
    this.dataChanged = new Set();
    this.listChanged = new Set();
    this.alertsChanged = false;
    return changes;
  }

  setHealth(record, state, reasons, stale) {
    if (state !== 'ok' && state !== 'degraded' && state !== 'failed') return;
    const list = Array.isArray(reasons) ? reasons : [];
    const h = record.health;
    if (h.state === state && h.reasons.join() === list.join() && record.stale === stale) return;
    record.health = { state, reasons: list };
    record.stale = stale;
    this.listChanged.add(record.key);
  }
}

function addRejection(record, tS, count) {
  const last = record.rejections.lastTimeS;
  // Several rejections at one time add up rather than replace each other.
  const previous = tS === last ? record.rejections.lastValue(0) : 0;
  record.rejections.push(tS, [previous + count]);
}
