/**
 * A small inline-SVG chart for the HTML report: linear axes with round-number ticks, lines,
 * bands, dot clouds, horizontal reference lines, bars and tick marks along the bottom. Styling
 * is by CSS class (the page's stylesheet), so the markup stays short; everything drawn is
 * clipped to the plot area.
 */

/** HTML/XML text escaping for element content and attribute values. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/** Round-number ticks (1, 2 or 5 × 10^k apart) covering [a, b]. */
export function niceTicks(a: number, b: number, target = 5): number[] {
  if (!(b > a)) return [a];
  const raw = (b - a) / target;
  const p = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * p).find((s) => s >= raw) ?? 10 * p;
  const out: number[] = [];
  for (let v = Math.ceil(a / step) * step; v <= b + step * 1e-9; v += step) out.push(Math.abs(v) < step * 1e-9 ? 0 : v);
  return out;
}

/** A tick label: at most four significant digits. */
export function tickLabel(v: number): string {
  return String(Number(v.toPrecision(4)));
}

const W = 760;
const H = 200;
const LEFT = 64;
const RIGHT = 12;
const TOP = 22;
const BOTTOM = 32;

/** One chart; add elements, then render(). */
export class SvgChart {
  private readonly parts: string[] = [];
  private readonly legend: { cls: string; label: string }[] = [];
  private readonly clipId: string;

  /**
   * A chart over x in [x0, x1] and y in [y0, y1] (y1 > y0; a flat range is widened). `id` must
   * be unique in the page (it names the clip path).
   */
  constructor(
    id: string,
    private readonly title: string,
    private readonly xLabel: string,
    private readonly x0: number,
    private readonly x1: number,
    private y0: number,
    private y1: number,
  ) {
    if (!(this.y1 > this.y0)) {
      const pad = Math.abs(this.y0) > 0 ? Math.abs(this.y0) * 0.1 : 1;
      this.y0 -= pad;
      this.y1 += pad;
    }
    this.clipId = `clip-${id}`;
  }

  private px(x: number): string {
    const w = this.x1 > this.x0 ? this.x1 - this.x0 : 1;
    return (LEFT + ((x - this.x0) / w) * (W - LEFT - RIGHT)).toFixed(1);
  }

  private py(y: number): string {
    const v = TOP + (1 - (y - this.y0) / (this.y1 - this.y0)) * (H - TOP - BOTTOM);
    // Far-off values are pinned just outside the plot, where the clip path hides them.
    return Math.min(H + 50, Math.max(-50, v)).toFixed(1);
  }

  /** A polyline through the points. */
  line(x: readonly number[], y: readonly number[], cls: string, label?: string): void {
    if (x.length === 0) return;
    this.parts.push(`<polyline class="${cls}" points="${x.map((v, i) => `${this.px(v)},${this.py(y[i]!)}`).join(' ')}"/>`);
    if (label !== undefined) this.legend.push({ cls, label });
  }

  /** A filled band between lower and upper. */
  band(x: readonly number[], lower: readonly number[], upper: readonly number[], cls: string, label?: string): void {
    if (x.length === 0) return;
    const up = x.map((v, i) => `${this.px(v)},${this.py(upper[i]!)}`);
    const down = x.map((v, i) => `${this.px(v)},${this.py(lower[i]!)}`).reverse();
    this.parts.push(`<polygon class="${cls}" points="${[...up, ...down].join(' ')}"/>`);
    if (label !== undefined) this.legend.push({ cls, label });
  }

  /** Dots (zero-length round-capped segments, one path for the lot). */
  dots(x: readonly number[], y: readonly number[], cls: string, label?: string): void {
    if (x.length === 0) return;
    this.parts.push(`<path class="${cls}" d="${x.map((v, i) => `M${this.px(v)},${this.py(y[i]!)}h0`).join('')}"/>`);
    if (label !== undefined) this.legend.push({ cls, label });
  }

