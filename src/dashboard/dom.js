/**
 * A tiny element builder: `el('li', { className: 'row', dataset: { entity: 'tank-a' } }, child...)`.
 * Text children are set as text, never parsed as HTML, so names from the wire stay inert.
 */
export function el(tag, props = {}, ...children) {
  const node = document.createElement(tag);
  for (const [key, value] of Object.entries(props)) {
    if (key === 'dataset') Object.assign(node.dataset, value);
    else node[key] = value;
  }
  for (const child of children) node.append(child);
  return node;
}

const GLYPHS = { ok: '✓', degraded: '!', failed: '✕' };

/** A health badge: a glyph and the word, so the state never rests on colour alone. */
export function healthBadge(state) {
  return el('span', { className: 'badge', dataset: { health: state } },
    el('span', { className: 'badge-glyph', ariaHidden: 'true' }, GLYPHS[state] ?? '?'),
    el('span', { className: 'badge-text' }, state));
}

// Built once: a formatter per call costs about a millisecond.
const CLOCK = new Intl.DateTimeFormat([], { hour: '2-digit', minute: '2-digit', second: '2-digit', hour12: false });

/** Event time (epoch s) as local clock time with seconds. */
export function clockTime(tS) {
  return Number.isFinite(tS) ? CLOCK.format(new Date(tS * 1000)) : '—';
}

/** A number for a table cell: 4 significant digits, a dash for null or NaN. */
export function num(v) {
  return typeof v === 'number' && Number.isFinite(v) ? Number(v.toPrecision(4)).toString() : '—';
}
