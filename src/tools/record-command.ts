/**
 * `statecast record`: subscribes to the measurement topics of a config (and optionally the
 * simulator's ground truth) and writes every message with its arrival time to a recording
 * (see recording-format.ts) until stopped, then prints how many messages each filter caught.
 */
import mqtt, { type IClientOptions, type MqttClient } from 'mqtt';
import { loadConfig } from '../config/load-config.js';
import { Engine } from '../engine/engine.js';
import { recordingMessageLine } from './recording-format.js';
import { RecordingWriter } from './recording-writer.js';
import { count } from './replay-summary-text.js';
import { parseFlags, positiveIntegerFlag, requiredFlag, UsageError } from './tool-args.js';
import { EXIT_FAILURE, EXIT_OK, EXIT_USAGE, wallClockOf, type ToolIo } from './tool-io.js';
import { compileTopicFilter, topicMatches, type TopicFilter } from './topic-filter.js';
import { ProgressBar } from './progress-bar.js';

/** The usage text of `statecast record`. */
export const RECORD_USAGE = `usage: statecast record --config FILE --out REC.jsonl [--broker URL] [--protocol 5|4]
                        [--max-bytes N] [--topics FILTER[,FILTER...]] [--with-truth]

Subscribes to the sensor topics of the config's estimators and records every message with its
arrival time until Ctrl-C, then prints the messages caught per topic filter.

  --config FILE       daemon configuration (.yaml, .yml or .json): which topics to record
  --out FILE          the recording (JSON Lines; see the README for the format)
  --broker URL        mqtt://, mqtts://, ws:// or wss:// URL; default broker.url of the config,
                      else its embedded broker (mqtt://embeddedBroker.host:port)
  --protocol 5|4      MQTT protocol version; default 5 (4 for the embedded broker)
  --max-bytes N       start a new part (REC.1.jsonl, REC.2.jsonl, ...) before a file exceeds N bytes
  --topics FILTERS    more topic filters to record (comma-separated; repeatable)
  --with-truth        also record the simulator's ground truth (sim/truth/#)
`;

const FLAGS = {
  config: 'string', out: 'string', broker: 'string', protocol: 'string', 'max-bytes': 'string', topics: 'repeat', 'with-truth': 'boolean',
} as const;

interface RecordArgs {
  readonly config: string;
  readonly out: string;
  readonly broker?: string;
  readonly protocol?: 4 | 5;
  readonly maxBytes?: number;
  readonly topics: readonly string[];
  readonly withTruth: boolean;
}

function parseRecordArgs(argv: readonly string[]): RecordArgs | 'help' {
  const flags = parseFlags(argv, FLAGS);
  if (flags.help) return 'help';
  const protocol = flags.strings.get('protocol');
  if (protocol !== undefined && protocol !== '4' && protocol !== '5') throw new UsageError(`--protocol must be 5 or 4, got "${protocol}"`);
  const broker = flags.strings.get('broker');
  if (broker !== undefined && !/^(mqtt|mqtts|ws|wss):\/\/[^\s/]+/.test(broker)) {
    throw new UsageError(`--broker must be a URL such as mqtt://127.0.0.1:1883, got "${broker}"`);
  }
  const topics = (flags.lists.get('topics') ?? []).flatMap((t) => t.split(',')).map((t) => t.trim()).filter((t) => t !== '');
  return {
    config: requiredFlag(flags, 'config'),
    out: requiredFlag(flags, 'out'),
    ...(broker === undefined ? {} : { broker }),
    ...(protocol === undefined ? {} : { protocol: protocol === '4' ? 4 : 5 }),
    ...(flags.strings.has('max-bytes') ? { maxBytes: positiveIntegerFlag(flags, 'max-bytes', 1) } : {}),
    topics,
    withTruth: flags.switches.has('with-truth'),
  };
}

/** A URL without user information, for headers and messages. */
function withoutCredentials(url: string): string {
  return url.replace(/^([a-z]+:\/\/)[^@/]*@/, '$1');
}

