/**
 * What the broker's subject mappings must be, and how a partitioned subject turns back into an
 * engine topic. Both come from the estimators' sensor topic patterns, so the mappings and the
 * daemon's own partition check cannot disagree about which tokens name the entity: every named
 * wildcard of a pattern (the engine's entity key) is hashed, in pattern order.
 *
 * NATS carries the MQTT topic `yard/tug-01/gnss` as the subject `yard.tug-01.gnss`; the mapping
 * makes it `p.{{partition(64,1)}}.yard.{{wildcard(1)}}.gnss`, e.g. `p.57.yard.tug-01.gnss`.
 */
import { compileTopicPattern } from '../../engine/topic-pattern.js';
import { partitionOfTokens } from './fnv1a-partition.js';

/** One sensor topic pattern in subject form. */
interface SubjectRoute {
  /** Literal token per level, or null for a wildcard level. */
  readonly literals: readonly (string | null)[];
  /** The mapping's source subject, e.g. `yard.*.gnss`. */
  readonly source: string;
}

/** A partitioned subject taken apart. */
export interface RoutedSubject {
  /** The partition the broker put the message in (the token after the prefix). */
  readonly partition: number;
  /** The partition our hash gives its entity tokens; -1 when no sensor pattern matches. */
  readonly expected: number;
  /** The topic in the engine's form, e.g. `yard/tug-01/gnss`. */
  readonly topic: string;
}

/** Compiles patterns such as `yard/{vehicle}/gnss` (deduplicated by their subscription filter). */
function compileRoutes(patterns: readonly string[]): SubjectRoute[] {
  const bySource = new Map<string, SubjectRoute>();
  for (const pattern of patterns) {
    const filter = compileTopicPattern(pattern).subscriptionFilter;
    const literals = filter.split('/').map((level) => (level === '+' ? null : level));
    const source = literals.map((l) => l ?? '*').join('.');
    if (!bySource.has(source)) bySource.set(source, { literals, source });
  }
  return [...bySource.values()];
}

/**
 * The subject mappings for a nats-server configuration (source → destination), e.g.
 * `yard.*.gnss` → `p.{{partition(64,1)}}.yard.{{wildcard(1)}}.gnss`.
 */
export function partitionMappings(patterns: readonly string[], partitions: number, prefix: string): Map<string, string> {
  const out = new Map<string, string>();
  for (const route of compileRoutes(patterns)) {
    let wildcard = 0;
    const indexes: number[] = [];
    const tokens = route.literals.map((l) => {
      if (l !== null) return l;
      wildcard += 1;
      indexes.push(wildcard);
      return `{{wildcard(${wildcard})}}`;
    });
    out.set(route.source, `${prefix}.{{partition(${partitions},${indexes.join(',')})}}.${tokens.join('.')}`);
  }
  return out;
}

/** Takes partitioned subjects apart (see the module comment); built once per configuration. */
export class PartitionRouter {
  private readonly routes: SubjectRoute[];
  private readonly scratch: string[] = [];

  constructor(patterns: readonly string[], private readonly partitions: number, private readonly prefix: string) {
    this.routes = compileRoutes(patterns);
  }

  /** The subject filter of one partition's messages, e.g. `p.17.>`. */
  filterOf(partition: number): string {
    return `${this.prefix}.${partition}.>`;
  }

  /** The parts of `p.<n>.<subject>`, or null when the subject does not have that form. */
  route(subject: string): RoutedSubject | null {
    const tokens = subject.split('.');
    if (tokens.length < 3 || tokens[0] !== this.prefix) return null;
    const partitionToken = tokens[1]!;
    if (!/^\d{1,9}$/.test(partitionToken)) return null;
    const partition = Number(partitionToken);
    const rest = tokens.slice(2);
    return { partition, expected: this.expectedPartition(rest), topic: topicOfTokens(rest) };
  }

  private expectedPartition(tokens: readonly string[]): number {
    const wildcards = this.scratch;
    for (const route of this.routes) {
      if (route.literals.length !== tokens.length) continue;
      wildcards.length = 0;
      let matches = true;
      for (let i = 0; i < tokens.length && matches; i++) {
        const literal = route.literals[i];
        if (literal === null) wildcards.push(tokens[i]!);
        else matches = literal === tokens[i];
      }
      if (matches) return partitionOfTokens(wildcards, this.partitions);
    }
    return -1;
  }
}

/**
 * The MQTT topic of subject tokens. Newer servers carry an MQTT '.' as '//' inside a token
 * (nats-server 2.9 refuses '.' in MQTT topics), so '//' turns back into '.'.
 */
export function topicOfTokens(tokens: readonly string[]): string {
  return tokens.map((t) => (t.includes('//') ? t.replaceAll('//', '.') : t)).join('/');
}
