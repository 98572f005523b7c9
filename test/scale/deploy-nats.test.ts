/**
 * The scale-out deployment files agree with each other and with the daemon: the shipped
 * nats-server configuration loads, its mappings are the ones the daemon's configuration implies
 * and put every vehicle where our hash says, the NATS ConfigMap carries the same configuration,
 * and the StatefulSet's replica count matches scaleOut.replicas.
 */
import { readFileSync } from 'node:fs';
import { jetstreamManager } from '@nats-io/jetstream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parse as parseYaml, parseAllDocuments } from 'yaml';
import { partitionOfTokens } from '../../src/adapters/nats/fnv1a-partition.js';
import { natsMappingsBlock, sensorPatternsOf } from '../../src/adapters/nats/nats-server-config.js';
import { partitionStreamConfig } from '../../src/adapters/nats/jetstream-provisioning.js';
import { parseConfig } from '../../src/config/load-config.js';
import { startNatsServerWith, type NatsTestServer } from './nats-test-server.js';
import { devicePublisher, provision, readStream, scaleConfig, lastSeq, testClient, tugName, until, yardTraffic, type NatsConnection } from './scale-fixtures.js';

const read = (path: string): string => readFileSync(new URL(`../../${path}`, import.meta.url), 'utf8');
const natsConf = read('deploy/nats/nats-server.conf');
type K8s = { kind: string; metadata: { name: string }; spec?: { replicas?: number }; data?: Record<string, string> };
const docs = (path: string): K8s[] => parseAllDocuments(read(path)).map((d) => d.toJS() as K8s);
const statecastDocs = docs('deploy/nats/statecast-scale-out.yaml');
const natsDocs = docs('deploy/nats/nats.yaml');
const daemonConfig = (() => {
  const text = statecastDocs.find((d) => d.kind === 'ConfigMap')!.data!['statecast.yaml']!;
  const result = parseConfig(parseYaml(text), {});
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.config;
})();

/** Configuration lines without comments and blank lines, trimmed. */
const meaningful = (text: string): string[] => text.split('\n').map((l) => l.replace(/\s+#.*$/, '').replace(/^\s*#.*$/, '').trim()).filter((l) => l !== '');

let server: NatsTestServer;
let nc: NatsConnection;

beforeAll(async () => {
  // The shipped file, with its listeners moved to free loopback ports and its store to a temp dir.
  server = await startNatsServerWith((ports) => {
    const text = natsConf
      .replace('listen: 0.0.0.0:4222', `listen: 127.0.0.1:${ports.port}`)
      .replace('listen: 0.0.0.0:1883', `listen: 127.0.0.1:${ports.mqttPort}`)
      .replace('http: 0.0.0.0:8222', `http: 127.0.0.1:${ports.httpPort}`)
      .replace('store_dir: /data/jetstream', `store_dir: ${ports.storeDir}`);
    if (text.includes('0.0.0.0')) throw new Error('a listener of the shipped config was not moved to loopback');
    return text;
  }, { SERVER_NAME: 'statecast-deploy-test' }, true);
  ({ nc } = await testClient(server.url));
});

afterAll(async () => {
  await nc?.close();
  await server?.stop();
});

describe('the scale-out deployment files', () => {
  it('map exactly the topics of the daemon configuration, with its partition count', () => {
    const scaleOut = daemonConfig.scaleOut!;
    const block = natsMappingsBlock(sensorPatternsOf(daemonConfig.estimators), scaleOut.partitions, scaleOut.subjectPrefix);
    expect(meaningful(natsConf).join('\n')).toContain(meaningful(block).join('\n'));
  });

  it('ship the same server configuration in the NATS ConfigMap', () => {
    const embedded = natsDocs.find((d) => d.kind === 'ConfigMap')!.data!['nats-server.conf']!;
    expect(meaningful(embedded)).toEqual(meaningful(natsConf));
  });

  it('describe the stream the daemon creates for that configuration', () => {
    expect(JSON.parse(read('deploy/nats/partition-stream.json'))).toEqual(partitionStreamConfig(daemonConfig.scaleOut!));
  });

  it('run as many StatefulSet replicas as scaleOut.replicas says', () => {
    const set = statecastDocs.find((d) => d.kind === 'StatefulSet')!;
    expect(set.spec!.replicas).toBe(daemonConfig.scaleOut!.replicas);
    expect(daemonConfig.scaleOut!.ordinal).toBe('hostname');
  });

  it('put every vehicle published over MQTT into the partition our hash predicts', async () => {
    const jsm = await jetstreamManager(nc);
    await provision(jsm, scaleConfig(server.url));
    const devices = await devicePublisher(server.mqttUrl);
    const sent = await devices.publish(yardTraffic(20, 2));
    await devices.close();
    await until(async () => (await lastSeq(jsm)) >= sent, 'the messages in the stream');
    const stored = await readStream(jsm, sent);
    for (const m of stored) {
      const [, partition, , vehicle] = m.subject.split('.');
      expect([vehicle, Number(partition)]).toEqual([vehicle, partitionOfTokens([vehicle!], 64)]);
    }
    expect(new Set(stored.map((m) => m.subject.split('.')[3]))).toEqual(new Set(Array.from({ length: 20 }, (_, i) => tugName(i + 1))));
  });
});
