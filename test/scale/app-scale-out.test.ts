/**
 * The daemon in scale-out mode, booted through buildApp: input from the partition stream, estimates
 * out over MQTT through the NATS server's MQTT listener, readiness and metrics that include the
 * partitions, and a stop that commits final snapshots and releases every partition.
 */
import { Kvm } from '@nats-io/kv';
import mqtt from 'mqtt';
import pino from 'pino';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildApp, type App, type StartedApp } from '../../src/app.js';
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { parseConfig } from '../../src/config/load-config.js';
import { decodeOwnerRecord, ownerKey } from '../../src/adapters/nats/owner-record.js';
import { startNatsServer, type NatsTestServer } from './nats-test-server.js';
import { devicePublisher, PARTITIONS, testClient, testMappings, tugName, until, yardTraffic, type NatsConnection } from './scale-fixtures.js';

const ENTITIES = 12;

let server: NatsTestServer;
let nc: NatsConnection;
let app: App;
let started: StartedApp;
let listener: mqtt.MqttClient;
const estimated = new Set<string>();

beforeAll(async () => {
  server = await startNatsServer(testMappings());
  ({ nc } = await testClient(server.url));
  const parsed = parseConfig({
    broker: { url: server.mqttUrl, protocolVersion: 4, clientId: 'statecast-scale-app' },
    http: { port: 0 },
    checkpoint: { enabled: true, directory: '/nonexistent/statecast-must-not-write-here' },
    scaleOut: { servers: [server.url], partitions: PARTITIONS, replicas: 1, ordinal: 0, readyPendingBelow: 1, snapshotIntervalS: 0.5, leaseMs: 3000, renewMs: 300 },
    estimators: [yardEstimatorInput()],
  }, {});
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  app = buildApp(parsed.config, { logger: pino({ level: process.env['SCALE_TEST_LOG'] ?? 'silent' }) });
  started = await app.start();
  await until(() => app.ready(), 'the daemon ready');
  listener = await mqtt.connectAsync(server.mqttUrl, { protocolVersion: 4, clientId: 'estimate-listener' });
  listener.on('message', (topic) => void estimated.add(topic.split('/')[2] ?? ''));
  await listener.subscribeAsync('statecast/yard/+/estimate', { qos: 0 });
  const devices = await devicePublisher(server.mqttUrl);
  await devices.publish(yardTraffic(ENTITIES, 5));
  await devices.close();
  await until(() => estimated.size === ENTITIES, 'an estimate for every vehicle on MQTT');
});

afterAll(async () => {
  await listener?.endAsync();
  await app?.stop();
  await nc?.close();
  await server?.stop();
});

describe('the daemon in scale-out mode', () => {
  it('estimates every vehicle from the partition stream and publishes on MQTT', () => {
    expect([...estimated].sort()).toEqual(Array.from({ length: ENTITIES }, (_, i) => tugName(i + 1)));
  });

  it('reports the partitions in its readiness probe', async () => {
    const res = await fetch(`${started.httpUrl}readyz`);
    expect(res.status).toBe(200);
    expect(await res.json()).toMatchObject({ status: 'ready', checks: { broker: true, partitions: true } });
  });

  it('exposes the partition metrics, with no config drift', async () => {
    const text = await (await fetch(`${started.httpUrl}metrics`)).text();
    expect(text).toMatch(/^statecast_scale_out_ready 1$/m);
    expect(text).toMatch(/^statecast_partitions\{phase="consuming"\} 64$/m);
    expect(text).toMatch(/^statecast_partition_config_drift_total 0$/m);
  });

  it('commits final snapshots and releases every partition on stop', async () => {
    await app.stop();
    const kv = await new Kvm(nc).open('statecast-owners');
    const records = await Promise.all(Array.from({ length: PARTITIONS }, async (_, p) => decodeOwnerRecord((await kv.get(ownerKey(p)))!.value)!));
    expect(records.every((r) => r.state === 'released')).toBe(true);
    expect(records.filter((r) => r.snapshot !== null).length).toBeGreaterThan(0);
  });
});
