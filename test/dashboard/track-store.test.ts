import { describe, expect, it } from 'vitest';
import { ALERT_LOG_SIZE, TrackStore } from '../../src/dashboard/track-store.js';

/** An estimate payload as the daemon publishes it (estimate-message.ts), for tank-a. */
function estimate(kind: string, t: number, level: number, sigma: number, health = 'ok', reasons: string[] = []) {
  return {
    v: 1, estimator: 'tanks', entity: 'tank-a', kind, t, time: '',
    state: { level, level_rate: 0 }, sigma: { level: sigma, level_rate: 0.5 },
    coastS: 0, stale: false, health: { state: health, reasons },
  };
}

function detail(gate: number, tS = 100) {
  return {
    estimator: 'tanks', entity: 'tank-a', tS, stale: false, health: { state: 'ok', reasons: [] },
    sensors: [{
      name: 'level', accepted: 10, late: 0, rejected: { gate }, lastNis: 1, windowedNisMean: 0.9,
      windowFill: 10, nisBand: [0.3, 2], gateRejectionRate: 0, innovationRatio: [0.1], lastTimeS: tS, health: 'ok',
    }],
  };
}

describe('TrackStore', () => {
  it('stores each filtered state with its σ and trace(P) as the sum of σ²', () => {
    const store = new TrackStore();
    store.applyEstimate(estimate('filtered', 10, 4.2, 2));
    expect(store.tracks.get('tanks/tank-a')!.filtered!.toArrays()).toEqual([[10], [4.2], [2], [0], [0.5], [4.25]]);
  });

  it('keeps smoothed estimates apart from filtered ones', () => {
    const store = new TrackStore();
    store.applyEstimate(estimate('smoothed', 9, 4.1, 1));
    const record = store.tracks.get('tanks/tank-a')!;
    expect([record.smoothed!.length, record.filtered!.length]).toEqual([1, 0]);
  });

  it('reports a new track and a health change in the list changes once', () => {
    const store = new TrackStore();
    store.applyEstimate(estimate('filtered', 1, 4, 1));
    expect([...store.takeChanges().list]).toEqual(['tanks/tank-a']);
    store.applyEstimate(estimate('filtered', 2, 4, 1));
    expect(store.takeChanges().list.size).toBe(0);
    store.applyEstimate(estimate('filtered', 3, 4, 1, 'degraded', ['nis-high']));
    expect([...store.takeChanges().list]).toEqual(['tanks/tank-a']);
    expect(store.tracks.get('tanks/tank-a')!.health).toEqual({ state: 'degraded', reasons: ['nis-high'] });
  });

  it('logs health changes and keeps at most ALERT_LOG_SIZE of them', () => {
    const store = new TrackStore();
    for (let i = 0; i < ALERT_LOG_SIZE + 5; i++) {
      store.applyHealthChange({ estimator: 'tanks', entity: 'tank-b', sensor: null, from: 'ok', to: 'failed', reasons: ['gate-rate'], tS: i });
    }
    expect([store.alerts.length, store.alerts[0]!['tS']]).toEqual([ALERT_LOG_SIZE, 5]);
  });

  it('marks gate rejections found by polling when no readings are streamed', () => {
    const store = new TrackStore();
    store.applyDetail(detail(2, 100));
    store.applyDetail(detail(5, 102));
    expect(store.tracks.get('tanks/tank-a')!.rejections.toArrays()).toEqual([[102], [3]]);
  });

  it('marks gate rejections from readings rather than polling once readings arrive', () => {
    const store = new TrackStore();
    store.applyMeasurement({ estimator: 'tanks', entity: 'tank-a', sensor: 'level', t: 101, values: [4.4], nis: 9.1, verdict: 'gate' });
    store.applyDetail(detail(2, 100));
    store.applyDetail(detail(9, 102));
    expect(store.tracks.get('tanks/tank-a')!.rejections.toArrays()).toEqual([[101], [1]]);
  });

  it('stores a reading with its NIS and whether it was accepted', () => {
    const store = new TrackStore();
    store.applyMeasurement({ estimator: 'tanks', entity: 'tank-a', sensor: 'level', t: 5, values: [4.4], nis: 0.7, verdict: 'late-applied' });
    store.applyMeasurement({ estimator: 'tanks', entity: 'tank-a', sensor: 'level', t: 6, values: [9.9], nis: null, verdict: 'duplicate' });
    expect(store.tracks.get('tanks/tank-a')!.readings.get('level')!.toArrays()).toEqual([[5, 6], [4.4, 9.9], [0.7, null], [1, 0]]);
  });

  it('ignores frames that do not name a track', () => {
    const store = new TrackStore();
    store.applyEstimate({ kind: 'filtered', t: 1, state: {} });
    store.applyMeasurement({ sensor: 'level', values: [] });
    store.applyHealthChange(null);
    expect(store.tracks.size).toBe(0);
  });
});
