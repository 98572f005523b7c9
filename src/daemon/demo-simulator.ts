/**
 * The built-in simulator as the daemon runs it: its own MQTT client publishing the configured
 * demo scenarios in real time to the daemon's broker, exactly as field devices would.
 */
import mqtt, { type MqttClient } from 'mqtt';
import type { Logger } from 'pino';
import type { SimulatorConfig } from '../config/config-schema.js';
import type { DeepReadonly } from '../config/deep-freeze.js';
import { createScenario } from '../simulation/scenario.js';
import { parseFaultSpec } from '../simulation/fault-plan.js';
import { runSimulation, type SimulationRun } from '../simulation/simulation-runner.js';

/** See the module comment. */
export class DemoSimulator {
  private client: MqttClient | null = null;
  private runs: SimulationRun[] = [];

  /** Prepares (does not connect); throws for an unparsable fault spec, naming the bad item. */
  constructor(
    private readonly config: DeepReadonly<SimulatorConfig>,
    private readonly brokerUrl: string,
    private readonly protocolVersion: 4 | 5,
    private readonly log: Logger,
    private readonly now: () => number,
  ) {
    if (config.faults !== undefined) {
      const parsed = parseFaultSpec(config.faults);
      if (!parsed.ok) throw new Error(`simulator.faults: ${parsed.message}`);
    }
  }

  /** Connects and starts every scenario. */
  async start(): Promise<void> {
    const client = mqtt.connect(this.brokerUrl, { protocolVersion: this.protocolVersion, clientId: `statecast-sim-${process.pid}`, reconnectPeriod: 1000 });
    this.client = client;
    client.on('error', (err) => this.log.warn({ err }, 'simulator MQTT error'));
    const faults = this.config.faults === undefined ? [] : (parseFaultSpec(this.config.faults) as { ok: true; plan: never[] }).plan;
    const startTimeS = this.now() / 1000;
    for (const name of this.config.scenarios) {
      const scenario = createScenario(name, { seed: this.config.seed, startTimeS, faults });
      this.runs.push(runSimulation({
        scenario,
        speed: this.config.speed,
        timer: { now: this.now, setInterval: (fn, ms) => setInterval(fn, ms), clearInterval: (h) => clearInterval(h as NodeJS.Timeout) },
        publish: (topic, payload, qos) => new Promise<void>((resolve, reject) => {
          client.publish(topic, payload, { qos }, (err) => (err ? reject(err) : resolve()));
        }),
        onError: (err) => this.log.debug({ err }, 'simulator publish failed'),
      }));
      this.log.info({ scenario: name, entities: scenario.entities.length, seed: this.config.seed }, 'simulator started');
    }
  }

  /** Stops publishing and disconnects; idempotent. */
  stop(): void {
    for (const r of this.runs) r.stop();
    this.runs = [];
    this.client?.end(true);
    this.client = null;
  }
}
