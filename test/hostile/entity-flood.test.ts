import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import type { Logger } from 'pino';
import { Registry } from 'prom-client';
import { describe, expect, it } from 'vitest';
import { createDaemonMetrics } from '../../src/adapters/metrics/daemon-metrics.js';
import { parseConfig } from '../../src/config/load-config.js';
import { wireEngineLogging } from '../../src/daemon/engine-logging.js';
import { Engine } from '../../src/engine/engine.js';

setFlagsFromString('--expose-gc');
const gc = runInNewContext('gc') as () => void;

const CAP = 1000;
const FLOOD = 50_000;
const ARRIVAL_MS = Date.UTC(2026, 0, 12, 8, 0, 0);

/** Heap in use after two full collections (the second catches what the first only finalized). */
function settledHeapBytes(): number {
  gc();
  gc();
  return process.memoryUsage().heapUsed;
}

function tankName(i: number): string {
  return `tank-${String(i + 1).padStart(5, '0')}`;
}

describe('hostile input: a flood of new entities', () => {
  it(`holds the track count at the cap, counts ${FLOOD} entity-cap refusals and keeps the heap bounded`, { timeout: 120_000 }, async () => {
    const result = parseConfig({
      estimators: [{
        name: 'tanks',
        model: { type: 'random-walk', states: ['level'], q: 1e-4 },
        entities: { max: CAP, idleEvictS: 3600 },
        sensors: {
          level: {
            topic: 'farm/{tank}/level',
            decode: { format: 'json', values: ['level_m'], time: 't', sequence: 'seq' },
            measurement: { type: 'linear', reads: { level: 1 }, sigma: 0.02 },
          },
        },
      }],
    }, {});
    if (!result.ok) throw new Error(JSON.stringify(result.issues));
    // The engine as the daemon wires it: logs and metrics subscribed, so their memory counts too.
    const engine = new Engine(result.config.estimators, { publish: () => {} });
    let warnings = 0;
    const logger = { info: () => {}, warn: () => void (warnings += 1), error: () => {}, debug: () => {} } as unknown as Logger;
    const unwire = wireEngineLogging(engine.events, logger, () => ARRIVAL_MS);
    const registry = new Registry();
    const metrics = createDaemonMetrics({ registry, view: engine, brokerConnected: () => true, defaultMetrics: false });
    metrics.start();
    let capRefusals = 0;
    let created = 0;
    engine.events.on('measurement:rejected', (e) => void (e.reason === 'entity-cap' && (capRefusals += 1)));
    engine.events.on('track:created', () => void (created += 1));

    const send = (i: number): void => {
      const payload = Buffer.from(`{"level_m":${2 + (i % 7) * 0.1},"t":${ARRIVAL_MS / 1000 - 1},"seq":${i}}`);
      engine.handleMessage(`farm/${tankName(i)}/level`, payload, ARRIVAL_MS);
    };
    for (let i = 0; i < CAP; i++) send(i);
    expect(engine.trackCount('tanks')).toBe(CAP);
    // Warm up the refusal path (code, the log limiter's table) before measuring.
    for (let i = CAP; i < CAP + 10_000; i++) send(i);
    const metricsBytesBefore = (await registry.metrics()).length;
    const heapBefore = settledHeapBytes();
    capRefusals = 0;

    for (let i = CAP + 10_000; i < CAP + 10_000 + FLOOD; i++) send(i);

    const heapAfter = settledHeapBytes();
    const growthBytes = heapAfter - heapBefore;
    const metricsBytesAfter = (await registry.metrics()).length;
    expect(engine.trackCount('tanks')).toBe(CAP);
    expect(created).toBe(CAP);
    expect(capRefusals).toBe(FLOOD);
    // Nothing is kept per refused entity: 50,000 refusals may not cost more than 4 MB (80 bytes
    // each); a leak of one small string per refusal would already be about that.
    expect(growthBytes).toBeLessThan(4 * 1024 * 1024);
    // The rejection counter's labels do not grow with the number of topics.
    expect(Math.abs(metricsBytesAfter - metricsBytesBefore)).toBeLessThan(1024);
    console.log(`entity flood: ${FLOOD} new entities past a cap of ${CAP}: heap ${(growthBytes / 1024).toFixed(0)} KiB after gc, /metrics ${metricsBytesAfter} bytes, ${warnings} log warnings`);
    metrics.stop();
    unwire();
  });
});
