/**
 * The nats-server configuration text scale-out mode needs from the daemon's own configuration:
 * the subject mappings that put every message of an entity into its virtual partition. Writing
 * them from the same topic patterns the daemon hashes keeps the two from drifting; the
 * config-drift counter reports it if they still do (a hand-edited server config).
 */
import type { DeepReadonly } from '../../config/deep-freeze.js';
import type { Config } from '../../config/config-schema.js';
import { partitionMappings } from './subject-routes.js';

/** Every sensor topic pattern of the configuration's estimators, in config order. */
export function sensorPatternsOf(estimators: DeepReadonly<Config['estimators']>): string[] {
  return estimators.flatMap((e) => Object.values(e.sensors).map((s) => s.topic));
}

/** A `mappings = { … }` block for nats-server (its config syntax), one mapping per line. */
export function natsMappingsBlock(patterns: readonly string[], partitions: number, prefix: string): string {
  const lines = [...partitionMappings(patterns, partitions, prefix)].map(([from, to]) => `  ${JSON.stringify(from)}: ${JSON.stringify(to)}`);
  return `mappings = {\n${lines.join('\n')}\n}\n`;
}
