/**
 * The names of the daemon's own Prometheus metrics, in one list so alert rules, dashboards and
 * the metrics adapter cannot drift apart. The prom-client default process metrics are registered
 * beside these with the same `statecast_` prefix (`statecast_process_*`, `statecast_nodejs_*`)
 * but are prom-client's, so they are not listed here.
 *
 * Label cardinality: `estimator`, `sensor`, `kind`, `component`, `reason`, `to`, `late` and
 * `quantile` take values from the configuration or from closed sets; `entity` is bounded per
 * estimator by `http.metrics.maxEntitiesPerEstimator` (default 1,000; the entities left out are
 * counted in `statecast_metrics_entities_omitted`), so a per-entity gauge holds at most
 * (estimators × that cap) × (sensors per estimator) × (measurement components) series.
 */
export const DAEMON_METRIC_NAMES = [
  'statecast_measurements_received_total',
  'statecast_measurements_accepted_total',
  'statecast_measurements_rejected_total',
  'statecast_estimates_published_total',
  'statecast_health_transitions_total',
  'statecast_processing_latency_seconds',
  'statecast_tracks',
  'statecast_windowed_nis',
  'statecast_innovation_ratio',
  'statecast_trace_p',
  'statecast_coast_seconds',
  'statecast_health_state',
  'statecast_metrics_entities_omitted',
  'statecast_broker_connected',
  'statecast_event_loop_lag_seconds',
  'statecast_ws_clients',
  'statecast_ws_dropped_total',
  'statecast_mqtt_dropped_total',
] as const;

/** One of DAEMON_METRIC_NAMES. */
export type DaemonMetricName = (typeof DAEMON_METRIC_NAMES)[number];

/** The histograms among DAEMON_METRIC_NAMES: their samples carry `_bucket`, `_sum`, `_count`. */
export const DAEMON_HISTOGRAM_NAMES: readonly DaemonMetricName[] = ['statecast_processing_latency_seconds'];

const HISTOGRAM_SUFFIXES = ['_bucket', '_sum', '_count'] as const;
const METRIC_NAME_SET: ReadonlySet<string> = new Set(DAEMON_METRIC_NAMES);

/**
 * True when `seriesName` is a sample name the daemon exposes for one of its own metrics: a name
 * from DAEMON_METRIC_NAMES, or a histogram's `_bucket`/`_sum`/`_count` series. Lets a check of an
 * alert-rules file accept `statecast_processing_latency_seconds_bucket`.
 */
export function isDaemonSeriesName(seriesName: string): boolean {
  if (METRIC_NAME_SET.has(seriesName)) return true;
  for (const suffix of HISTOGRAM_SUFFIXES) {
    if (seriesName.endsWith(suffix)) {
      const base = seriesName.slice(0, -suffix.length);
      if (DAEMON_HISTOGRAM_NAMES.includes(base as DaemonMetricName)) return true;
    }
  }
  return false;
}
