/**
 * The `statecast report` page: one self-contained HTML file (inline CSS and SVG, no scripts,
 * no external assets) with the advisory caution, the summary table per estimator and sensor,
 * and a section per entity (see report-entity-section.ts). Nothing in it depends on the wall
 * clock, so the same recording gives the same page.
 */
import type { ReplaySummary, SensorSummary } from './replay-summary.js';
import { count, figure, isoTime, percent, reasonsText, windowsText } from './replay-summary-text.js';
import { escapeHtml } from './svg-plot.js';

/** The caution every report carries. */
export const ADVISORY_CAUTION =
  'These estimates are advisory and are not a safety function. Do not use them as the only input to the control of ' +
  'water systems or vehicles; keep independent instruments, interlocks and protection in charge, and defer to local ' +
  'codes and licensed practice.';

const STYLE = `
body{font:14px/1.45 system-ui,sans-serif;margin:24px auto;max-width:800px;color:#1d2430;background:#fff}
h1{font-size:22px;margin:0 0 4px}h2{font-size:18px;margin:28px 0 4px;border-top:1px solid #ccd;padding-top:16px}
h3{font-size:14px;margin:14px 0 4px;color:#445}
.caution{border:2px solid #b35c00;background:#fff6ec;padding:8px 12px;margin:12px 0}
table{border-collapse:collapse;margin:8px 0;font-size:13px}th,td{border:1px solid #ccd;padding:3px 6px;text-align:right}
th{background:#eef0f5}td.name,th.name{text-align:left}.facts,.note{color:#445}
svg.plot{display:block;margin:4px 0 10px;background:#fcfcfe}
.frame{fill:none;stroke:#99a}.grid{stroke:#e4e6ee}.tick,.axis,.legend text,.chart-title{font-size:10px;fill:#445}
.chart-title{font-weight:600}
.band-f{fill:#2f6fd6;fill-opacity:.18;stroke:none}.band-s{fill:#e07b00;fill-opacity:.22;stroke:none}
.line-f{fill:none;stroke:#2f6fd6;stroke-width:1.2}.line-s{fill:none;stroke:#e07b00;stroke-width:1.2}
.line-truth{fill:none;stroke:#111;stroke-width:1;stroke-dasharray:3 2}
.dots-m,.dots-nis{fill:none;stroke:#6b7280;stroke-width:2.6;stroke-linecap:round}
.line-w{fill:none;stroke:#7b2cbf;stroke-width:1.6}.wband{stroke:#7b2cbf;stroke-dasharray:5 3}
.bound{stroke:#c0262d;stroke-dasharray:4 3}.zero{stroke:#99a}
.bar-c0{fill:#2f6fd6}.bar-c1{fill:#e07b00}.bar-c2{fill:#2a9d8f}
.mark-r0{stroke:#c0262d}.mark-r1{stroke:#7b2cbf}.mark-r2{stroke:#2a9d8f}.mark-r3{stroke:#b35c00}.mark-r4{stroke:#555}.mark-r5{stroke:#d6336c}
[class^="mark-"]{stroke-width:1.4;fill:none}
rect.key.line-f,rect.key.line-s,rect.key.line-truth,rect.key.dots-m,rect.key.dots-nis,rect.key.line-w{fill:currentColor}
rect.key.line-f{color:#2f6fd6}rect.key.line-s{color:#e07b00}rect.key.line-truth{color:#111}rect.key.dots-m,rect.key.dots-nis{color:#6b7280}
rect.key.line-w{color:#7b2cbf}rect.key.bound{fill:#c0262d}rect.key.wband{fill:#7b2cbf}
rect.key[class*="mark-r0"]{fill:#c0262d}rect.key[class*="mark-r1"]{fill:#7b2cbf}rect.key[class*="mark-r2"]{fill:#2a9d8f}
rect.key[class*="mark-r3"]{fill:#b35c00}rect.key[class*="mark-r4"]{fill:#555}rect.key[class*="mark-r5"]{fill:#d6336c}
`;

