/**
 * Metrics read from the engine on each scrape: `statecast_tracks` as a prom-client gauge, and the
 * per-entity families (entity-series.ts) written as exposition text in one pass. Every scrape
 * reads afresh, so the series of an evicted track vanish at the next scrape instead of freezing
 * at their last value.
 *
 * prom-client has no hook for preformatted text, so the registry's own `metrics()` and
 * `getMetricsAsJSON()` are wrapped on that instance: every caller (the HTTP route, tests) keeps
 * using the one registry API and gets one family per name, the registry's families first.
 */
import { Gauge, Registry } from 'prom-client';
import type { EngineView } from '../../engine/engine-view.js';
import { ENTITY_FAMILIES, walkEntitySeries, type EntityFamilyKey, type EntitySeriesSink } from './entity-series.js';
import { EntitySeriesText } from './entity-series-text.js';

export { HEALTH_STATE_VALUE } from './entity-series.js';

type MetricJson = Awaited<ReturnType<Registry['getMetricsAsJSON']>>[number];
type MetricJsonValue = MetricJson['values'][number];

/**
 * Registers the scrape-time track metrics on `registry`. Cardinality: per estimator, at most
 * `maxEntities` × (3 + sensors × (2 + measurement components)) per-entity series.
 */
export function registerTrackGauges(registry: Registry, view: EngineView, maxEntities: number): void {
  new Gauge({
    name: 'statecast_tracks',
    help: 'Tracks currently held, by estimator.',
    labelNames: ['estimator'],
    registers: [registry],
    collect() {
      this.reset();
      for (const estimator of view.estimatorNames()) this.set({ estimator }, view.trackCount(estimator));
    },
  });

  const baseText = registry.metrics.bind(registry);
  const baseJson = registry.getMetricsAsJSON.bind(registry);
  registry.metrics = async () => {
    const text = await baseText();
    const sink = new EntitySeriesText();
    walkEntitySeries(view, maxEntities, sink);
    return appendFamilies(text, sink.text(), registry.contentType);
  };
  registry.getMetricsAsJSON = async () => {
    const json = await baseJson();
    const sink = new EntitySeriesJson();
    walkEntitySeries(view, maxEntities, sink);
    return [...json, ...sink.families()];
  };
}

/** Joins the registry's exposition and more families, before OpenMetrics' closing `# EOF`. */
function appendFamilies(text: string, families: string, contentType: string): string {
  if (contentType === Registry.OPENMETRICS_CONTENT_TYPE && text.endsWith('# EOF\n')) {
    return `${text.slice(0, -'# EOF\n'.length)}${families}# EOF\n`;
  }
  return text === '\n' ? families : `${text}\n${families}`;
}

/** The walk in prom-client's JSON shape, for `getMetricsAsJSON()` callers. */
class EntitySeriesJson implements EntitySeriesSink {
  private readonly values = new Map<EntityFamilyKey, MetricJsonValue[]>();
  private estimator = '';
  private entity = '';

  track(estimator: string, entity: string): void {
    this.estimator = estimator;
    this.entity = entity;
  }

  sample(family: EntityFamilyKey, sensor: string | null, component: number | null, value: number): void {
    const labels: Record<string, string> = { estimator: this.estimator, entity: this.entity };
    if (sensor !== null || family === 'healthState') labels['sensor'] = sensor ?? '';
    if (component !== null) labels['component'] = String(component);
    this.push(family, { labels, value });
  }

  omitted(estimator: string, count: number): void {
    this.push('omitted', { labels: { estimator }, value: count });
  }

  families(): MetricJson[] {
    return (Object.keys(ENTITY_FAMILIES) as EntityFamilyKey[]).map((key) => ({
      name: ENTITY_FAMILIES[key].name,
      help: ENTITY_FAMILIES[key].help,
      // prom-client's typings say an enum here; its gauges carry the string at run time.
      type: 'gauge' as unknown as MetricJson['type'],
      aggregator: 'sum',
      collect() {},
      values: this.values.get(key) ?? [],
    }));
  }

  private push(family: EntityFamilyKey, value: MetricJsonValue): void {
    const list = this.values.get(family);
    if (list === undefined) this.values.set(family, [value]);
    else list.push(value);
  }
}