/** Runs `statecast record`; resolves to 0 after a clean stop, 1 on broker or file errors, 2 on bad usage. */
export async function runRecordCommand(argv: readonly string[], io: ToolIo): Promise<number> {
  let args: RecordArgs;
  try {
    const parsed = parseRecordArgs(argv);
    if (parsed === 'help') {
      io.stdout.write(RECORD_USAGE);
      return EXIT_OK;
    }
    args = parsed;
  } catch (error) {
    if (!(error instanceof UsageError)) throw error;
    io.stderr.write(`statecast record: ${error.message}\nrun "statecast record --help" for usage\n`);
    return EXIT_USAGE;
  }
  const loaded = loadConfig(args.config, io.env);
  if (!loaded.ok) {
    io.stderr.write(`statecast record: invalid configuration ${args.config}:\n${loaded.issues.map((i) => `  ${i.path === '' ? '' : `${i.path}: `}${i.message}`).join('\n')}\n`);
    return EXIT_USAGE;
  }
  const config = loaded.config;
  const subscriptions = new Map<string, 0 | 1 | 2>();
  try {
    for (const s of new Engine(config.estimators, null).subscriptions()) subscriptions.set(s.filter, s.qos);
  } catch (error) {
    io.stderr.write(`statecast record: the configuration cannot run: ${(error as Error).message}\n`);
    return EXIT_USAGE;
  }
  for (const t of args.topics) if (!subscriptions.has(t)) subscriptions.set(t, 0);
  if (args.withTruth) subscriptions.set('sim/truth/#', 1);

  const fromConfig = args.broker === undefined && config.broker.url !== undefined;
  const url = args.broker ?? config.broker.url ?? `mqtt://${config.embeddedBroker.host}:${config.embeddedBroker.port}`;
  const protocolVersion = args.protocol ?? (args.broker === undefined && config.broker.url === undefined ? 4 : 5);
  const options: IClientOptions = {
    protocolVersion,
    clean: true,
    reconnectPeriod: 1000,
    connectTimeout: config.broker.connectTimeoutMs,
    ...(fromConfig && config.broker.username !== undefined ? { username: config.broker.username } : {}),
    ...(fromConfig && config.broker.password !== undefined ? { password: config.broker.password } : {}),
  };
  const now = wallClockOf(io);
  let writer: RecordingWriter;
  try {
    writer = await RecordingWriter.open(args.out, {
      startedAt: new Date(now()).toISOString(),
      source: withoutCredentials(url),
      ...(args.maxBytes === undefined ? {} : { maxBytes: args.maxBytes }),
    });
  } catch (error) {
    io.stderr.write(`statecast record: cannot write --out ${args.out}: ${(error as Error).message}\n`);
    return EXIT_USAGE;
  }
  return record(io, url, options, subscriptions, writer, now);
}

async function record(
  io: ToolIo, url: string, options: IClientOptions, subscriptions: ReadonlyMap<string, 0 | 1 | 2>, writer: RecordingWriter, now: () => number,
): Promise<number> {
  const shownUrl = withoutCredentials(url);
  let client: MqttClient;
  try {
    client = await mqtt.connectAsync(url, options, false);
  } catch (error) {
    await writer.close().catch(() => undefined);
    io.stderr.write(`statecast record: cannot connect to ${shownUrl}: ${(error as Error).message}\n`);
    return EXIT_FAILURE;
  }
  const filters: TopicFilter[] = [...subscriptions.keys()].map(compileTopicFilter);
  const perFilter = new Map<string, number>(filters.map((f) => [f.filter, 0]));
  const progress = new ProgressBar(io, 'record');
  let messages = 0;
  let lastError: string | null = null;
  client.on('error', (error) => (lastError = error.message));
  client.on('message', (topic, payload) => {
    writer.write(recordingMessageLine(now(), topic, payload));
    messages += 1;
    for (const f of filters) if (topicMatches(f, topic)) perFilter.set(f.filter, perFilter.get(f.filter)! + 1);
    progress.update(0, 0, `${count(messages)} messages`);
  });
  try {
    const granted = await client.subscribeAsync(Object.fromEntries([...subscriptions].map(([filter, qos]) => [filter, { qos }])));
    const refused = granted.filter((g) => g.qos === 128).map((g) => g.topic);
    if (refused.length > 0) throw new Error(`the broker refused the subscription to ${refused.join(', ')}`);
  } catch (error) {
    await client.endAsync(true).catch(() => undefined);
    await writer.close().catch(() => undefined);
    io.stderr.write(`statecast record: ${(error as Error).message}\n`);
    return EXIT_FAILURE;
  }
  io.stderr.write(`recording ${[...subscriptions.keys()].join(', ')} from ${shownUrl} into ${writer.files[0]} (Ctrl-C to stop)\n`);
  await new Promise<void>((resolve) => {
    if (io.signal.aborted) resolve();
    else io.signal.addEventListener('abort', () => resolve(), { once: true });
  });
  await client.endAsync().catch(() => undefined);
  progress.clear();
  try {
    await writer.close();
  } catch (error) {
    io.stderr.write(`statecast record: writing ${writer.files.at(-1) ?? 'the recording'} failed: ${(error as Error).message}\n`);
    return EXIT_FAILURE;
  }
  const width = Math.max(...filters.map((f) => f.filter.length));
  const rows = filters.map((f) => `  ${f.filter.padEnd(width)}  ${count(perFilter.get(f.filter)!).padStart(9)}`);
  io.stdout.write(`recorded ${count(messages)} messages into ${writer.files.join(', ')}\n${rows.join('\n')}\n`);
  if (lastError !== null) io.stderr.write(`statecast record: last broker error: ${lastError}\n`);
  return EXIT_OK;
}
