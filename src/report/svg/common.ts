/**
 * Small helpers for hand-built SVG: escaping, compact coordinates, a fixed palette, axes and a
 * legend. Everything is deterministic (no random ids, no dates), so the same results give
 * byte-identical SVG.
 */

/** Escape text and attribute values for XML/HTML. */
export function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');
}

/** Coordinates rounded to 0.01 px keep files small and stable. */
export function num(v: number): string {
  const r = Math.round(v * 100) / 100;
  return Object.is(r, -0) ? '0' : String(r);
}

/** Attribute list from an object; undefined values are left out. */
export function attrs(a: Record<string, string | number | undefined>): string {
  let s = '';
  for (const [k, v] of Object.entries(a)) {
    if (v === undefined) continue;
    s += ` ${k}="${esc(typeof v === 'number' ? num(v) : v)}"`;
  }
  return s;
}

/**
 * Series colours (our own choice: ten hues distinguishable in print and for the common colour
 * vision deficiencies; beyond ten, lines also change dash pattern).
 */
export const PALETTE = ['#1f6fb4', '#d9731a', '#2a9d5b', '#c23b4a', '#7b5ea7', '#8c6d31', '#d16aa8', '#4d4d4d', '#17a2b8', '#a39200'];
const DASHES = [undefined, '7 3', '2 3', '9 3 2 3'];

export interface SeriesStyle {
  color: string;
  dash?: string;
  /** Index into d3's symbolsFill for scatter markers. */
  symbol: number;
}

export function seriesStyle(index: number): SeriesStyle {
  return {
    color: PALETTE[index % PALETTE.length],
    dash: DASHES[Math.floor(index / PALETTE.length) % DASHES.length],
    symbol: index % 7,
  };
}

export const FONT = 'system-ui, -apple-system, Segoe UI, Roboto, Helvetica, Arial, sans-serif';
export const TEXT_COLOR = '#222';
export const GRID_COLOR = '#e3e3e3';
export const AXIS_COLOR = '#777';

/** Opening tag of a standalone-capable SVG with an accessible title. */
export function svgOpen(width: number, height: number, title: string, plot: string, extra: Record<string, string | number | undefined> = {}): string {
  return `<svg xmlns="http://www.w3.org/2000/svg"${attrs({
    width, height, viewBox: `0 0 ${num(width)} ${num(height)}`, role: 'img',
    'font-family': FONT, 'font-size': 12, fill: TEXT_COLOR, 'data-plot': plot, ...extra,
  })}><title>${esc(title)}</title>`
    + `<rect${attrs({ x: 0, y: 0, width, height, fill: '#fff' })}/>`;
}

/** Rough text width for layout (no font metrics available when rendering on the server side). */
export function textWidth(s: string, fontSize = 12): number {
  return [...s].length * fontSize * 0.58;
}

export function text(x: number, y: number, s: string, a: Record<string, string | number | undefined> = {}): string {
  return `<text${attrs({ x, y, ...a })}>${esc(s)}</text>`;
}

/** 10 to an integer power as "10" with a raised exponent (SVG tspan, no MathML). */
export function powerOfTenLabel(x: number, y: number, k: number, anchor: 'end' | 'middle' = 'end'): string {
  const exp = k < 0 ? `\u2212${-k}` : String(k);
  return `<text${attrs({ x, y, 'text-anchor': anchor })}>10<tspan dy="-5" font-size="9">${esc(exp)}</tspan></text>`;
}

/** Short tick label for linear axes: 0, 25, 1.5, 1e+6 … */
export function tickLabel(v: number): string {
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(0).replace('e+', 'e');
  return String(Number(v.toPrecision(4)));
}

export interface LegendEntry {
  name: string;
  style: SeriesStyle;
  /** Extra text after the name, e.g. "12 it". */
  note?: string;
  /** Draw a marker instead of a line swatch. */
  marker?: string;
}

export const LEGEND_ROW = 18;

/** Width a legend needs. */
export function legendWidth(entries: LegendEntry[]): number {
  const longest = Math.max(0, ...entries.map((e) => textWidth(e.note ? `${e.name}  ${e.note}` : e.name)));
  return entries.length ? Math.ceil(longest + 40) : 0;
}

/** Vertical legend with one row per series; each row carries data-legend for tests. */
export function legend(entries: LegendEntry[], x: number, y: number): string {
  let s = `<g${attrs({ class: 'legend', transform: `translate(${num(x)},${num(y)})` })}>`;
  entries.forEach((e, i) => {
    const cy = i * LEGEND_ROW + 6;
    s += `<g${attrs({ 'data-legend': e.name })}>`;
    if (e.marker) {
      s += `<path${attrs({ d: e.marker, transform: `translate(12,${num(cy)})`, fill: e.style.color })}/>`;
    } else {
      s += `<line${attrs({ x1: 0, x2: 24, y1: cy, y2: cy, stroke: e.style.color, 'stroke-width': 2.5, 'stroke-dasharray': e.style.dash })}/>`;
    }
    s += text(30, cy + 4, e.name);
    if (e.note) s += `<text${attrs({ x: 30 + textWidth(e.name) + 8, y: cy + 4, fill: AXIS_COLOR })}>${esc(e.note)}</text>`;
    s += '</g>';
  });
  return `${s}</g>`;
}

/** A framed "nothing to show" picture, so every plot slot still renders. */
export function emptyPlot(width: number, height: number, title: string, plot: string, message: string): string {
  return svgOpen(width, height, title, plot, { 'data-empty': 'true' })
    + text(16, 24, title, { 'font-weight': 600, 'font-size': 13 })
    + `<rect${attrs({ x: 16, y: 40, width: width - 32, height: height - 56, fill: 'none', stroke: GRID_COLOR })}/>`
    + text(width / 2, height / 2 + 8, message, { 'text-anchor': 'middle', fill: AXIS_COLOR })
    + '</svg>';
}

/** Integer powers of ten covering [lo, hi] (both > 0), thinned to at most ~8 labels. */
export function decadeTicks(lo: number, hi: number): number[] {
  const a = Math.floor(Math.log10(lo) + 1e-9), b = Math.ceil(Math.log10(hi) - 1e-9);
  const step = Math.max(1, Math.ceil((b - a) / 8));
  const out: number[] = [];
  // Step down from the top until the data's lowest decade is covered (the axis ends on a tick).
  let k = b;
  out.push(k);
  while (k > a) { k -= step; out.push(k); }
  return out.reverse().map((v) => v + 0); // + 0 turns −0 into 0
}
