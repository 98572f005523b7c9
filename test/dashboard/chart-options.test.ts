import { describe, expect, it } from 'vitest';
import { sensorColour, tickText } from '../../src/dashboard/chart-options.js';

describe('tickText', () => {
  it('gives as many decimals as the tick step needs', () => {
    expect([7.215, 7.22].map((v) => tickText(v, 0.005))).toEqual(['7.215', '7.220']);
  });

  it('adds a decimal for a step such as 2.5', () => {
    expect([0, 2.5, 5].map((v) => tickText(v, 2.5))).toEqual(['0.0', '2.5', '5.0']);
  });

  it('uses exponent form for steps below a millionth', () => {
    expect(tickText(3e-8, 1e-8)).toBe('3.0e-8');
  });

  it('gives an empty label for a tick uPlot leaves out', () => {
    expect(tickText(null, 1)).toBe('');
  });
});

describe('sensorColour', () => {
  it('gives each of the first five sensors a colour of its own', () => {
    expect(new Set([0, 1, 2, 3, 4].map(sensorColour)).size).toBe(5);
  });
});
