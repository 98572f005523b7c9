/**
 * `statecast simulate`: plays a demo scenario in real time against any broker, with faults,
 * deterministic for a seed; ground truth goes to `sim/truth/...` for checks.
 */
import mqtt from 'mqtt';
import { createScenario, isScenarioName, SCENARIO_NAMES } from '../simulation/scenario.js';
import { parseFaultSpec, FAULT_SPEC_SYNTAX } from '../simulation/parse-fault-spec.js';
import type { FaultPlan } from '../simulation/fault-plan.js';
import { runSimulation, type SimulationRun } from '../simulation/simulation-runner.js';
import type { ToolIo } from './tool-io.js';

const USAGE = `usage: statecast simulate --scenario ${SCENARIO_NAMES.join('|')}|all --broker URL
         [--seed N] [--faults SPEC] [--speed X] [--duration-s S] [--protocol 5|4] [--no-truth]
         [--entities N] [--qos 0|1]
faults: ${FAULT_SPEC_SYNTAX}`;

interface SimulateArgs {
  scenarios: string[];
  broker: string;
  seed: number;
  faults: FaultPlan;
  speed: number;
  durationS: number;
  protocol: 4 | 5;
  truth: boolean;
  entities: number | undefined;
  qos: 0 | 1;
}

/** Parses the flags; returns an error message instead of throwing. */
export function parseSimulateArgs(argv: readonly string[]): SimulateArgs | string {
  const out: SimulateArgs = { scenarios: [], broker: '', seed: 1, faults: [], speed: 1, durationS: Infinity, protocol: 5, truth: true, entities: undefined, qos: 0 };
  for (let i = 0; i < argv.length; i++) {
    const flag = argv[i]!;
    const value = (): string => {
      const v = argv[++i];
      if (v === undefined) throw new Error(`${flag} needs a value`);
      return v;
    };
    const num = (min: number): number => {
      const v = Number(value());
      if (!Number.isFinite(v) || v < min) throw new Error(`${flag}: expected a number ≥ ${min}`);
      return v;
    };
    try {
      switch (flag) {
        case '--scenario': {
          const v = value();
          out.scenarios = v === 'all' ? [...SCENARIO_NAMES] : [v];
          if (v !== 'all' && !isScenarioName(v)) return `--scenario: unknown scenario "${v}" (known: ${SCENARIO_NAMES.join(', ')}, all)`;
          break;
        }
        case '--broker': out.broker = value(); break;
        case '--seed': out.seed = Math.floor(num(0)); break;
        case '--speed': out.speed = num(0.001); break;
        case '--duration-s': out.durationS = num(0); break;
        case '--entities': out.entities = Math.floor(num(1)); break;
        case '--no-truth': out.truth = false; break;
        case '--protocol': {
          const v = value();
          if (v !== '4' && v !== '5') return '--protocol: expected 4 or 5';
          out.protocol = v === '4' ? 4 : 5;
          break;
        }
        case '--qos': {
          const v = value();
          if (v !== '0' && v !== '1') return '--qos: expected 0 or 1';
          out.qos = v === '1' ? 1 : 0;
          break;
        }
        case '--faults': {
          const parsed = parseFaultSpec(value());
          if (!parsed.ok) return `--faults: ${parsed.message}`;
          out.faults = parsed.plan;
          break;
        }
        case '--help': return USAGE;
        default: return `unknown argument ${flag}\n${USAGE}`;
      }
    } catch (err) {
      return (err as Error).message;
    }
  }
  if (out.scenarios.length === 0) return `--scenario is required\n${USAGE}`;
  if (out.broker === '') return `--broker is required\n${USAGE}`;
  return out;
}

/** Runs the command; resolves with the exit code when the duration ends or io.signal aborts. */
export async function runSimulateCommand(argv: string[], io: ToolIo): Promise<number> {
  const args = parseSimulateArgs(argv);
  if (typeof args === 'string') {
    io.stderr.write(`${args}\n`);
    return argv.includes('--help') ? 0 : 2;
  }
  const client = mqtt.connect(args.broker, { protocolVersion: args.protocol, reconnectPeriod: 1000, clientId: `statecast-sim-${process.pid}` });
  client.on('error', (err) => io.stderr.write(`simulate: broker error: ${err.message}\n`));
  const startTimeS = Date.now() / 1000;
  const runs: SimulationRun[] = args.scenarios.map((name) => runSimulation({
    scenario: createScenario(name as (typeof SCENARIO_NAMES)[number], {
      seed: args.seed, startTimeS, faults: args.faults, ...(args.entities === undefined ? {} : { entities: args.entities }),
    }),
    speed: args.speed,
    includeTruth: args.truth,
    measurementQos: args.qos,
    timer: { now: Date.now, setInterval: (fn, ms) => setInterval(fn, ms), clearInterval: (h) => clearInterval(h as NodeJS.Timeout) },
    publish: (topic, payload, qos) => new Promise<void>((resolve, reject) => client.publish(topic, payload, { qos }, (e) => (e ? reject(e) : resolve()))),
  }));
  io.stderr.write(`simulate: ${args.scenarios.join(', ')} → ${args.broker} (seed ${args.seed}, speed ×${args.speed})\n`);
  await new Promise<void>((resolve) => {
    const done = (): void => resolve();
    io.signal.addEventListener('abort', done, { once: true });
    if (Number.isFinite(args.durationS)) setTimeout(done, (args.durationS * 1000) / args.speed).unref();
  });
  for (const r of runs) r.stop();
  const published = runs.reduce((s, r) => s + r.stats().published, 0);
  const failed = runs.reduce((s, r) => s + r.stats().failed, 0);
  await new Promise<void>((resolve) => client.end(false, {}, () => resolve()));
  io.stdout.write(`simulate: published ${published} messages, ${failed} failed\n`);
  return failed > 0 ? 1 : 0;
}
