/**
 * The daemon configuration of the soak: the vehicle-yard estimator (constant velocity, geodetic
 * GNSS fixes and wheel speed, as in the built-in demo) sized for the scaled scenario.
 */
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';

/** Options that change the soak's daemon config. */
export interface SoakConfigOptions {
  readonly brokerUrl: string;
  readonly entities: number;
  /** GNSS fixes and wheel-speed readings per second per entity after thinning. */
  readonly gnssHz: number;
  readonly wheelHz: number;
  /** Checkpoints on (the production default) or off, to compare their cost. */
  readonly checkpoints: boolean;
}

/**
 * The yard estimator with its demo models, its sensors' expected periods set to the thinned
 * rates, and a history sized for the soak: the scenario runs
 * without its late bursts (defaultFaults: false), so readings arrive in order and ten seconds
 * of history (at least 16 entries) is ample, where the demo keeps 700 entries per track for
 * 30 s late fixes. The entity cap leaves room above the scenario's count.
 */
export function soakDaemonConfig(options: SoakConfigOptions): Record<string, unknown> {
  const horizonS = 10;
  const maxEntries = Math.max(16, Math.ceil(horizonS * (options.gnssHz + options.wheelHz) * 1.5));
  const yard = yardEstimatorInput();
  const sensors = yard.sensors as Record<string, Record<string, unknown>>;
  // The expected periods follow the thinned rates: with the demo's 0.1 s for wheel speed thinned
  // to 1 Hz, every track would be judged silent and flip health (and log) every second.
  const period = (hz: number): number => (hz > 0 ? 1 / hz : 3600);
  return {
    broker: { url: options.brokerUrl, protocolVersion: 5, maxInflight: 1024 },
    checkpoint: { enabled: options.checkpoints, intervalS: 30 },
    log: { level: 'warn' },
    estimators: [{
      ...yard,
      sensors: {
        gnss: { ...sensors['gnss'], expectedPeriodS: period(options.gnssHz) },
        wheel: { ...sensors['wheel'], expectedPeriodS: period(options.wheelHz) },
      },
      history: { horizonS, maxEntries },
      entities: { max: Math.ceil(options.entities * 1.2), idleEvictS: 3600 },
      publish: { mode: 'every-update', qos: 0 },
    }],
  };
}
