import { describe, expect, it } from 'vitest';
import { RingSeries } from '../../src/dashboard/ring-series.js';

describe('RingSeries', () => {
  it('keeps only the newest points once the ring is full', () => {
    const s = new RingSeries(1, 3, 1e9);
    for (let t = 1; t <= 5; t++) s.push(t, [10 * t]);
    expect(s.toArrays()).toEqual([[3, 4, 5], [30, 40, 50]]);
  });

  it('leaves out points older than maxAgeS behind the newest', () => {
    const s = new RingSeries(1, 100, 10);
    for (const t of [0, 5, 12, 20]) s.push(t, [t]);
    expect(s.toArrays()[0]).toEqual([12, 20]);
  });

  it('leaves out points before sinceS', () => {
    const s = new RingSeries(1, 100, 1e9);
    for (const t of [1, 2, 3, 4]) s.push(t, [t]);
    expect(s.toArrays([0], 3)[0]).toEqual([3, 4]);
  });

  it('drops a point older than the newest', () => {
    const s = new RingSeries(1, 10, 1e9);
    s.push(5, [1]);
    expect(s.push(4, [2])).toBe(false);
    expect(s.toArrays()).toEqual([[5], [1]]);
  });

  it('replaces the newest point when one arrives at the same time', () => {
    const s = new RingSeries(1, 10, 1e9);
    s.push(5, [1]);
    s.push(5, [2]);
    expect(s.toArrays()).toEqual([[5], [2]]);
  });

  it('returns null for missing, null and non-finite values', () => {
    const s = new RingSeries(3, 10, 1e9);
    s.push(1, [null, Infinity]);
    expect(s.toArrays()).toEqual([[1], [null], [null], [null]]);
  });

  it('returns only the picked columns, in the order picked', () => {
    const s = new RingSeries(3, 10, 1e9);
    s.push(1, [7, 8, 9]);
    expect(s.toArrays([2, 0])).toEqual([[1], [9], [7]]);
  });

  it('reports the oldest and newest times and the newest value', () => {
    const s = new RingSeries(1, 2, 1e9);
    for (const t of [1, 2, 3]) s.push(t, [t * 2]);
    expect([s.firstTimeS, s.lastTimeS, s.lastValue(0)]).toEqual([2, 3, 6]);
  });
});
