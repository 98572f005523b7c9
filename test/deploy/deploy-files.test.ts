/**
 * Keeps deploy/ in step with the daemon: every file parses, and the ports, paths, probe URLs,
 * environment variables, metric names, label values and health codes it names are the ones the
 * daemon has (defaults from the config schema, overrides from ENV_OVERRIDES, metrics from the
 * metrics adapter, the image from the Dockerfile).
 */
import { existsSync } from 'node:fs';
import { dirname, join, posix, resolve } from 'node:path';
import { Registry } from 'prom-client';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parse as parseYaml } from 'yaml';
import { createAdminHttpServer, type AdminHttpServer } from '../../src/adapters/http/admin-http-server.js';
import { createDaemonMetrics, isDaemonSeriesName, MEASUREMENT_REJECTION_LABELS } from '../../src/adapters/metrics/daemon-metrics.js';
import { HEALTH_STATE_VALUE } from '../../src/adapters/metrics/track-gauges.js';
import { APP_ERRORS } from '../../src/app-errors.js';
import { ENV_OVERRIDES } from '../../src/config/env-overrides.js';
import { parseConfig } from '../../src/config/load-config.js';
import { HEALTH_REASONS } from '../../src/engine/health-change.js';
import { acceptedEvent, FakeEngineView, fakeTrack, rejectedEvent } from '../helpers/fake-engine-view.js';
import {
  DEFAULTS, DEPLOY_FILES, durationS, IMAGE, mosquittoDirectives, readRepoFile, ROOT, STOP_DEADLINE_S, UNIT,
  yamlDocuments, YAML_FILES, type KubeObject,
} from './deploy-files.js';
import { comparedValues, matchedValues, vectorSelectors } from './promql-selectors.js';
import { unitValue, unitValues } from './unit-file-parser.js';

/** Manifests are plain YAML values, checked field by field. */
type Any = any;

const OVERRIDE_NAMES = new Set(ENV_OVERRIDES.map((o) => o.name));
const compose = yamlDocuments('deploy/compose.yaml')[0] as Any;
const kube = yamlDocuments('deploy/kubernetes/statecast.yaml') as KubeObject[];
const prometheus = yamlDocuments('deploy/prometheus/prometheus.yml')[0] as Any;
const ruleFile = yamlDocuments('deploy/prometheus/statecast-alerts.yaml')[0] as Any;
const rules = (ruleFile.groups as Any[]).flatMap((g) => g.rules as Any[]);
const rule = (name: string): Any => rules.find((r) => r.alert === name);

const kind = (k: string): Any => kube.find((o) => o.kind === k);
const deployment = kind('Deployment');
const container = deployment.spec.template.spec.containers[0];
const containerEnv = (): Record<string, string> =>
  Object.fromEntries((container.env as Any[]).filter((e) => typeof e.value === 'string').map((e) => [e.name, e.value]));
const namedPort = (port: number | string): number =>
  typeof port === 'number' ? port : (container.ports as Any[]).find((p) => p.name === port).containerPort;
const mountFor = (volume: string): Any => (container.volumeMounts as Any[]).find((m) => m.name === volume);

/** Compose `source:target[:mode]` volume strings of a service, sources resolved from deploy/. */
const composeMounts = (service: string): { source: string; target: string }[] =>
  (compose.services[service].volumes as string[]).map((v) => {
    const [source, target] = v.split(':');
    return { source: source!.startsWith('.') ? resolve(ROOT, 'deploy', source!) : source!, target: target! };
  });

describe('deployment files', () => {
  it.each(YAML_FILES)('%s parses as YAML without errors or warnings', (path) => {
    expect(yamlDocuments(path).length).toBeGreaterThan(0);
  });

  it('deploy/systemd/statecast.service parses into [Unit], [Service] and [Install]', () => {
    expect([...UNIT.keys()]).toEqual(['Unit', 'Service', 'Install']);
  });

  it('name only environment overrides the daemon reads', () => {
    const named = [...DEPLOY_FILES, 'Dockerfile'].flatMap((p) => [...readRepoFile(p).matchAll(/\bSTATECAST_[A-Z_]+/g)].map((m) => m[0]));
    expect(named.length).toBeGreaterThan(0);
    expect([...new Set(named)].filter((n) => !OVERRIDE_NAMES.has(n))).toEqual([]);
  });

  it.each(DEPLOY_FILES)('%s says the estimates are advisory, not a safety function', (path) => {
    expect(readRepoFile(path)).toMatch(/advisory[\s\S]*not a safety function/i);
  });
});

