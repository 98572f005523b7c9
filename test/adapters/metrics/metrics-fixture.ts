/** Builds the metrics adapter on a fresh registry over a fake engine with tank and yard tracks. */
import { Registry } from 'prom-client';
import {
  createDaemonMetrics, type DaemonMetrics, type DaemonMetricsOptions,
} from '../../../src/adapters/metrics/daemon-metrics.js';
import { FakeEngineView, fakeSensor, fakeTrack } from '../../helpers/fake-engine-view.js';
import { parsePrometheusText } from '../../helpers/prometheus-text.js';

const started: DaemonMetrics[] = [];

/** Stops every adapter setupMetrics started (for afterEach). */
export function stopAllMetrics(): void {
  for (const m of started.splice(0)) m.stop();
}

/** A started adapter, its fake view and a scrape that parses the output strictly. */
export function setupMetrics(extra: Partial<DaemonMetricsOptions> = {}) {
  const view = new FakeEngineView([
    fakeTrack('tanks', 'tank-a'),
    fakeTrack('tanks', 'tank-b', { health: { state: 'degraded', reasons: ['nis-high'] } }),
    fakeTrack('yard', 'tug-01', {
      stateNames: ['eastM', 'northM'],
      traceP: 2.5,
      sensors: [fakeSensor('gnss', { innovationRatio: [0.3, -1.2], health: 'failed' }), fakeSensor('wheel')],
    }),
  ]);
  const registry = new Registry();
  const broker = { connected: true };
  const metrics = createDaemonMetrics({ registry, view, brokerConnected: () => broker.connected, ...extra });
  metrics.start();
  started.push(metrics);
  const scrape = async () => parsePrometheusText(await registry.metrics(), { requirePrefix: 'statecast_' });
  return { view, registry, metrics, scrape, broker };
}
