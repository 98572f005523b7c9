/**
 * `statecast` — the only file that touches process.* (argv, signals, exit codes, stdio).
 *
 *   statecast run [--config FILE] [--pretty]      the daemon (no config: the built-in demo)
 *   statecast check-config FILE                   validate a config and exit
 *   statecast schema                              print the config's JSON Schema
 *   statecast simulate --scenario NAME --broker URL [...]
 *   statecast record | replay | tune | report ... offline tools
 */
import { pino, type Logger } from 'pino';
import { AppError, APP_ERRORS } from './app-errors.js';
import { buildApp } from './app.js';
import type { Config } from './config/config-schema.js';
import { formatConfigIssues } from './config/config-error.js';
import type { DeepReadonly } from './config/deep-freeze.js';
import { defaultDemoConfig } from './config/default-demo-config.js';
import { configJsonSchema, loadConfig } from './config/load-config.js';
import { redactConfig } from './config/redact-config.js';
import { runSimulateCommand } from './tools/simulate-command.js';
import { TOOL_COMMANDS, processToolIo } from './tools/tool-commands.js';

const USAGE = `statecast — real-time state estimation for MQTT telemetry

usage:
  statecast run [--config FILE] [--pretty]   run the daemon (without --config: the built-in demo
                                             with an embedded broker and simulator)
  statecast check-config FILE                validate a configuration file
  statecast schema                           print the configuration's JSON Schema
  statecast simulate --scenario tank-farm|vehicle-yard|all --broker URL [--seed N]
                     [--faults SPEC] [--speed X] [--duration-s S] [--protocol 5|4] [--no-truth]
  statecast record  --config FILE --broker URL --out FILE.jsonl
  statecast replay  --config FILE --in FILE.jsonl --out FILE.jsonl [--smooth] [--json]
  statecast tune    --config FILE --in FILE.jsonl
  statecast report  --config FILE --in FILE.jsonl --out report.html

Estimates are advisory and are not a safety function; defer to local codes and licensed practice.`;

function fail(err: unknown): number {
  if (err instanceof AppError) {
    process.stderr.write(`statecast: ${err.code}: ${err.message}\n`);
    return err.exitCode;
  }
  const code = (err as { code?: unknown }).code;
  if (typeof code === 'string' && code in APP_ERRORS) {
    process.stderr.write(`statecast: ${code}: ${(err as Error).message}\n`);
    return APP_ERRORS[code as keyof typeof APP_ERRORS].exitCode;
  }
  process.stderr.write(`statecast: ${APP_ERRORS.STARTUP_FAILED.code}: ${err instanceof Error ? err.stack ?? err.message : String(err)}\n`);
  return APP_ERRORS.STARTUP_FAILED.exitCode;
}

function readConfig(path: string | undefined): DeepReadonly<Config> {
  if (path === undefined) return defaultDemoConfig(process.env);
  const result = loadConfig(path, process.env);
  if (!result.ok) throw new AppError('CONFIG_INVALID', `${path}\n${formatConfigIssues(result.issues)}`);
  return result.config;
}

function makeLogger(config: DeepReadonly<Config>, pretty: boolean): Logger {
  const level = config.log.level;
  if (pretty || config.log.pretty) {
    return pino({ level, transport: { target: 'pino-pretty', options: { destination: 2, colorize: process.stderr.isTTY } } });
  }
  return pino({ level }, pino.destination({ dest: 2, sync: false }));
}

async function runDaemon(args: string[]): Promise<number> {
  let configPath: string | undefined;
  let pretty = false;
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    if (a === '--config') configPath = args[++i];
    else if (a === '--pretty') pretty = true;
    else throw new AppError('USAGE', `unknown argument ${a} for run\n\n${USAGE}`);
  }
  let config = readConfig(configPath);
  const log = makeLogger(config, pretty);
  log.info({ config: redactConfig(config) }, configPath === undefined ? 'starting with the built-in demo configuration' : `starting with ${configPath}`);
  const app = buildApp(config, { logger: log });
  const started = await app.start();
  process.stdout.write([
    'statecast is running.',
    `  dashboard   ${started.httpUrl}`,
    `  websocket   ${started.wsUrl}`,
    `  metrics     ${started.httpUrl}metrics`,
    `  api         ${started.httpUrl}api/v1/tracks`,
    `  broker      ${started.brokerUrl}${started.embeddedBroker ? ' (embedded, MQTT 3.1.1)' : ''}`,
    '  Estimates are advisory, not a safety function; defer to local codes and licensed practice.',
    '  Press Ctrl-C to stop.',
    '',
  ].join('\n'));
  return await new Promise<number>((resolve) => {
    let signals = 0;
    const shutdown = (signal: string): void => {
      signals += 1;
      if (signals > 1) {
        log.warn({ signal }, 'second signal: exiting now');
        resolve(1);
        return;
      }
      log.info({ signal }, 'stopping');
      app.stop(10_000).then(() => resolve(0), (err: unknown) => { log.error({ err }, 'stop failed'); resolve(1); });
    };
    process.on('SIGTERM', () => shutdown('SIGTERM'));
    process.on('SIGINT', () => shutdown('SIGINT'));
    process.on('SIGHUP', () => {
      if (configPath === undefined) {
        log.info({}, 'SIGHUP: the built-in demo configuration has nothing to reload');
        return;
      }
      const result = loadConfig(configPath, process.env);
      if (!result.ok) {
        log.error({ issues: result.issues }, 'SIGHUP: the new configuration is invalid; keeping the old one');
        return;
      }
      config = result.config;
      app.reload(config).catch((err: unknown) => log.error({ err }, 'reload failed; the old configuration may be partly in force'));
    });
  });
}

function checkConfig(args: string[]): number {
  const path = args[0];
  if (path === undefined || args.length > 1) throw new AppError('USAGE', `check-config takes one file\n\n${USAGE}`);
  const result = loadConfig(path, process.env);
  if (!result.ok) {
    process.stderr.write(`${path}: ${result.issues.length} problem${result.issues.length === 1 ? '' : 's'}\n${formatConfigIssues(result.issues)}\n`);
    return APP_ERRORS.CONFIG_INVALID.exitCode;
  }
  const n = result.config.estimators.length;
  process.stdout.write(`${path}: ok (${n} estimator${n === 1 ? '' : 's'}: ${result.config.estimators.map((e) => e.name).join(', ')})\n`);
  return 0;
}

async function main(argv: string[]): Promise<number> {
  const [command, ...rest] = argv;
  switch (command) {
    case 'run':
      return runDaemon(rest);
    case 'check-config':
      return checkConfig(rest);
    case 'schema':
      process.stdout.write(`${JSON.stringify(configJsonSchema(), null, 2)}\n`);
      return 0;
    case 'simulate':
      return runSimulateCommand(rest, processToolIo());
    case undefined:
    case 'help':
    case '--help':
    case '-h':
      process.stdout.write(`${USAGE}\n`);
      return command === undefined ? 2 : 0;
    default: {
      const tool = TOOL_COMMANDS[command];
      if (tool !== undefined) return (await tool())(rest, processToolIo());
      throw new AppError('USAGE', `unknown command ${command}\n\n${USAGE}`);
    }
  }
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
    // Let pino flush, then leave even if a stray handle (a reconnect timer) lingers.
    setTimeout(() => process.exit(code), 200).unref();
  },
  (err: unknown) => {
    process.exitCode = fail(err);
    setTimeout(() => process.exit(process.exitCode as number), 200).unref();
  },
);
