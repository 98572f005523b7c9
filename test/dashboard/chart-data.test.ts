import { describe, expect, it } from 'vitest';
import { alignTables, followRange, nisChartData, stateChartData } from '../../src/dashboard/chart-data.js';
import { TrackStore } from '../../src/dashboard/track-store.js';

function tankWithHistory() {
  const store = new TrackStore();
  for (const [t, level] of [[1, 4.0], [2, 4.1], [3, 4.2]] as const) {
    store.applyEstimate({
      estimator: 'tanks', entity: 'tank-c', kind: 'filtered', t, state: { level }, sigma: { level: 0.01 },
      health: { state: 'ok', reasons: [] }, stale: false,
    });
  }
  store.applyEstimate({
    estimator: 'tanks', entity: 'tank-c', kind: 'smoothed', t: 1.5, state: { level: 4.05 }, sigma: { level: 0.01 },
    health: { state: 'ok', reasons: [] }, stale: false,
  });
  return store;
}

describe('alignTables', () => {
  it('aligns tables on the union of their times, leaving undefined where a table has no point', () => {
    expect(alignTables([[[1, 3], [10, 30]], [[2, 3], [20, null]]])).toEqual([
      [1, 2, 3], [10, undefined, 30], [undefined, 20, null],
    ]);
  });
});

describe('stateChartData', () => {
  it('puts the ±2σ band around the filtered estimate and the smoothed one at its own time', () => {
    const record = tankWithHistory().tracks.get('tanks/tank-c')!;
    const { data } = stateChartData(record, 0, [], -Infinity);
    expect(data[0]).toEqual([1, 1.5, 2, 3]);
    expect(data[2]![0]).toBeCloseTo(4.02, 12);
    expect(data[3]![0]).toBeCloseTo(3.98, 12);
    expect(data[4]).toEqual([undefined, 4.05, undefined, undefined]);
  });

  it('splits a sensor\'s readings into accepted and refused series', () => {
    const store = tankWithHistory();
    for (const [t, verdict] of [[2, 'applied'], [3, 'gate']] as const) {
      store.applyMeasurement({ estimator: 'tanks', entity: 'tank-c', sensor: 'level', t, values: [4.3], nis: 1, verdict });
    }
    const { data } = stateChartData(store.tracks.get('tanks/tank-c')!, 0, ['level'], -Infinity);
    expect([data[5], data[6]]).toEqual([[undefined, undefined, 4.3, null], [undefined, undefined, null, 4.3]]);
  });
});

describe('followRange', () => {
  it('follows the values with room for 2.5 typical σ, ignoring a few wide early σ', () => {
    const range = followRange([[4, 5]], [1000, 0.1, 0.1, 0.1])!;
    expect(range[0]).toBeCloseTo(4 - 0.25, 12);
    expect(range[1]).toBeCloseTo(5 + 0.25, 12);
  });

  it('gives null when there are no values', () => {
    expect(followRange([[null, undefined]], [])).toBeNull();
  });
});

describe('nisChartData', () => {
  it('draws the band of the latest statistics across every time of the chart', () => {
    const store = new TrackStore();
    store.applyDetail({
      estimator: 'tanks', entity: 'tank-a', tS: 50, health: { state: 'ok', reasons: [] }, stale: false,
      sensors: [{ name: 'pressure', rejected: {}, windowedNisMean: 1.1, lastNis: 0.4, windowFill: 10, nisBand: [0.32, 2.05], lastTimeS: 50 }],
    });
    const { data, range } = nisChartData(store.tracks.get('tanks/tank-a')!, 'pressure', -Infinity);
    expect(data.slice(0, 4)).toEqual([[50], [1.1], [0.32], [2.05]]);
    expect(range[1]).toBeCloseTo(2.5 * 2.05, 12);
  });
});