describe('the daemon serves the paths the deployment files use', () => {
  let admin: AdminHttpServer;
  let base = '';
  beforeAll(async () => {
    admin = createAdminHttpServer({
      host: '127.0.0.1', port: 0, view: new FakeEngineView(), registry: new Registry(),
      readiness: () => ({ ready: true, checks: {} }),
    });
    base = (await admin.start()).url.replace(/\/$/, '');
  });
  afterAll(() => admin.stop());

  it('answers 200 on every probe, health check and scrape path', async () => {
    const paths = [
      container.livenessProbe.httpGet.path, container.readinessProbe.httpGet.path, prometheus.scrape_configs[0].metrics_path,
    ];
    expect(paths).toEqual(['/healthz', '/readyz', '/metrics']);
    const statuses = await Promise.all(paths.map(async (p: string) => (await fetch(base + p)).status));
    expect(statuses).toEqual([200, 200, 200]);
  });
});

describe('deploy/compose.yaml', () => {
  const listener = mosquittoDirectives().find(([d]) => d === 'listener')![1].split(' ');

  it('runs statecast, Mosquitto and Prometheus', () => {
    expect(Object.keys(compose.services)).toEqual(expect.arrayContaining(['statecast', 'mosquitto', 'prometheus']));
  });

  it('builds statecast from the repository\'s Dockerfile', () => {
    const { context, dockerfile } = compose.services.statecast.build;
    expect(existsSync(join(resolve(ROOT, 'deploy', context), dockerfile))).toBe(true);
    expect(resolve(ROOT, 'deploy', context)).toBe(resolve(ROOT));
  });

  it('runs Mosquitto with deploy/mosquitto/mosquitto.conf', () => {
    const mounts = composeMounts('mosquitto');
    expect(mounts).toContainEqual({ source: join(ROOT, 'deploy/mosquitto/mosquitto.conf'), target: '/mosquitto/config/mosquitto.conf' });
  });

  it('points statecast at the listener mosquitto.conf declares', () => {
    const [port, host] = listener;
    expect(compose.services.statecast.environment.STATECAST_BROKER_URL).toBe(`mqtt://${host}:${port}`);
  });

  it('shares statecast\'s network namespace with the broker, whose listener is loopback only', () => {
    expect(listener[1]).toBe('127.0.0.1');
    expect(compose.services.mosquitto.network_mode).toBe('service:statecast');
  });

  it('keeps the broker\'s database on a volume at persistence_location', () => {
    const location = mosquittoDirectives().find(([d]) => d === 'persistence_location')![1];
    const mount = composeMounts('mosquitto').find((m) => posix.normalize(`${m.target}/`) === posix.normalize(location));
    expect(mount?.source).toBeDefined();
    expect(Object.keys(compose.volumes)).toContain(mount!.source);
  });

  it('publishes the daemon\'s default HTTP port on this host\'s loopback only', () => {
    expect(compose.services.statecast.ports).toEqual([`127.0.0.1:${DEFAULTS.http.port}:${DEFAULTS.http.port}`]);
  });

  it('requires STATECAST_API_TOKEN, since the image listens on 0.0.0.0', () => {
    expect(IMAGE.env.STATECAST_HTTP_HOST).toBe('0.0.0.0');
    expect(compose.services.statecast.environment.STATECAST_API_TOKEN).toMatch(/^\$\{STATECAST_API_TOKEN:\?.+\}$/);
  });

  it('keeps checkpoints on a named volume at the image\'s state directory', () => {
    const mount = composeMounts('statecast').find((m) => m.target === IMAGE.env.STATECAST_STATE_DIR);
    expect(Object.keys(compose.volumes)).toContain(mount?.source);
  });

  it('gives statecast longer to stop than its own stop deadline', () => {
    expect(compose.services.statecast.stop_signal).toBe('SIGTERM');
    expect(durationS(compose.services.statecast.stop_grace_period)).toBeGreaterThan(STOP_DEADLINE_S);
  });

  it('mounts prometheus.yml and the alert rules where Prometheus reads them', () => {
    const mounts = composeMounts('prometheus');
    expect(mounts).toContainEqual({ source: join(ROOT, 'deploy/prometheus/prometheus.yml'), target: '/etc/prometheus/prometheus.yml' });
    const alerts = mounts.filter((m) => m.source === join(ROOT, 'deploy/prometheus/statecast-alerts.yaml')).map((m) => m.target);
    expect(prometheus.rule_files).toEqual(alerts);
  });
});

