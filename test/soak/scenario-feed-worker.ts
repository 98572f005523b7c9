/**
 * The soak's load generator thread: runs the scaled vehicle-yard scenario tick by tick, thins
 * its measurements evenly to the target rate (GNSS fixes first, so tracks keep their 1 Hz
 * position fixes, then wheel speed to make up the rest), and posts each tick's messages to the
 * main thread, which publishes them when they are due, in real time.
 *
 * Generating 10,000 tractors' messages costs several µs each (about a core at full scale on a
 * small machine), so the thread works ahead of the clock: it measures its own speed on one
 * scenario second, picks a start time far enough out to have the first `aheadS` seconds ready
 * by then, and afterwards stays at most `aheadS` ahead. The daemon then competes with the
 * generator only as much as the generator must keep up, and a generator that cannot keep up
 * shows as late ticks in the report instead of as a slow daemon.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { createScenario } from '../../src/simulation/scenario.js';
import { encodePublishInto, publishPacketLength } from './raw-mqtt-publisher.js';

/** What the main thread passes in. */
export interface FeedSettings {
  readonly seed: number;
  readonly entities: number;
  /** Share of GNSS fixes kept, 0..1 (the rest are skipped evenly per tractor). */
  readonly gnssKeepRatio: number;
  /** Share of wheel-speed readings kept, 0..1. */
  readonly wheelKeepRatio: number;
  /** Scenario seconds to generate in all. */
  readonly runS: number;
  /** Most scenario seconds generated ahead of the wall clock. */
  readonly aheadS: number;
}

/** Sent once: the scenario starts (its first tick is due) at this epoch time. */
export interface FeedStart {
  readonly type: 'start';
  readonly startTimeS: number;
  /** Wall-clock seconds one scenario second took to generate (the calibration). */
  readonly secondsPerScenarioSecond: number;
}

/**
 * One tick's kept messages as encoded MQTT 5 QoS 1 PUBLISH packets (packet ids left for the
 * publisher to fill in at `idOffsets`), and `entity|t_ms` keys of every LATENCY_SAMPLE-th one,
 * for matching their estimates to the publish time.
 */
export interface FeedBatch {
  readonly type: 'batch';
  /** Epoch seconds at which these messages are due. */
  readonly dueS: number;
  readonly packets: Uint8Array;
  readonly idOffsets: Int32Array;
  readonly count: number;
  readonly keys: string[];
  /** Measurement messages the scenario produced before thinning. */
  readonly produced: number;
}

/** One kept message in this many has its latency measured (the rest would only cost the soak). */
export const LATENCY_SAMPLE = 8;

/** Sent when the run's last tick has been posted. */
export interface FeedDone {
  readonly type: 'done';
}

/** Anything the worker posts. */
export type FeedMessage = FeedStart | FeedBatch | FeedDone;

const port = parentPort;
if (port === null) throw new Error('scenario-feed-worker must run as a worker thread');
const settings = workerData as FeedSettings;
const TICK_S = 0.1;
let stopped = false;
port.on('message', (m: unknown) => {
  if (m === 'stop') stopped = true;
});

// Calibration on a throw-away copy: the time to generate one scenario second.
const probe = createScenario('vehicle-yard', { seed: settings.seed, entities: settings.entities, startTimeS: 1_000_000_000, defaultFaults: false });
const probeStarted = performance.now();
probe.advanceTo(1_000_000_001);
const secondsPerScenarioSecond = (performance.now() - probeStarted) / 1000;
const prefillS = Math.min(settings.runS, settings.aheadS) * secondsPerScenarioSecond * 1.5 + 2;
const startTimeS = Math.ceil(Date.now() / 1000 + prefillS);
port.postMessage({ type: 'start', startTimeS, secondsPerScenarioSecond } satisfies FeedStart);

const scenario = createScenario('vehicle-yard', { seed: settings.seed, entities: settings.entities, startTimeS, defaultFaults: false });
const endS = startTimeS + settings.runS;
/** Per stream (topic) thinning credit, so every tractor keeps the same share of its readings. */
const credits = new Map<string, number>();
const GOLDEN = 0.6180339887498949;
let tick = 0;
let kept = 0;

/** `yard/tug-00001/gnss` + `{"t":1800000000.100,...}` → `tug-00001|1800000000100`. */
function keyOf(topic: string, payload: string): string {
  const entity = topic.slice(5, topic.lastIndexOf('/'));
  const tS = Number(payload.slice(5, payload.indexOf(',')));
  return `${entity}|${Math.round(tS * 1000)}`;
}

function generateTick(): void {
  const dueS = startTimeS + tick * TICK_S;
  const messages = scenario.advanceTo(dueS);
  tick += 1;
  const topics: string[] = [];
  const payloads: string[] = [];
  const keys: string[] = [];
  let produced = 0;
  let bytes = 0;
  for (const m of messages) {
    if (m.kind !== 'measurement') continue;
    produced += 1;
    // A running credit per stream keeps exactly the share asked for; streams start at
    // spread-out phases so the kept readings do not bunch into one tick.
    const ratio = m.topic.endsWith('/gnss') ? settings.gnssKeepRatio : settings.wheelKeepRatio;
    const credit = (credits.get(m.topic) ?? (credits.size * GOLDEN) % 1) + ratio;
    if (credit < 1) {
      credits.set(m.topic, credit);
      continue;
    }
    credits.set(m.topic, credit - 1);
    if ((kept++) % LATENCY_SAMPLE === 0) keys.push(keyOf(m.topic, m.payload));
    topics.push(m.topic);
    payloads.push(m.payload);
    bytes += publishPacketLength(m.topic, m.payload);
  }
  // A fresh ArrayBuffer (not Node's shared pool), so it can be transferred without a copy.
  const packets = Buffer.from(new ArrayBuffer(bytes));
  const idOffsets = new Int32Array(topics.length);
  let at = 0;
  for (let i = 0; i < topics.length; i++) {
    const idAt = encodePublishInto(packets, at, topics[i]!, payloads[i]!);
    idOffsets[i] = idAt;
    at = idAt + 3 + payloads[i]!.length;
  }
  const batch: FeedBatch = { type: 'batch', dueS, packets, idOffsets, count: topics.length, keys, produced };
  port!.postMessage(batch, [packets.buffer as ArrayBuffer, idOffsets.buffer]);
}

function loop(): void {
  if (stopped) {
    port!.close();
    return;
  }
  if (startTimeS + tick * TICK_S >= endS) {
    port!.postMessage({ type: 'done' } satisfies FeedDone);
    return;
  }
  const aheadS = startTimeS + tick * TICK_S - Date.now() / 1000;
  if (aheadS > settings.aheadS) {
    setTimeout(loop, 50);
    return;
  }
  generateTick();
  setImmediate(loop);
}

loop();
