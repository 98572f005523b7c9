/**
 * What `statecast tune` prints: a table of start, fitted value and interval per parameter, ℓ
 * at the start and at the fit, the NIS test before and after, and the YAML to paste; or the
 * same as one JSON object. Pure formatting.
 */
import type { NisConsistency } from './nis-consistency.js';
import type { NoiseFit } from './noise-fit.js';
import { fittedYamlSnippet, roundSignificant } from './fitted-yaml-snippet.js';
import type { TuneProblem } from './tune-problem.js';

/** Where the estimator sits in the config file, for the paste hint. */
export interface EstimatorPlace {
  readonly index: number;
  readonly name: string;
}

/** The fitted values by path. */
export function fittedValues(problem: TuneProblem, fit: NoiseFit): Map<string, number> {
  return new Map(problem.free.map((f, i) => [f.path, fit.fitted.theta[i]!]));
}

/** 3 significant figures; exponent form outside [1e-3, 1e6), as in the YAML snippet. */
function sig(v: number): string {
  if (!Number.isFinite(v) || v === 0) return String(v);
  const r = roundSignificant(v);
  return Math.abs(r) >= 1e-3 && Math.abs(r) < 1e6 ? String(r) : r.toExponential();
}

function nisText(n: NisConsistency | null): string {
  if (n === null || Number.isNaN(n.meanNis)) return 'n/a';
  return `${n.meanNis.toFixed(3)} (${n.inside ? 'inside' : 'outside'})`;
}

function intervalProblem(fit: NoiseFit): string | null {
  if (fit.intervals === null) return 'no intervals: the search was stopped';
  if (fit.intervals.ok) return null;
  return fit.intervals.reason === 'not-a-maximum'
    ? 'no intervals: ℓ is not curved down at the fit (a parameter the data do not determine, or no maximum yet)'
    : 'no intervals: ℓ is not finite near the fit';
}

/** The human-readable report, ending with the YAML snippet. */
export function tuneReportText(problem: TuneProblem, fit: NoiseFit, place: EstimatorPlace): string {
  const rec = problem.recording;
  const like = fit.fitted.likelihood;
  const lines: string[] = [];
  lines.push(
    `estimator "${place.name}" (estimators[${place.index}]): ${rec.entities.length} ${rec.entities.length === 1 ? 'entity' : 'entities'}, ` +
      `${like?.updates ?? 0} updates in ℓ (${like?.initial ?? 0} initializing updates left out), ${problem.free.length} free parameters`,
  );
  if (rec.refused > 0 || rec.unrouted > 0) lines.push(`  ${rec.refused} messages refused by the decoders, ${rec.unrouted} on other topics`);
  const width = Math.max(9, ...problem.free.map((f) => f.path.length));
  lines.push(`  ${'parameter'.padEnd(width)}  ${'start'.padEnd(10)} ${'fitted'.padEnd(10)} 95% interval`);
  const intervals = fit.intervals?.ok === true ? fit.intervals : null;
  problem.free.forEach((f, i) => {
    const interval = intervals === null ? '-' : `${sig(intervals.lower[i]!)} … ${sig(intervals.upper[i]!)}`;
    const bound = fit.atBound[i] === true ? '  (at its bound)' : '';
    lines.push(`  ${f.path.padEnd(width)}  ${sig(f.start).padEnd(10)} ${sig(fit.fitted.theta[i]!).padEnd(10)} ${interval}${bound}`);
  });
  const problemText = intervalProblem(fit);
  if (problemText !== null) lines.push(`  ${problemText}`);
  const l0 = fit.start.likelihood?.logLikelihood ?? Number.NaN;
  const l1 = like?.logLikelihood ?? Number.NaN;
  lines.push(`log-likelihood: start ${l0.toFixed(2)}, fitted ${l1.toFixed(2)} (${l1 - l0 >= 0 ? '+' : ''}${(l1 - l0).toFixed(2)})`);
  const band = fit.fitted.nis;
  const bandText = band === null || Number.isNaN(band.lower) ? '' : ` (N = ${band.updates}, 95% band ${band.lower.toFixed(3)} … ${band.upper.toFixed(3)})`;
  lines.push(`NIS mean${bandText}: start ${nisText(fit.start.nis)}, fitted ${nisText(band)}`);
  if ((like?.refused ?? 0) > 0) lines.push(`warning: the filter refused ${like!.refused} steps for numerics at the fit; ℓ is suspect`);
  const how = fit.stopped ? 'stopped early, best so far' : fit.converged ? 'converged' : 'iteration budget reached before convergence';
  lines.push(`search: ${how} after ${fit.iterations} iteration${fit.iterations === 1 ? '' : 's'}, ${fit.evaluations} likelihood evaluations`);
  lines.push('');
  lines.push(`YAML to paste into estimators[${place.index}] ("${place.name}"):`);
  lines.push(fittedYamlSnippet(problem.base, fittedValues(problem, fit)).trimEnd());
  return `${lines.join('\n')}\n`;
}

/** The report as one JSON-able object (`--json`). */
export function tuneReportJson(problem: TuneProblem, fit: NoiseFit, place: EstimatorPlace): Record<string, unknown> {
  const intervals = fit.intervals?.ok === true ? fit.intervals : null;
  const nis = (n: NisConsistency | null) => (n === null ? null : { ...n });
  return {
    estimator: place.name,
    estimatorIndex: place.index,
    entities: problem.recording.entities.length,
    updates: fit.fitted.likelihood?.updates ?? 0,
    parameters: problem.free.map((f, i) => ({
      path: f.path,
      start: f.start,
      fitted: fit.fitted.theta[i]!,
      lower: intervals?.lower[i] ?? null,
      upper: intervals?.upper[i] ?? null,
      sigmaLog: intervals?.sigmaLog[i] ?? null,
      atBound: fit.atBound[i] === true,
    })),
    intervalProblem: intervalProblem(fit),
    logLikelihood: { start: fit.start.likelihood?.logLikelihood ?? null, fitted: fit.fitted.likelihood?.logLikelihood ?? null },
    nis: { start: nis(fit.start.nis), fitted: nis(fit.fitted.nis) },
    search: { converged: fit.converged, stopped: fit.stopped, iterations: fit.iterations, evaluations: fit.evaluations },
    yaml: fittedYamlSnippet(problem.base, fittedValues(problem, fit)),
  };
}
