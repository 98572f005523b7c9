/**
 * The track list: tracks grouped by estimator, each row naming the entity with its health as
 * a badge (glyph and word) and, when not ok, the reasons in words; the row's title holds them
 * too. Rows update in place; selecting one calls `onSelect(key)`.
 */
import { el, healthBadge } from './dom.js';

const REASON_WORDS = {
  'nis-high': 'NIS above band',
  'nis-low': 'NIS below band',
  'gate-rate': 'many gate rejections',
  silent: 'sensor silent',
  coasting: 'coasting',
  stale: 'stale',
  uncertainty: 'uncertainty high',
  numerics: 'numerical trouble',
  'not-initialized': 'not initialized',
};

/** Words for a health reason code (the code itself when unknown). */
export function reasonWords(code) {
  return REASON_WORDS[code] ?? code;
}

export class TrackList {
  /** @param {HTMLElement} root @param {(key: string) => void} onSelect */
  constructor(root, onSelect) {
    this.root = root;
    this.onSelect = onSelect;
    this.groups = new Map();
    this.rows = new Map();
    this.selected = null;
  }

  /** Adds or refreshes the row of `record`. */
  update(record) {
    let row = this.rows.get(record.key);
    if (row === undefined) row = this.addRow(record);
    const { state, reasons } = record.health;
    const words = reasons.map(reasonWords);
    if (record.stale && !reasons.includes('stale')) words.push('stale');
    row.dataset.health = state;
    row.title = `${record.entity}: ${state}${words.length > 0 ? ` (${words.join(', ')})` : ''}`;
    row.querySelector('.badge').replaceWith(healthBadge(state));
    row.querySelector('.track-reasons').textContent = state === 'ok' ? '' : words.join(' · ');
    this.updateCount(record.estimator);
  }

  /** Marks the row of `key` as selected. */
  select(key) {
    this.selected = key;
    for (const [k, row] of this.rows) row.setAttribute('aria-pressed', String(k === key));
  }

  addRow(record) {
    const group = this.group(record.estimator);
    const row = el('button', { type: 'button', className: 'track-row', dataset: { entity: record.entity, estimator: record.estimator } },
      el('span', { className: 'track-name' }, record.entity), healthBadge('ok'), el('span', { className: 'track-reasons' }));
    row.setAttribute('aria-pressed', String(record.key === this.selected));
    row.addEventListener('click', () => this.onSelect(record.key));
    const item = el('li', {}, row);
    const after = [...group.list.children].find((li) =>
      li.firstChild.dataset.entity.localeCompare(record.entity, undefined, { numeric: true }) > 0);
    group.list.insertBefore(item, after ?? null);
    this.rows.set(record.key, row);
    return row;
  }

  group(estimator) {
    let g = this.groups.get(estimator);
    if (g === undefined) {
      const count = el('span', { className: 'group-count' });
      const list = el('ul', { className: 'track-rows' });
      const section = el('section', { className: 'track-group', dataset: { estimator } },
        el('h2', { className: 'group-title' }, el('span', {}, estimator), count), list);
      this.root.append(section);
      g = { section, list, count };
      this.groups.set(estimator, g);
    }
    return g;
  }

  updateCount(estimator) {
    const g = this.groups.get(estimator);
    const rows = [...g.list.querySelectorAll('.track-row')];
    const notOk = rows.filter((r) => r.dataset.health !== 'ok').length;
    g.count.textContent = `${rows.length} tracked${notOk > 0 ? ` · ${notOk} need attention` : ''}`;
  }
}