  /** A horizontal reference line across the plot. */
  hline(y: number, cls: string, label?: string): void {
    if (!Number.isFinite(y)) return;
    this.parts.push(`<line class="${cls}" x1="${LEFT}" x2="${W - RIGHT}" y1="${this.py(y)}" y2="${this.py(y)}"/>`);
    if (label !== undefined) this.legend.push({ cls, label });
  }

  /** Vertical bars from 0 to y at each x, width in x units. */
  bars(x: readonly number[], y: readonly number[], width: number, cls: string, label?: string): void {
    if (x.length === 0) return;
    const d = x.map((v, i) => {
      const a = Number(this.px(v - width / 2));
      const b = Number(this.px(v + width / 2));
      const top = Math.min(Number(this.py(y[i]!)), Number(this.py(0)));
      const h = Math.abs(Number(this.py(y[i]!)) - Number(this.py(0)));
      return `M${a.toFixed(1)},${top.toFixed(1)}h${(b - a).toFixed(1)}v${h.toFixed(1)}h${(a - b).toFixed(1)}z`;
    });
    this.parts.push(`<path class="${cls}" d="${d.join('')}"/>`);
    if (label !== undefined) this.legend.push({ cls, label });
  }

  /** Short ticks along the bottom edge at each x (events such as rejections). */
  marks(x: readonly number[], cls: string, label?: string): void {
    if (x.length === 0) return;
    const yb = H - BOTTOM;
    this.parts.push(`<path class="${cls}" d="${x.map((v) => `M${this.px(v)},${yb}v-7`).join('')}"/>`);
    if (label !== undefined) this.legend.push({ cls, label });
  }

  /** The finished `<svg>` element. */
  render(): string {
    const xTicks = niceTicks(this.x0, this.x1, 8);
    const yTicks = niceTicks(this.y0, this.y1, 4);
    const grid = [
      ...xTicks.map((v) => `<line class="grid" x1="${this.px(v)}" x2="${this.px(v)}" y1="${TOP}" y2="${H - BOTTOM}"/><text class="tick" x="${this.px(v)}" y="${H - BOTTOM + 13}" text-anchor="middle">${tickLabel(v)}</text>`),
      ...yTicks.map((v) => `<line class="grid" x1="${LEFT}" x2="${W - RIGHT}" y1="${this.py(v)}" y2="${this.py(v)}"/><text class="tick" x="${LEFT - 4}" y="${Number(this.py(v)) + 3}" text-anchor="end">${tickLabel(v)}</text>`),
    ];
    let lx = LEFT + 4;
    const legend = this.legend.map(({ cls, label }) => {
      const item = `<g class="legend"><rect class="${cls} key" x="${lx}" y="${TOP - 14}" width="10" height="8"/><text x="${lx + 13}" y="${TOP - 7}">${escapeHtml(label)}</text></g>`;
      lx += 22 + 6 * label.length;
      return item;
    });
    return [
      `<svg class="plot" xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="${escapeHtml(this.title)}">`,
      `<title>${escapeHtml(this.title)}</title>`,
      `<clipPath id="${this.clipId}"><rect x="${LEFT}" y="${TOP}" width="${W - LEFT - RIGHT}" height="${H - TOP - BOTTOM}"/></clipPath>`,
      ...grid,
      `<rect class="frame" x="${LEFT}" y="${TOP}" width="${W - LEFT - RIGHT}" height="${H - TOP - BOTTOM}"/>`,
      `<g clip-path="url(#${this.clipId})">${this.parts.join('')}</g>`,
      ...legend,
      `<text class="axis" x="${W - RIGHT}" y="${H - 4}" text-anchor="end">${escapeHtml(this.xLabel)}</text>`,
      `<text class="chart-title" x="${W - RIGHT}" y="${TOP - 7}" text-anchor="end">${escapeHtml(this.title)}</text>`,
      '</svg>',
    ].join('');
  }
}
