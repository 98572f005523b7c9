/**
 * `npm run bench [-- --json FILE] [-- --only core,decode]`: runs the benchmark sections, prints
 * one table of figures with their targets, and optionally writes the figures as JSON. Figures,
 * never assertions: these machines are shared and noisy, so compare ratios measured in one run.
 */
import { writeFileSync } from 'node:fs';
import { benchCore } from './core-bench.js';
import { benchDecode } from './decode-bench.js';
import { benchReplay } from './replay-bench.js';
import { benchE2e } from './e2e-bench.js';
import { benchScale } from './scale-bench.js';
import { benchMetrics } from './metrics-bench.js';

type Section = () => Promise<Record<string, number>> | Record<string, number>;

const SECTIONS: Record<string, Section> = {
  core: benchCore,
  decode: benchDecode,
  e2e: benchE2e,
  metrics: benchMetrics,
  replay: benchReplay,
  scale: benchScale,
};

/** Targets from the issues, shown beside each figure (`<=` or `>=`). */
const TARGETS: Record<string, string> = {
  'core.cv2d_ns': '<= 800',
  'core.speedup_vs_naive': '>= 8',
  'core.bytes_per_track': '<= 8192',
  'replay.msgs_per_s': '>= 300000',
  'e2e.ratio_to_relay': '>= 0.5',
  'e2e.p99_ms': '<= 5',
  'metrics.scrape_ms_10k_tracks': '<= 50',
};

function parseArgs(argv: readonly string[]): { json?: string; only?: string[] } {
  const out: { json?: string; only?: string[] } = {};
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--json') { const f = argv[++i]; if (f === undefined) throw new Error('--json needs a file name'); out.json = f; }
    else if (a === '--only') out.only = (argv[++i] ?? '').split(',').filter(Boolean);
    else throw new Error(`unknown argument ${a}; use --json FILE and/or --only ${Object.keys(SECTIONS).join(',')}`);
  }
  return out;
}

async function main(): Promise<void> {
  const args = parseArgs(process.argv.slice(2));
  const names = args.only ?? Object.keys(SECTIONS);
  const figures: Record<string, number> = {};
  for (const name of names) {
    const section = SECTIONS[name];
    if (section === undefined) throw new Error(`unknown section ${name}; known: ${Object.keys(SECTIONS).join(', ')}`);
    process.stderr.write(`bench: ${name} ...\n`);
    Object.assign(figures, await section());
  }
  const rows = Object.entries(figures).map(([k, v]) => [k, format(v), TARGETS[k] ?? '']);
  const w0 = Math.max(...rows.map((r) => r[0]!.length), 6);
  const w1 = Math.max(...rows.map((r) => r[1]!.length), 6);
  console.log(`${'figure'.padEnd(w0)}  ${'value'.padStart(w1)}  target`);
  for (const [k, v, t] of rows) console.log(`${k!.padEnd(w0)}  ${v!.padStart(w1)}  ${t}`);
  if (args.json !== undefined) writeFileSync(args.json, `${JSON.stringify(figures, null, 2)}\n`);
}

function format(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  if (Math.abs(v) >= 100) return v.toFixed(0);
  if (Math.abs(v) >= 1) return v.toFixed(2);
  return v.toPrecision(3);
}

main().catch((err: unknown) => {
  console.error(err);
  process.exitCode = 1;
});
