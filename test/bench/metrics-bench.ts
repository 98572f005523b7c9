/**
 * The cost of one /metrics scrape with 10,000 yard tracks (two sensors each) held by a real
 * Engine, no broker: `registry.metrics()` as the HTTP route calls it, which runs synchronously
 * on the event loop. Figures: the median scrape in ms and the exposition size in KiB, with the
 * per-entity series capped at the configured default and with the cap at the track count (every
 * entity exposed), so the cost of the text itself stays visible. Figures only, never assertions.
 */
import { Registry } from 'prom-client';
import { createDaemonMetrics, type DaemonMetricsOptions } from '../../src/adapters/metrics/daemon-metrics.js';
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { parseConfig } from '../../src/config/load-config.js';
import { Engine } from '../../src/engine/engine.js';
import { yardTraffic } from '../scale/scale-fixtures.js';

const TRACKS = 10_000;
const ROUNDS = 3; // enough for initialized tracks with a NIS window and an innovation ratio
const SCRAPES = 7;

/** An engine holding TRACKS yard tracks fed a few rounds of GNSS and wheel readings. */
function yardEngine(): Engine {
  const result = parseConfig({ estimators: [yardEstimatorInput()] }, {});
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  const engine = new Engine(result.config.estimators, { publish() {} });
  const encoder = new TextEncoder();
  const arrivalMs = Date.now();
  for (const m of yardTraffic(TRACKS, ROUNDS)) engine.handleMessage(m.topic, encoder.encode(m.payload), arrivalMs);
  if (engine.trackCount('yard') !== TRACKS) throw new Error(`expected ${TRACKS} tracks, got ${engine.trackCount('yard')}`);
  return engine;
}

/** Median ms of SCRAPES scrapes after one warm-up, and the size of the last exposition. */
async function scrapeFigures(engine: Engine, extra: Partial<DaemonMetricsOptions>): Promise<{ ms: number; kib: number }> {
  const registry = new Registry();
  const metrics = createDaemonMetrics({ registry, view: engine, brokerConnected: () => true, ...extra });
  metrics.start();
  let text = await registry.metrics();
  const samples: number[] = [];
  for (let i = 0; i < SCRAPES; i++) {
    const t0 = process.hrtime.bigint();
    text = await registry.metrics();
    samples.push(Number(process.hrtime.bigint() - t0) / 1e6);
  }
  metrics.stop();
  samples.sort((a, b) => a - b);
  return { ms: samples[Math.floor(samples.length / 2)]!, kib: Buffer.byteLength(text) / 1024 };
}

/** The metrics section of `npm run bench`. */
export async function benchMetrics(): Promise<Record<string, number>> {
  const engine = yardEngine();
  const capped = await scrapeFigures(engine, {});
  const all = await scrapeFigures(engine, { maxEntitiesPerEstimator: TRACKS } as Partial<DaemonMetricsOptions>);
  return {
    'metrics.scrape_ms_10k_tracks': capped.ms,
    'metrics.scrape_kib_10k_tracks': capped.kib,
    'metrics.scrape_ms_10k_tracks_uncapped': all.ms,
    'metrics.scrape_kib_10k_tracks_uncapped': all.kib,
  };
}