describe('deploy/prometheus/prometheus.yml', () => {
  it('scrapes statecast\'s Compose service on the daemon\'s default port', () => {
    expect(Object.keys(compose.services)).toContain('statecast');
    expect(prometheus.scrape_configs[0].static_configs[0].targets).toEqual([`statecast:${DEFAULTS.http.port}`]);
  });

  it('names the job that StatecastDown watches', () => {
    const up = vectorSelectors(rule('StatecastDown').expr).find((s) => s.metric === 'up');
    expect(up?.matchers).toEqual([{ label: 'job', op: '=', value: prometheus.scrape_configs[0].job_name }]);
  });
});

describe('deploy/kubernetes/statecast.yaml', () => {
  const configText = (): string => kind('ConfigMap').data[posix.basename(configArg())];
  const configArg = (): string => container.args[container.args.indexOf('--config') + 1];
  const secretEnv = (): Record<string, string> =>
    Object.fromEntries((container.env as Any[]).filter((e) => e.valueFrom?.secretKeyRef).map((e) => [e.name, `placeholder-${e.name.toLowerCase()}-0123456789`]));

  it('declares a ConfigMap, a PersistentVolumeClaim, a Deployment and a Service', () => {
    expect(kube.map((o) => o.kind).sort()).toEqual(['ConfigMap', 'Deployment', 'PersistentVolumeClaim', 'Service']);
  });

  it('ships a configuration the daemon accepts with the Deployment\'s environment', () => {
    const result = parseConfig(parseYaml(configText()), { ...containerEnv(), ...secretEnv() });
    expect(result.ok ? [] : result.issues).toEqual([]);
  });

  it('ships a configuration the daemon refuses to serve on 0.0.0.0 without the token', () => {
    const { STATECAST_API_TOKEN: _, ...withoutToken } = { ...containerEnv(), ...secretEnv() };
    const result = parseConfig(parseYaml(configText()), withoutToken);
    expect(result.ok ? [] : result.issues.map((i) => i.path)).toEqual(['http.host']);
  });

  it('keeps the tank-farm estimator equal to config/tank-farm.yaml\'s', () => {
    expect(parseYaml(configText()).estimators).toEqual(parseYaml(readRepoFile('config/tank-farm.yaml')).estimators);
  });

  it('mounts the ConfigMap where the container\'s --config points', () => {
    const volume = (deployment.spec.template.spec.volumes as Any[]).find((v) => v.configMap?.name === kind('ConfigMap').metadata.name);
    expect(mountFor(volume.name).mountPath).toBe(dirname(configArg()));
  });

  it('listens on the daemon\'s default port, the one the image pins', () => {
    expect(namedPort('http')).toBe(DEFAULTS.http.port);
    expect(containerEnv().STATECAST_HTTP_PORT).toBe(IMAGE.env.STATECAST_HTTP_PORT);
  });

  it('probes liveness on /healthz and readiness on /readyz at that port', () => {
    const probes = [container.livenessProbe.httpGet, container.readinessProbe.httpGet];
    expect(probes.map((p: Any) => [p.path, namedPort(p.port)])).toEqual([['/healthz', DEFAULTS.http.port], ['/readyz', DEFAULTS.http.port]]);
  });

  it('takes the token and the broker password from a Secret through the env overrides', () => {
    const fromSecret = Object.keys(secretEnv());
    expect(fromSecret).toEqual(['STATECAST_API_TOKEN', 'STATECAST_BROKER_PASSWORD']);
    expect(fromSecret.every((n) => OVERRIDE_NAMES.has(n))).toBe(true);
  });

  it('mounts the checkpoint claim at the state directory', () => {
    const claim = kind('PersistentVolumeClaim').metadata.name;
    const volume = (deployment.spec.template.spec.volumes as Any[]).find((v) => v.persistentVolumeClaim?.claimName === claim);
    expect(mountFor(volume.name).mountPath).toBe(containerEnv().STATECAST_STATE_DIR);
    expect(containerEnv().STATECAST_STATE_DIR).toBe(IMAGE.env.STATECAST_STATE_DIR);
  });

  it('sets CPU and memory requests and limits', () => {
    const { requests, limits } = container.resources;
    expect([Object.keys(requests).sort(), Object.keys(limits).sort()]).toEqual([['cpu', 'memory'], ['cpu', 'memory']]);
  });

  it('runs as the image\'s non-root user', () => {
    const pod = deployment.spec.template.spec.securityContext;
    expect(pod.runAsNonRoot).toBe(true);
    expect(pod.runAsUser).toBe(IMAGE.uid);
    expect(IMAGE.uid).toBeGreaterThan(0);
  });

  it('gives the pod longer to terminate than the daemon\'s stop deadline', () => {
    expect(deployment.spec.template.spec.terminationGracePeriodSeconds).toBeGreaterThan(STOP_DEADLINE_S);
  });

  it('runs one replica, replaced with the Recreate strategy', () => {
    expect([deployment.spec.replicas, deployment.spec.strategy.type]).toEqual([1, 'Recreate']);
  });

  it('routes the Service to the Deployment\'s pods on the container port', () => {
    const service = kind('Service');
    expect(deployment.spec.template.metadata.labels).toMatchObject(service.spec.selector);
    expect(namedPort(service.spec.ports[0].targetPort)).toBe(DEFAULTS.http.port);
  });
});

