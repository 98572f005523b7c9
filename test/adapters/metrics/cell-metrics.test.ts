import { Counter, Histogram, Registry } from 'prom-client';
import { describe, expect, it } from 'vitest';
import { createCellCounter } from '../../../src/adapters/metrics/cell-counter.js';
import { CellHistogram } from '../../../src/adapters/metrics/cell-histogram.js';
import { LabelCells } from '../../../src/adapters/metrics/label-cells.js';
import { parsePrometheusText } from '../../helpers/prometheus-text.js';

const BUCKETS = [0.001, 0.01, 0.1, 1, 10];

/** Deterministic values spread over every bucket, the overflow, and exact bounds. */
function latencies(): number[] {
  const out: number[] = [0, 0.001, 0.01, 1, 10, 12, 60];
  let x = 0.37;
  for (let i = 0; i < 200; i++) {
    x = (x * 7919 + 0.123) % 1;
    out.push(x ** 4 * 20);
  }
  return out;
}

describe('label cells', () => {
  it('returns the same cell for the same label values and a new one otherwise', () => {
    const cells = new LabelCells(['estimator', 'sensor'], (labels) => ({ labels, value: 0 }));
    const a = cells.cell('yard', 'gnss');
    expect(cells.cell('yard', 'gnss')).toBe(a);
    expect(cells.cell('yard', 'wheel')).not.toBe(a);
    expect(cells.cell('tank-farm', 'gnss')).not.toBe(a);
    expect(a.labels).toEqual({ estimator: 'yard', sensor: 'gnss' });
    expect(cells.cells()).toHaveLength(3);
  });

  it('keeps values apart that a joined key would confuse', () => {
    const cells = new LabelCells(['a', 'b'], (labels) => ({ labels }));
    expect(cells.cell('x,y', 'z')).not.toBe(cells.cell('x', 'y,z'));
  });

  it('refuses more than three label names', () => {
    expect(() => new LabelCells(['a', 'b', 'c', 'd'], () => 0)).toThrow(/one to three/);
  });
});

describe('cell counter', () => {
  it('exposes the same series as a prom-client counter fed the same increments', async () => {
    const mine = new Registry();
    const theirs = new Registry();
    const cells = createCellCounter({ name: 'c_total', help: 'h', labelNames: ['estimator', 'sensor', 'late'], registry: mine });
    const reference = new Counter({ name: 'c_total', help: 'h', labelNames: ['estimator', 'sensor', 'late'], registers: [theirs] });
    const sets = [['yard', 'gnss', 'false'], ['yard', 'gnss', 'true'], ['tank-farm', 'level', 'false']] as const;
    for (let i = 0; i < 100; i++) {
      const [estimator, sensor, late] = sets[(i * i) % 3]!;
      cells.cell(estimator, sensor, late).value += 1;
      reference.inc({ estimator, sensor, late });
    }
    expect(sortLines(await mine.metrics())).toEqual(sortLines(await theirs.metrics()));
  });
});

describe('cell histogram', () => {
  it('exposes the same series as a prom-client histogram fed the same values', async () => {
    const mine = new Registry();
    const theirs = new Registry();
    const h = new CellHistogram({ name: 'lat_seconds', help: 'h', labelNames: ['estimator'], buckets: BUCKETS, registry: mine });
    const reference = new Histogram({ name: 'lat_seconds', help: 'h', labelNames: ['estimator'], buckets: BUCKETS, registers: [theirs] });
    latencies().forEach((v, i) => {
      const estimator = i % 3 === 0 ? 'tank-farm' : 'yard';
      h.cells.cell(estimator).observe(v);
      reference.observe({ estimator }, v);
    });
    expect(sortLines(await mine.metrics())).toEqual(sortLines(await theirs.metrics()));
    expect(parsePrometheusText(await mine.metrics()).get('lat_seconds')?.type).toBe('histogram');
  });

  it('ignores a value that is not finite', async () => {
    const registry = new Registry();
    const h = new CellHistogram({ name: 'lat_seconds', help: 'h', labelNames: ['estimator'], buckets: BUCKETS, registry });
    h.cells.cell('yard').observe(Number.NaN);
    h.cells.cell('yard').observe(Infinity);
    h.cells.cell('yard').observe(0.5);
    expect(await registry.metrics()).toContain('lat_seconds_count{estimator="yard"} 1');
  });

  it('zeroes every cell on reset', async () => {
    const registry = new Registry();
    const h = new CellHistogram({ name: 'lat_seconds', help: 'h', labelNames: ['estimator'], buckets: BUCKETS, registry });
    h.cells.cell('yard').observe(0.5);
    registry.resetMetrics();
    const text = await registry.metrics();
    expect(text).toContain('lat_seconds_count{estimator="yard"} 0');
    expect(text).toContain('lat_seconds_sum{estimator="yard"} 0');
  });
});

function sortLines(text: string): string[] {
  return text.split('\n').filter((l) => l !== '').sort();
}
