/**
 * The bare relay the e2e bench measures the daemon against, run as a child process:
 * `node --import tsx test/bench/e2e-relay.ts BROKER_URL`. It subscribes to the yard GNSS topics
 * and, for each message, parses the JSON, serializes it again and re-publishes it at QoS 0 to
 * `bench/relay/{vehicle}/out`: the least work any JSON-in, JSON-out MQTT service does per
 * message, so the daemon's figure can be read as a ratio to it. Prints `ready` once subscribed;
 * ends on SIGTERM.
 */
import mqtt from 'mqtt';

const url = process.argv[2];
if (url === undefined) throw new Error('usage: e2e-relay.ts BROKER_URL');

const client = mqtt.connect(url, { clientId: `bench-relay-${process.pid}`, protocolVersion: 5, reconnectPeriod: 0 });
client.on('message', (topic, payload) => {
  const vehicle = topic.split('/')[1] ?? 'unknown';
  const value: unknown = JSON.parse(payload.toString('utf8'));
  client.publish(`bench/relay/${vehicle}/out`, JSON.stringify(value), { qos: 0 });
});
client.once('connect', () => {
  // The same socket option as the daemon, so neither is timed with Nagle's delay and the other without.
  (client.stream as { setNoDelay?: (on: boolean) => unknown }).setNoDelay?.(true);
  client.subscribe('yard/+/gnss', { qos: 0 }, (err) => {
    if (err) {
      process.stderr.write(`relay: subscribe failed: ${err.message}\n`);
      process.exit(1);
    }
    process.stdout.write('ready\n');
  });
});
client.on('error', (err) => process.stderr.write(`relay: ${err.message}\n`));
process.once('SIGTERM', () => client.end(false, () => process.exit(0)));
