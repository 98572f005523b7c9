/**
 * `statecast_event_loop_lag_seconds{quantile}`: how late the event loop ran timers since the
 * previous scrape, as p50, p99 and max (quantile "0.5", "0.99", "1"). A slow loop delays every
 * measurement, so this is the first figure to read when processing latency rises.
 */
import { monitorEventLoopDelay, type IntervalHistogram } from 'node:perf_hooks';
import { Gauge, type Registry } from 'prom-client';

/** Starts and stops the loop-delay sampler behind the gauge. */
export interface EventLoopLagGauge {
  /** Starts sampling; calling it again does nothing. */
  start(): void;
  /** Stops sampling; calling it again does nothing. */
  stop(): void;
}

const NS_PER_S = 1e9;

/**
 * Registers the gauge on `registry`. `resolutionMs` is the sampling period of Node's loop-delay
 * monitor (default 10 ms; delays shorter than it are not seen).
 */
export function registerEventLoopLagGauge(registry: Registry, resolutionMs = 10): EventLoopLagGauge {
  const histogram: IntervalHistogram = monitorEventLoopDelay({ resolution: resolutionMs });
  let running = false;

  new Gauge({
    name: 'statecast_event_loop_lag_seconds',
    help: 'Event-loop delay since the previous scrape, by quantile (1 = max).',
    labelNames: ['quantile'],
    registers: [registry],
    collect() {
      // With no samples since the last scrape (a scrape right after another) the previous
      // figures stay: an empty interval says nothing new about the loop.
      if (histogram.count === 0) return;
      this.set({ quantile: '0.5' }, histogram.percentile(50) / NS_PER_S);
      this.set({ quantile: '0.99' }, histogram.percentile(99) / NS_PER_S);
      this.set({ quantile: '1' }, histogram.max / NS_PER_S);
      histogram.reset();
    },
  });

  return {
    start() {
      if (running) return;
      running = true;
      histogram.enable();
    },
    stop() {
      if (!running) return;
      running = false;
      histogram.disable();
    },
  };
}
