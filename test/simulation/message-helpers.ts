import { createHash } from 'node:crypto';
import type { SimulatedMessage } from '../../src/simulation/simulated-message.js';

/** Fixed epoch start used by the simulation tests (2024-06-01T00:00:00Z). */
export const START_S = 1717200000;

/** A parsed payload: every field the scenarios write is a number. */
export type Payload = Record<string, number>;

/** Parses a message's JSON payload. */
export function payloadOf(m: SimulatedMessage): Payload {
  return JSON.parse(m.payload) as Payload;
}

/** The messages on one topic, in order. */
export function onTopic(messages: readonly SimulatedMessage[], topic: string): SimulatedMessage[] {
  return messages.filter((m) => m.topic === topic);
}

/** Message count per topic. */
export function countByTopic(messages: readonly SimulatedMessage[]): Map<string, number> {
  const counts = new Map<string, number>();
  for (const m of messages) counts.set(m.topic, (counts.get(m.topic) ?? 0) + 1);
  return counts;
}

/** SHA-256 over every field of every message, in order. */
export function hashMessages(messages: readonly SimulatedMessage[]): string {
  const hash = createHash('sha256');
  for (const m of messages) hash.update(`${m.topic}\n${m.payload}\n${m.eventTimeS}\n${m.publishTimeS}\n${m.kind}\n`);
  return hash.digest('hex');
}

/** Sample standard deviation about the mean. */
export function sampleSigma(values: readonly number[]): number {
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  const ss = values.reduce((a, b) => a + (b - mean) ** 2, 0);
  return Math.sqrt(ss / (values.length - 1));
}

/** Index by payload `t` (3-decimal text) for matching measurements to truth at the same instant. */
export function byTime(messages: readonly SimulatedMessage[]): Map<string, Payload> {
  const map = new Map<string, Payload>();
  for (const m of messages) {
    const p = payloadOf(m);
    map.set(p['t']!.toFixed(3), p);
  }
  return map;
}

/** Messages grouped by topic, each group in order. */
export function groupByTopic(messages: readonly SimulatedMessage[]): Map<string, SimulatedMessage[]> {
  const groups = new Map<string, SimulatedMessage[]>();
  for (const m of messages) {
    const group = groups.get(m.topic);
    if (group === undefined) groups.set(m.topic, [m]);
    else group.push(m);
  }
  return groups;
}
