/**
 * The selected track's per-sensor statistics from the detail API: counts, refusals by reason,
 * gate rejection rate, NIS against its band, innovation ratios.
 */
import { el, healthBadge, num } from './dom.js';

const HEADINGS = ['sensor', 'health', 'accepted', 'late', 'refused', 'gate rate', 'last NIS', 'windowed NIS', 'band', 'innovation ν/√S'];

/** Renders `record.sensors` into `table` (a <table>). */
export function renderSensorTable(table, record) {
  const head = el('thead', {}, el('tr', {}, ...HEADINGS.map((h) => el('th', { scope: 'col' }, h))));
  const rows = [...record.sensors.values()].map((s) => {
    const refused = Object.entries(s.rejected ?? {}).map(([reason, n]) => `${reason} ${n}`).join(', ') || '0';
    const [lo, hi] = s.nisBand ?? [NaN, NaN];
    const full = s.windowFill > 0;
    const inBand = s.windowedNisMean >= lo && s.windowedNisMean <= hi;
    return el('tr', { dataset: { sensor: s.name } },
      el('th', { scope: 'row' }, s.name),
      el('td', {}, healthBadge(s.health)),
      el('td', { className: 'n' }, String(s.accepted)),
      el('td', { className: 'n' }, String(s.late)),
      el('td', {}, refused),
      el('td', { className: 'n' }, `${num(100 * s.gateRejectionRate)} %`),
      el('td', { className: 'n' }, num(s.lastNis)),
      el('td', { className: 'n', dataset: { inBand: String(!full || inBand) } }, full ? `${num(s.windowedNisMean)}${inBand ? '' : ' (outside)'}` : '—'),
      el('td', { className: 'n' }, `${num(lo)} – ${num(hi)}`),
      el('td', { className: 'n' }, (s.innovationRatio ?? []).map(num).join(', ') || '—'));
  });
  const body = rows.length > 0 ? rows : [el('tr', {}, el('td', { colSpan: HEADINGS.length, className: 'muted' }, 'waiting for the first statistics…'))];
  table.replaceChildren(head, el('tbody', {}, ...body));
}