function sensorRow(estimator: string, s: SensorSummary): string {
  return `<tr><td class="name">${escapeHtml(estimator)}</td><td class="name">${escapeHtml(s.sensor)}</td><td>${count(s.accepted)}</td>` +
    `<td>${count(s.late)}</td><td>${count(s.tooLate)}</td><td class="name">${escapeHtml(reasonsText(s.rejected))}</td>` +
    `<td>${escapeHtml(windowsText(s))}</td></tr>`;
}

/** The summary tables of a replay. */
export function renderSummaryTables(summary: ReplaySummary): string {
  const rows = summary.estimators.flatMap((e) => e.sensors.map((s) => sensorRow(e.estimator, s)));
  const parts = [
    '<table class="summary"><thead><tr><th class="name">estimator</th><th class="name">sensor</th><th>accepted</th><th>late</th>' +
      '<th>too late</th><th class="name">rejected by reason</th><th>NIS windows inside the band</th></tr></thead>',
    `<tbody>${rows.join('')}</tbody></table>`,
  ];
  const truth = summary.estimators.filter((e) => e.truth !== null);
  if (truth.length > 0) {
    parts.push(
      '<table class="truth"><thead><tr><th class="name">estimator</th><th>truth samples</th><th>NEES below χ² 95%</th>' +
        '<th>mean NEES</th><th>95% band</th><th class="name">RMSE per state</th></tr></thead><tbody>',
      ...truth.map((e) => {
        const t = e.truth!;
        const rmse = Object.entries(t.rmse).map(([k, v]) => `${k} ${figure(v)}`).join(', ');
        return `<tr><td class="name">${escapeHtml(e.estimator)}</td><td>${count(t.samples)}</td><td>${percent(t.shareBelowQuantile)}</td>` +
          `<td>${figure(t.meanNees)}</td><td>[${figure(t.band[0])}, ${figure(t.band[1])}]</td><td class="name">${escapeHtml(rmse)}</td></tr>`;
      }),
      '</tbody></table>',
    );
  }
  return parts.join('\n');
}

/** What the page says about its input. */
export interface ReportPageInput {
  readonly title: string;
  readonly summary: ReplaySummary;
  /** Entity sections, already rendered. */
  readonly sections: readonly string[];
  /** Entities seen in total (sections may be capped). */
  readonly entityCount: number;
}

/** The whole page. */
export function renderReportPage(input: ReportPageInput): string {
  const s = input.summary;
  const span = s.firstMs === null || s.lastMs === null ? '' : ` from ${isoTime(s.firstMs)} to ${isoTime(s.lastMs)}`;
  const capped = input.sections.length < input.entityCount
    ? `<p class="note">Showing the first ${input.sections.length} of ${input.entityCount} entities, in the order they first appeared.</p>`
    : '';
  return [
    '<!DOCTYPE html>',
    '<html lang="en"><head><meta charset="utf-8">',
    '<meta name="viewport" content="width=device-width, initial-scale=1">',
    `<title>${escapeHtml(input.title)}</title><style>${STYLE}</style></head><body>`,
    `<h1>${escapeHtml(input.title)}</h1>`,
    `<p class="facts">${s.interrupted ? 'Interrupted after ' : ''}${count(s.messages)} messages${escapeHtml(span)}; ${count(s.truthMessages)} ground-truth samples; ${count(s.unrouted)} on no sensor's topic.</p>`,
    `<p class="caution"><strong>Advisory only.</strong> ${ADVISORY_CAUTION}</p>`,
    '<h2>Summary</h2>',
    renderSummaryTables(s),
    '<p class="note">NIS windows: non-overlapping windows of health.windowN values per sensor and entity whose mean lies in the ' +
      'two-sided chi-square band at health.confidence. NEES: the predicted estimate at each truth time against the chi-square ' +
      'quantile of the state dimension (Bar-Shalom, Li, Kirubarajan 2001, §5.4).</p>',
    capped,
    ...input.sections,
    '</body></html>',
    '',
  ].join('\n');
}