describe('deploy/systemd/statecast.service', () => {
  it('starts the launcher with run --config', () => {
    expect(unitValue(UNIT, 'Service', 'ExecStart')).toMatch(/\/bin\/statecast\.js run --config \/\S+\.yaml$/);
  });

  it('reloads by sending SIGHUP to the main process', () => {
    expect(unitValue(UNIT, 'Service', 'ExecReload')).toMatch(/kill -HUP \$MAINPID$/);
  });

  it('stops with SIGTERM and waits longer than the daemon\'s stop deadline', () => {
    expect(unitValue(UNIT, 'Service', 'KillSignal')).toBe('SIGTERM');
    expect(durationS(unitValue(UNIT, 'Service', 'TimeoutStopSec').replace(/^(\d+)$/, '$1s'))).toBeGreaterThan(STOP_DEADLINE_S);
  });

  it('restarts on failure after a pause', () => {
    expect(unitValue(UNIT, 'Service', 'Restart')).toBe('on-failure');
    expect(Number(unitValue(UNIT, 'Service', 'RestartSec'))).toBeGreaterThan(0);
  });

  it('does not restart after an invalid configuration, which a restart cannot fix', () => {
    expect(unitValue(UNIT, 'Service', 'RestartPreventExitStatus').split(/\s+/)).toContain(String(APP_ERRORS.CONFIG_INVALID.exitCode));
  });

  it('applies the usual hardening options', () => {
    const settings = ['NoNewPrivileges', 'ProtectSystem', 'ProtectHome', 'PrivateTmp', 'DynamicUser'].map((k) => unitValue(UNIT, 'Service', k));
    expect(settings).toEqual(['yes', 'strict', 'yes', 'yes', 'yes']);
  });

  it('lets the service write only its state directory, where the checkpoints go', () => {
    const stateDir = `/var/lib/${unitValue(UNIT, 'Service', 'StateDirectory')}`;
    expect(unitValue(UNIT, 'Service', 'ReadWritePaths')).toBe(stateDir);
    expect(unitValues(UNIT, 'Service', 'Environment')).toContain(`STATECAST_STATE_DIR=${stateDir}`);
  });

  it('leaves MemoryDenyWriteExecute off, since V8\'s JIT compiler needs it off', () => {
    expect(unitValues(UNIT, 'Service', 'MemoryDenyWriteExecute').filter((v) => v !== 'no')).toEqual([]);
  });
});

