/**
 * The replay summary as plain text for a terminal: one block per estimator with a row per
 * sensor (accepted, late, too late, rejections by reason, NIS windows inside their band), and
 * the ground-truth NEES and RMSE figures when the recording had truth.
 */
import type { EstimatorSummary, ReplaySummary, SensorSummary } from './replay-summary.js';

/** Formats a count with thousands separators (fixed locale, so output does not vary by machine). */
export function count(v: number): string {
  return Math.round(v).toString().replace(/\B(?=(\d{3})+(?!\d))/g, ',');
}

/** A share as a percentage with one decimal, or "n/a". */
export function percent(share: number | null): string {
  return share === null || !Number.isFinite(share) ? 'n/a' : `${(100 * share).toFixed(1)}%`;
}

/** Three significant digits, or "n/a". */
export function figure(v: number): string {
  return Number.isFinite(v) ? Number(v.toPrecision(3)).toString() : 'n/a';
}

/** ISO 8601 of epoch ms, or the number itself when it is no representable date. */
export function isoTime(ms: number): string {
  return Number.isFinite(ms) && Math.abs(ms) < 8.64e15 ? new Date(ms).toISOString() : String(ms);
}

/** Rejections by reason as `gate 12, duplicate 3`, or `-`. */
export function reasonsText(rejected: Readonly<Record<string, number>>): string {
  const parts = Object.entries(rejected).map(([reason, n]) => `${reason} ${count(n)}`);
  return parts.length === 0 ? '-' : parts.join(', ');
}

/** The NIS-window figure of a sensor, e.g. `18/20 (90.0%) in [0.48, 1.71]`. */
export function windowsText(s: SensorSummary): string {
  const w = s.nisWindows;
  return `${count(w.inside)}/${count(w.full)} (${percent(w.share)}) in [${figure(w.band[0])}, ${figure(w.band[1])}]`;
}

function table(rows: string[][]): string[] {
  const widths = rows[0]!.map((_, c) => Math.max(...rows.map((r) => r[c]!.length)));
  return rows.map((r) => `  ${r.map((cell, c) => (c === 0 || c === r.length - 1 ? cell.padEnd(widths[c]!) : cell.padStart(widths[c]!))).join('  ')}`.trimEnd());
}

function estimatorBlock(e: EstimatorSummary): string[] {
  const lines = [`estimator ${e.estimator}: ${count(e.entities)} entities, ${count(e.estimates)} estimates, ${count(e.healthChanges)} health changes`];
  const first = e.sensors[0];
  const w = first?.nisWindows;
  const header = ['sensor', 'accepted', 'late', 'too late', `NIS windows of ${w?.windowN ?? '?'} inside the ${percent(w?.confidence ?? null)} band`, 'rejected'];
  const rows = [header, ...e.sensors.map((s) => [s.sensor, count(s.accepted), count(s.late), count(s.tooLate), windowsText(s), reasonsText(s.rejected)])];
  lines.push(...table(rows));
  if (e.refilterRefusals > 0) lines.push(`  smoother re-filter refused ${count(e.refilterRefusals)} measurements the live run had accepted`);
  const t = e.truth;
  if (t !== null) {
    lines.push(
      `  truth: ${count(t.samples)} samples scored (${count(t.skipped)} skipped); NEES below the χ²(${t.dof}) 95% quantile ${figure(t.quantile)}: ${percent(t.shareBelowQuantile)}`,
      `  mean NEES ${figure(t.meanNees)} (95% band [${figure(t.band[0])}, ${figure(t.band[1])}]); RMSE ${Object.entries(t.rmse).map(([k, v]) => `${k} ${figure(v)}`).join(', ')}`,
    );
  }
  return lines;
}

/** The summary text, newline-terminated. */
export function formatReplaySummary(s: ReplaySummary): string {
  const span = s.firstMs === null || s.lastMs === null ? '' : ` from ${isoTime(s.firstMs)} to ${isoTime(s.lastMs)}`;
  const lines = [
    `${s.interrupted ? 'interrupted after ' : ''}${count(s.messages)} messages${span}: ${count(s.truthMessages)} ground truth, ${count(s.unrouted)} on no sensor's topic`,
  ];
  for (const e of s.estimators) lines.push(...estimatorBlock(e));
  return `${lines.join('\n')}\n`;
}
