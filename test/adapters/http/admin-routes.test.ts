import { afterEach, describe, expect, it } from 'vitest';
import { createDaemonMetrics, type DaemonMetrics } from '../../../src/adapters/metrics/daemon-metrics.js';
import { acceptedEvent } from '../../helpers/fake-engine-view.js';
import { parsePrometheusText, sampleValue } from '../../helpers/prometheus-text.js';
import { rawRequest, startAdmin, stopAllAdmins } from './http-fixture.js';

let metrics: DaemonMetrics | null = null;
afterEach(async () => {
  metrics?.stop();
  metrics = null;
  await stopAllAdmins();
});

describe('admin HTTP server: metrics and probes', () => {
  it('serves /metrics in the registry\'s content type as strictly parseable text', async () => {
    const { base, registry, view } = await startAdmin();
    metrics = createDaemonMetrics({ registry, view, brokerConnected: () => true });
    metrics.start();
    const res = await fetch(`${base}/metrics`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe(registry.contentType);
    const families = parsePrometheusText(await res.text(), { requirePrefix: 'statecast_' });
    expect(sampleValue(families, 'statecast_tracks', { estimator: 'yard' })).toBe(2);
  });

  it('shows counters moved by engine events on the next scrape', async () => {
    const { base, registry, view } = await startAdmin();
    metrics = createDaemonMetrics({ registry, view, brokerConnected: () => true });
    metrics.start();
    view.events.emit('measurement:accepted', acceptedEvent());
    view.events.emit('measurement:accepted', acceptedEvent());
    const families = parsePrometheusText(await (await fetch(`${base}/metrics`)).text());
    const labels = { estimator: 'tanks', sensor: 'level', late: 'false' };
    expect(sampleValue(families, 'statecast_measurements_accepted_total', labels)).toBe(2);
  });

  it('answers /healthz with alive', async () => {
    const { base } = await startAdmin();
    const res = await fetch(`${base}/healthz`);
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ status: 'alive' });
  });

  it('answers /readyz with 200 and the checks when ready', async () => {
    const { base } = await startAdmin();
    const res = await fetch(`${base}/readyz`);
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ status: 'ready', checks: { broker: true, config: true } });
  });

  it('answers /readyz with 503 and the failing check when not ready', async () => {
    const { base, readiness } = await startAdmin();
    readiness.current = { ready: false, checks: { broker: false, config: true } };
    const res = await fetch(`${base}/readyz`);
    expect(res.status).toBe(503);
    expect(await res.json()).toEqual({ status: 'not-ready', checks: { broker: false, config: true } });
  });

  it('answers HEAD like GET without a body', async () => {
    const { base } = await startAdmin();
    const res = await fetch(`${base}/healthz`, { method: 'HEAD' });
    expect(res.status).toBe(200);
    expect(res.headers.get('content-length')).toBe(String('{"status":"alive"}'.length));
    expect(await res.text()).toBe('');
  });
});

describe('admin HTTP server: errors', () => {
  it('answers an unknown path with a JSON NOT_FOUND', async () => {
    const { base } = await startAdmin();
    const res = await fetch(`${base}/api/v2/tracks`);
    expect(res.status).toBe(404);
    expect(res.headers.get('content-type')).toMatch(/^application\/json/);
    expect(((await res.json()) as { error: { code: string } }).error.code).toBe('NOT_FOUND');
  });

  it('refuses a method the path does not take with 405 and an Allow header', async () => {
    const { base } = await startAdmin();
    const res = await fetch(`${base}/healthz`, { method: 'DELETE' });
    expect(res.status).toBe(405);
    expect(res.headers.get('allow')).toBe('GET, HEAD');
    expect(((await res.json()) as { error: { code: string } }).error.code).toBe('METHOD_NOT_ALLOWED');
  });

  it('refuses a declared body above 16 KiB with 413', async () => {
    const { base } = await startAdmin();
    const size = 16 * 1024 + 1;
    const reply = await rawRequest(base, '/healthz', { headers: { 'Content-Length': size } }, 'x'.repeat(size));
    expect(reply.status).toBe(413);
    expect(JSON.parse(reply.body)).toMatchObject({ error: { code: 'PAYLOAD_TOO_LARGE' } });
  });

  it('answers malformed percent-encoding with BAD_PATH', async () => {
    const { base } = await startAdmin();
    const reply = await rawRequest(base, '/api/v1/tracks/yard/%E0%A4%A');
    expect(reply.status).toBe(400);
    expect(JSON.parse(reply.body)).toMatchObject({ error: { code: 'BAD_PATH' } });
  });

  it('marks every answer nosniff', async () => {
    const { base } = await startAdmin();
    const res = await fetch(`${base}/nowhere`);
    await res.text();
    expect(res.headers.get('x-content-type-options')).toBe('nosniff');
  });
});