describe('deploy/prometheus/statecast-alerts.yaml', () => {
  const selectors = () => rules.flatMap((r) => vectorSelectors(r.expr).map((s) => ({ rule: r.alert as string, ...s })));
  const ours = () => selectors().filter((s) => s.metric.startsWith('statecast_'));

  it('holds groups of rules in the Prometheus rules-file format', () => {
    expect(Object.keys(ruleFile)).toEqual(['groups']);
    for (const group of ruleFile.groups) expect([typeof group.name, Array.isArray(group.rules)]).toEqual(['string', true]);
  });

  it('gives every rule an alert, expr, for, labels.severity and annotations', () => {
    for (const r of rules) {
      expect(Object.keys(r).sort(), r.alert).toEqual(['alert', 'annotations', 'expr', 'for', 'labels']);
      expect(durationS(r.for), r.alert).toBeGreaterThanOrEqual(0);
      expect(['warning', 'critical'], r.alert).toContain(r.labels.severity);
      expect([typeof r.annotations.summary, typeof r.annotations.description], r.alert).toEqual(['string', 'string']);
    }
  });

  it('says in every alert\'s description that estimates are advisory', () => {
    expect(rules.filter((r) => !/estimates are advisory, not a safety function/i.test(r.annotations.description)).map((r) => r.alert)).toEqual([]);
  });

  it('names only series the daemon exports (and Prometheus\'s own up)', () => {
    const names = selectors().map((s) => s.metric);
    expect(names.filter((n) => n !== 'up' && !isDaemonSeriesName(n))).toEqual([]);
  });

  it('watches failures, degradation, the broker, rejections, event-loop lag, latency and publishing', () => {
    const read = new Set(ours().map((s) => s.metric));
    for (const metric of [
      'statecast_health_state', 'statecast_broker_connected', 'statecast_measurements_rejected_total',
      'statecast_event_loop_lag_seconds', 'statecast_processing_latency_seconds_bucket', 'statecast_estimates_published_total',
    ]) expect(read, metric).toContain(metric);
  });

  it('compares statecast_health_state only with the daemon\'s state codes', () => {
    const used = rules.flatMap((r) => comparedValues(r.expr, 'statecast_health_state'));
    expect(used.length).toBeGreaterThan(0);
    expect(used.filter((v) => !Object.values(HEALTH_STATE_VALUE).includes(v))).toEqual([]);
  });

  it('alerts on failed at the failed code and on degraded at the degraded code', () => {
    expect(comparedValues(rule('StatecastTrackFailed').expr, 'statecast_health_state')).toEqual([HEALTH_STATE_VALUE.failed]);
    expect(comparedValues(rule('StatecastTrackDegraded').expr, 'statecast_health_state')).toEqual([HEALTH_STATE_VALUE.degraded]);
  });

  it('matches only rejection reasons the daemon counts', () => {
    const reasons = ours()
      .filter((s) => s.metric === 'statecast_measurements_rejected_total')
      .flatMap((s) => s.matchers.filter((m) => m.label === 'reason').flatMap(matchedValues));
    expect(reasons.length).toBeGreaterThan(0);
    expect(reasons.filter((r) => !MEASUREMENT_REJECTION_LABELS.includes(r))).toEqual([]);
  });

  it('matches only health reasons the daemon reports', () => {
    // The transitions counter labels a recovery with reason "none" (daemon-metrics.ts).
    const known: readonly string[] = [...HEALTH_REASONS, 'none'];
    const reasons = ours()
      .filter((s) => s.metric === 'statecast_health_transitions_total')
      .flatMap((s) => s.matchers.filter((m) => m.label === 'reason').flatMap(matchedValues));
    expect(reasons.length).toBeGreaterThan(0);
    expect(reasons.filter((r) => !known.includes(r))).toEqual([]);
  });

  it('matches only labels and label values that the daemon\'s series carry', async () => {
    const exported = await exportedLabels();
    const unknown: string[] = [];
    for (const s of ours()) {
      for (const m of s.matchers) {
        const values = exported.get(s.metric)?.get(m.label);
        if (values === undefined) unknown.push(`${s.rule}: ${s.metric} has no label ${m.label}`);
        else if (m.label === 'quantile' && !matchedValues(m).every((v) => values.has(v))) unknown.push(`${s.rule}: ${m.label}="${m.value}"`);
      }
    }
    expect(unknown).toEqual([]);
  });
});

/**
 * Label names and values of every series the metrics adapter exports, read from a real registry
 * after one event of each kind and a few event-loop samples (the lag gauge fills in at scrape).
 */
async function exportedLabels(): Promise<Map<string, Map<string, Set<string>>>> {
  const registry = new Registry();
  const view = new FakeEngineView([fakeTrack('tanks', 'tank-a')]);
  const metrics = createDaemonMetrics({ registry, view, brokerConnected: () => true, defaultMetrics: false, eventLoopResolutionMs: 1 });
  metrics.start();
  view.events.emit('measurement:accepted', acceptedEvent());
  view.events.emit('measurement:rejected', rejectedEvent());
  view.events.emit('estimate', { estimator: 'tanks', entity: 'tank-a', kind: 'filtered', topic: 'statecast/tanks/tank-a/estimate', payload: '{}', tS: 1_767_225_600 });
  view.events.emit('health:changed', { estimator: 'tanks', entity: 'tank-a', sensor: null, from: 'ok', to: 'degraded', reasons: ['nis-high'], tS: 1_767_225_600 });
  await new Promise((r) => setTimeout(r, 50));
  const out = new Map<string, Map<string, Set<string>>>();
  for (const metric of await registry.getMetricsAsJSON()) {
    for (const value of metric.values) {
      const series = (value as { metricName?: string }).metricName ?? metric.name;
      const labels = out.get(series) ?? new Map<string, Set<string>>();
      for (const [label, v] of Object.entries(value.labels)) labels.set(label, (labels.get(label) ?? new Set()).add(String(v)));
      out.set(series, labels);
    }
  }
  metrics.stop();
  return out;
}
