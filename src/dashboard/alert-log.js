/**
 * The alert log: health transitions, newest first, each with its event time, the track (and
 * sensor), from → to and the reasons in words. Re-rendered from the store's bounded list.
 */
import { clockTime, el, healthBadge } from './dom.js';
import { reasonWords } from './track-list.js';

export class AlertLog {
  /** @param {HTMLElement} list @param {HTMLElement} empty shown while there is nothing */
  constructor(list, empty) {
    this.list = list;
    this.empty = empty;
  }

  /** @param {readonly object[]} alerts oldest first (track-store's list) */
  render(alerts) {
    this.empty.hidden = alerts.length > 0;
    const items = [];
    for (let i = alerts.length - 1; i >= 0; i--) items.push(entry(alerts[i]));
    this.list.replaceChildren(...items);
  }
}

function entry(a) {
  const where = a.sensor === null ? a.entity : `${a.entity} · ${a.sensor}`;
  const reasons = a.reasons.length === 0 ? '' : a.reasons.map(reasonWords).join(', ');
  return el('li', { className: 'alert', dataset: { entity: a.entity, sensor: a.sensor ?? '', to: a.to, reasons: a.reasons.join(' ') } },
    el('time', { className: 'alert-time' }, clockTime(a.tS)),
    el('span', { className: 'alert-where', title: `${a.estimator}/${where}` }, where),
    el('span', { className: 'alert-change' }, healthBadge(a.from), el('span', { className: 'arrow' }, '→'), healthBadge(a.to)),
    el('span', { className: 'alert-reasons' }, reasons));
}
