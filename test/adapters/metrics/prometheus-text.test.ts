import { describe, expect, it } from 'vitest';
import { parsePrometheusText, sampleValue } from '../../helpers/prometheus-text.js';

const GOOD = [
  '# HELP statecast_a_total Things, with a \\\\ and a \\n in help.',
  '# TYPE statecast_a_total counter',
  'statecast_a_total{estimator="tanks",entity="tank-\\"a\\"\\\\x\\ny"} 3',
  '',
  '# TYPE statecast_h_seconds histogram',
  'statecast_h_seconds_bucket{le="0.1",estimator="yard"} 1',
  'statecast_h_seconds_bucket{le="+Inf",estimator="yard"} 2',
  'statecast_h_seconds_sum{estimator="yard"} 0.35',
  'statecast_h_seconds_count{estimator="yard"} 2',
  '# TYPE statecast_g gauge',
  'statecast_g Nan',
  '',
].join('\n');

describe('parsePrometheusText', () => {
  it('reads help, types, escaped label values and special values', () => {
    const families = parsePrometheusText(GOOD, { requirePrefix: 'statecast_' });
    expect(families.get('statecast_a_total')?.help).toBe('Things, with a \\ and a \n in help.');
    expect(families.get('statecast_h_seconds')?.type).toBe('histogram');
    expect(sampleValue(families, 'statecast_a_total', { estimator: 'tanks', entity: 'tank-"a"\\x\ny' })).toBe(3);
    expect(sampleValue(families, 'statecast_g')).toBeNaN();
  });

  it.each([
    ['a sample before its TYPE', 'statecast_x 1\n'],
    ['a name without the prefix', '# TYPE other gauge\nother 1\n'],
    ['a bad value', '# TYPE statecast_x gauge\nstatecast_x one\n'],
    ['an unterminated label value', '# TYPE statecast_x gauge\nstatecast_x{a="b} 1\n'],
    ['a bad escape', '# TYPE statecast_x gauge\nstatecast_x{a="\\t"} 1\n'],
    ['a label given twice', '# TYPE statecast_x gauge\nstatecast_x{a="1",a="2"} 1\n'],
    ['a duplicate series', '# TYPE statecast_x gauge\nstatecast_x{a="1"} 1\nstatecast_x{a="1"} 2\n'],
    ['a suffix on a gauge', '# TYPE statecast_x gauge\nstatecast_x_sum 1\n'],
    ['a negative counter', '# TYPE statecast_x_total counter\nstatecast_x_total -1\n'],
    ['a split family', '# TYPE statecast_x gauge\nstatecast_x{a="1"} 1\n# TYPE statecast_y gauge\nstatecast_y 1\nstatecast_x{a="2"} 1\n'],
    ['an unknown type', '# TYPE statecast_x meter\n'],
    ['a missing final newline', '# TYPE statecast_x gauge\nstatecast_x 1'],
    ['decreasing buckets', '# TYPE statecast_h histogram\nstatecast_h_bucket{le="1"} 3\nstatecast_h_bucket{le="+Inf"} 2\nstatecast_h_count 2\n'],
    ['no +Inf bucket', '# TYPE statecast_h histogram\nstatecast_h_bucket{le="1"} 3\nstatecast_h_count 3\n'],
    ['a _count that differs from +Inf', '# TYPE statecast_h histogram\nstatecast_h_bucket{le="+Inf"} 3\nstatecast_h_count 4\n'],
  ])('refuses %s', (_, text) => {
    expect(() => parsePrometheusText(text, { requirePrefix: 'statecast_' })).toThrow();
  });
});
