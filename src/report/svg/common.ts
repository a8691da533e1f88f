import { symbol, symbolsFill } from 'd3-shape';

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
 * vision deficiencies). Colour alone is not enough when lines overlap or the page is printed in
 * grey, so each series also gets a dash pattern and a marker shape from its index; the three
 * cycles have coprime lengths (10, 4, 7), so two series of one report differ in at least two of
 * the three up to 28 series.
 */
export const PALETTE = ['#1f6fb4', '#d9731a', '#2a9d5b', '#c23b4a', '#7b5ea7', '#8c6d31', '#d16aa8', '#4d4d4d', '#17a2b8', '#a39200'];
/** Solid, long dash, dash-dot, short dash. Dotted ('1.5 3') is kept for left-preconditioned residuals. */
const DASHES = [undefined, '9 3', '10 3 2 3', '4 3'];
/** Dash pattern of a series whose residual is the left-preconditioned one (‖M⁻¹r‖). */
export const WATCHED_LEFT_DASH = '1.5 3.5';
export const MARKER_AREA = 40;

export interface SeriesStyle {
  color: string;
  dash?: string;
  /** Index into d3's symbolsFill for markers. */
  symbol: number;
  /** Markers drawn hollow (second round of the seven shapes). */
  hollow: boolean;
}

export function seriesStyle(index: number): SeriesStyle {
  return {
    color: PALETTE[index % PALETTE.length],
    dash: DASHES[index % DASHES.length],
    symbol: index % 7,
    hollow: Math.floor(index / 7) % 2 === 1,
  };
}

/** The marker shape of a style as an SVG path centred on (0, 0). */
export function markerPath(style: SeriesStyle, area = MARKER_AREA): string {
  return symbol(symbolsFill[style.symbol], area)() ?? '';
}

/** Fill and stroke attributes of a marker in a style (hollow markers: white fill, coloured outline). */
export function markerPaint(style: SeriesStyle): Record<string, string | number> {
  return style.hollow
    ? { fill: '#fff', stroke: style.color, 'stroke-width': 1.4 }
    : { fill: style.color, stroke: '#fff', 'stroke-width': 0.8 };
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

/**
 * Text width estimate for layout (no font metrics on the server side). Per character class, from
 * the advance widths of DejaVu Sans (the sans-serif font a Debian browser falls back to, and among
 * the widest common UI fonts), so labels and legends are not cut off in other fonts either.
 */
export function textWidth(s: string, fontSize = 12): number {
  let em = 0;
  for (const ch of s) {
    if (ch >= '0' && ch <= '9') em += 0.64;
    else if (ch === 'm' || ch === 'w') em += 0.95;
    else if ('ijl'.includes(ch)) em += 0.28;
    else if ('rtf'.includes(ch)) em += 0.42;
    else if (' .,:;\'!|'.includes(ch)) em += 0.32;
    else if ('()[]-'.includes(ch)) em += 0.39;
    else if ('+=<>×'.includes(ch)) em += 0.84;
    else if (ch >= 'a' && ch <= 'z') em += 0.62;
    else if (ch >= 'A' && ch <= 'Z') em += ch === 'M' || ch === 'W' ? 1 : 0.74;
    else em += 0.75;
  }
  return em * fontSize;
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
  /** Draw only a marker (scatter plots) instead of a line swatch with its marker. */
  markerOnly?: boolean;
  /** Line swatch without a marker. */
  noMarker?: boolean;
  /** Dash pattern of the swatch when it differs from the style's (left-preconditioned series). */
  dash?: string;
}

export const LEGEND_ROW = 18;
const SWATCH = 30;

/** Width a legend needs (names and notes measured on the wide side, plus padding). */
export function legendWidth(entries: LegendEntry[]): number {
  const longest = Math.max(0, ...entries.map((e) => textWidth(e.name) + (e.note ? 8 + textWidth(e.note) : 0)));
  return entries.length ? Math.ceil(longest + SWATCH + 6 + 16) : 0;
}

/** Vertical legend with one row per series; each row carries data-legend for tests. */
export function legend(entries: LegendEntry[], x: number, y: number): string {
  let s = `<g${attrs({ class: 'legend', transform: `translate(${num(x)},${num(y)})` })}>`;
  entries.forEach((e, i) => {
    const cy = i * LEGEND_ROW + 6;
    s += `<g${attrs({ 'data-legend': e.name })}>`;
    if (!e.markerOnly) {
      s += `<line${attrs({ x1: 0, x2: SWATCH, y1: cy, y2: cy, stroke: e.style.color, 'stroke-width': 2.2, 'stroke-dasharray': e.dash ?? e.style.dash })}/>`;
    }
    if (!e.noMarker) s += `<path${attrs({ d: markerPath(e.style), transform: `translate(${SWATCH / 2},${num(cy)})`, ...markerPaint(e.style) })}/>`;
    s += text(SWATCH + 6, cy + 4, e.name);
    if (e.note) s += `<text${attrs({ x: SWATCH + 6 + textWidth(e.name) + 8, y: cy + 4, fill: AXIS_COLOR })}>${esc(e.note)}</text>`;
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
