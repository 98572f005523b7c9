import { describe, expect, it } from 'vitest';
import { ByteBlockWriter } from '../../src/tools/byte-block-writer.js';
import { compactNumber, writeCompactNumber, writeTimeSeconds } from '../../src/tools/compact-number.js';
import { EstimateLineFormatter, PendingNis } from '../../src/tools/estimate-line.js';
import { RecordingTicker } from '../../src/tools/recording-ticker.js';
import { decimateMinMax } from '../../src/tools/series-decimation.js';
import { compileTopicFilter, topicMatches } from '../../src/tools/topic-filter.js';
import { createPrng } from '../../src/simulation/prng.js';

function text(writer: ByteBlockWriter): string {
  return Buffer.concat(writer.takeAll()).toString('utf8');
}

describe('compact numbers', () => {
  it('keep nine significant digits and parse back within half a unit of the ninth', () => {
    const prng = createPrng('compact-number');
    for (let i = 0; i < 20_000; i++) {
      const v = (prng.nextFloat() - 0.3) * 10 ** Math.floor(prng.nextUniform(-40, 40));
      const back = Number(compactNumber(v));
      expect(Math.abs(back - v)).toBeLessThanOrEqual(5.000001e-9 * Math.abs(v));
    }
  });

  it('write the same bytes as the text form, including exponents and rounding carries', () => {
    const values = [0, 1, -1, 0.25, 100, 1e21, 1e-7, 123456789, 1234567891, 9.9999999999, 999999999.6, -0.000001, 4.65187896409318e-10, 5e-324, 1e300, NaN, -Infinity];
    const prng = createPrng('compact-bytes');
    for (let i = 0; i < 2000; i++) values.push((prng.nextFloat() - 0.5) * 10 ** Math.floor(prng.nextUniform(-30, 30)));
    const buf = new Uint8Array(64);
    for (const v of values) expect(Buffer.from(buf.subarray(0, writeCompactNumber(buf, 0, v))).toString('latin1')).toBe(compactNumber(v));
  });

  it('read as String does for values of nine digits or fewer', () => {
    for (const v of [0.1, 7.208, -0.0036, 25, 1.5e-8, 6.0516, 3e+25]) expect(compactNumber(v)).toBe(String(v));
  });
});

describe('estimate lines', () => {
  const formatter = new EstimateLineFormatter('yard', ['east', 'v_east']);
  const x = Float64Array.from([12.5, -0.25]);
  const P = Float64Array.from([4, 0.5, 0.5, 1 / 3]);

  it('hold time, estimator, entity, kind, state, covariance and the pending NIS entries', () => {
    const nis = new PendingNis();
    nis.add('{"sensor":"wheel","t":', 1767225600.1, 0.5);
    nis.add('{"sensor":"gnss","t":', 1767225600, Number.NaN);
    const out = new ByteBlockWriter();
    formatter.write(out, 1767225600.1, JSON.stringify('tug-"7"'), 'filtered', x, P, nis);
    formatter.write(out, 1767225600.2, '"tug-01"', 'smoothed', x, P, null);
    const [first, second] = text(out).split('\n');
    expect(JSON.parse(first!)).toEqual({
      t: 1767225600.1, estimator: 'yard', entity: 'tug-"7"', kind: 'filtered',
      state: { east: 12.5, v_east: -0.25 },
      covariance: [[4, 0.5], [0.5, 0.333333333]],
      nis: [{ sensor: 'wheel', t: 1767225600.1, nis: 0.5 }, { sensor: 'gnss', t: 1767225600, nis: null }],
    });
    expect(JSON.parse(second!)).toMatchObject({ t: 1767225600.2, kind: 'smoothed', nis: [] });
  });

  it('write times with the text String gives, on and off whole milliseconds', () => {
    const prng = createPrng('time-text');
    const times = [0, 1767225600, 1767225600.1, 1767225600.05, 1767225600.999, 1e12 + 0.5, -3.5, 12.3456789, Number.NaN];
    for (let i = 0; i < 5000; i++) times.push(Math.round(prng.nextUniform(1.7e9, 1.8e9) * 1000) / 1000, prng.nextUniform(0, 1e5));
    const buf = new Uint8Array(64);
    for (const t of times) {
      const expected = Number.isFinite(t) ? String(t) : 'null';
      expect(Buffer.from(buf.subarray(0, writeTimeSeconds(buf, 0, t))).toString('latin1')).toBe(expected);
    }
  });
});

describe('topic filters', () => {
  it.each([
    ['farm/+/level', 'farm/tank-a/level', true],
    ['farm/+/level', 'farm/tank-a/pressure', false],
    ['sim/truth/#', 'sim/truth/yard/tug-01', true],
    ['sim/truth/#', 'sim/truth', true],
    ['a/+', 'a/b/c', false],
    ['#', '$SYS/broker/uptime', false],
    ['$share/rec/yard/+/gnss', 'yard/tug-02/gnss', true],
  ])('%s matching %s is %s', (filter, topic, expected) => {
    expect(topicMatches(compileTopicFilter(filter), topic)).toBe(expected);
  });
});

describe('min/max decimation', () => {
  it('keeps each bucket’s extremes so a single spike survives', () => {
    const n = 100_000;
    const y = (i: number): number => (i === 54_321 ? 50 : Math.sin(i / 1000));
    const d = decimateMinMax((i) => i, y, n, { t0: 0, t1: n - 1 }, 1000);
    expect(d.t.length).toBeLessThanOrEqual(2000);
    expect(Math.max(...d.y)).toBe(50);
    expect(d.t).toEqual([...d.t].sort((a, b) => a - b));
  });
});

describe('recording ticker', () => {
  it('runs each job at every elapsed period of recording time, in time order', () => {
    const runs: string[] = [];
    const ticker = new RecordingTicker([
      { periodMs: 1000, run: (t) => runs.push(`h${t}`) },
      { periodMs: 1500, run: (t) => runs.push(`e${t}`) },
    ]);
    for (const t of [0, 400, 3100, 3200]) ticker.advance(t);
    expect(runs).toEqual(['h1000', 'e1500', 'h2000', 'h3000', 'e3000']);
  });
});
