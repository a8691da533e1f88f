import { scaleLinear, scaleLog } from 'd3-scale';
import { line } from 'd3-shape';
import {
  attrs, AXIS_COLOR, decadeTicks, emptyPlot, esc, GRID_COLOR, legend, legendWidth, LEGEND_ROW, markerPaint, markerPath, num,
  powerOfTenLabel, seriesStyle, svgOpen, text, tickLabel, WATCHED_LEFT_DASH, type LegendEntry,
} from './common.js';

/** What the residual plot's x axis counts. */
export type ResidualAxis = 'iterations' | 'matvecs' | 'seconds';
export const RESIDUAL_AXES: readonly ResidualAxis[] = ['iterations', 'matvecs', 'seconds'];

export interface ResidualSeries {
  name: string;
  /** Relative residuals, entry 0 = iteration 0. Values ≤ 0 or NaN break the line. */
  history: number[];
  /**
   * x position of each history entry in the axis' unit (same length as history). Absent: the
   * entry index (iterations).
   */
  x?: number[];
  /** Palette index (fixed per recipe across all plots of a report). */
  colorIndex: number;
  /** Shown in the legend, e.g. "120 it, iteration-budget". */
  note?: string;
  /** The relative tolerance this recipe stops at (drawn as a mark in its colour on the right edge). */
  rtol?: number;
  /** The history is the left-preconditioned residual ‖M⁻¹r‖ (dotted line, legend says so). */
  leftPreconditioned?: boolean;
}

export interface ResidualPlotInput {
  title: string;
  series: ResidualSeries[];
  /** x axis (default iterations); the series' x arrays must be in its unit. */
  axis?: ResidualAxis;
  /** Prefix for element ids (clip path) so several plots can share one HTML page. */
  idPrefix: string;
}

const W = 560, H = 320;
const M = { top: 36, right: 16, bottom: 44, left: 60 };
/** A history that grows above this multiple of its largest starting value is cut there (clip marker). */
export const CLIP_FACTOR = 1e3;
const MARKERS_PER_SERIES = 8;

const AXIS_LABEL: Record<ResidualAxis, string> = {
  iterations: 'iteration',
  matvecs: 'operator applications (matvecs)',
  seconds: 'seconds (setup, then solve time spread over its iterations)',
};

const good = (v: number): boolean => Number.isFinite(v) && v > 0;

/**
 * Residual histories of all recipes on one log-scale plot: one <path data-series> per recipe, a
 * group of markers per recipe (data-markers, offset per series so overlapping lines still show
 * every shape), a tolerance mark per recipe (data-tolerance), a clip marker (data-clipped) where
 * a growing history leaves the plot. The y range ends at CLIP_FACTOR × the largest starting value.
 */
export function residualPlot(input: ResidualPlotInput): string {
  const axis = input.axis ?? 'iterations';
  const usable = input.series.filter((s) => s.history.some(good));
  const entries: LegendEntry[] = input.series.map((s) => ({
    name: s.name,
    style: seriesStyle(s.colorIndex),
    note: [s.note, s.leftPreconditioned ? 'left-preconditioned ‖M⁻¹r‖' : ''].filter(Boolean).join(', ') || undefined,
    dash: s.leftPreconditioned ? WATCHED_LEFT_DASH : undefined,
  }));
  const lw = legendWidth(entries);
  // tolerance marks sit just outside the right edge, side by side when recipes share a level
  const perLevel = new Map<number, number>();
  for (const q of input.series) if (q.rtol !== undefined && q.rtol > 0) perLevel.set(q.rtol, (perLevel.get(q.rtol) ?? 0) + 1);
  const marksWidth = perLevel.size > 0 ? 8 + 11 * Math.max(...perLevel.values()) : 0;
  const right = M.right + marksWidth;
  const width = M.left + W + right + lw;
  const height = Math.max(M.top + H + M.bottom, M.top + entries.length * LEGEND_ROW + 16);
  if (usable.length === 0) return emptyPlot(width, height, input.title, 'residuals', 'no residual histories recorded');

  const xsOf = (ser: ResidualSeries): number[] => ser.x ?? ser.history.map((_v, i) => i);
  let start = 0;
  for (const ser of usable) { const first = ser.history.find(good); if (first !== undefined) start = Math.max(start, first); }
  const cap = start * CLIP_FACTOR;
  // where each history leaves the plot upwards (above the cap, or +∞): it is drawn up to there only
  const cutAt = (ser: ResidualSeries): number => {
    const i = ser.history.findIndex((v) => v > cap || v === Infinity);
    return i < 0 ? ser.history.length : i;
  };
  let lo = Infinity, hi = -Infinity, xMax = 0;
  for (const ser of usable) {
    const xs = xsOf(ser);
    const end = cutAt(ser);
    ser.history.forEach((v, i) => {
      if (i <= end && i < xs.length && Number.isFinite(xs[i])) xMax = Math.max(xMax, xs[i]);
      if (good(v)) { lo = Math.min(lo, v); hi = Math.max(hi, Math.min(v, cap)); }
    });
    if (ser.rtol !== undefined && ser.rtol > 0) { lo = Math.min(lo, ser.rtol); hi = Math.max(hi, ser.rtol); }
  }
  const ticks = decadeTicks(lo, hi === lo ? lo * 10 : hi);
  const y = scaleLog().domain([10 ** ticks[0], 10 ** ticks[ticks.length - 1]]).range([M.top + H, M.top]);
  const x = scaleLinear().domain([0, xMax > 0 ? xMax : 1]).range([M.left, M.left + W]).nice();
  const yTop = y.domain()[1];
  const clipped = new Map<string, { x: number; v: number }>();

  let s = svgOpen(width, height, input.title, 'residuals', { 'data-series-count': input.series.length, 'data-axis': axis });
  s += text(M.left, 20, input.title, { 'font-weight': 600, 'font-size': 13 });
  const clip = `${input.idPrefix}-clip`;
  s += `<defs><clipPath id="${esc(clip)}"><rect${attrs({ x: M.left - 6, y: M.top - 6, width: W + 12, height: H + 12 })}/></clipPath></defs>`;
  // grid and axes
  s += '<g class="axes">';
  for (const k of ticks) {
    const yy = y(10 ** k);
    s += `<line${attrs({ x1: M.left, x2: M.left + W, y1: yy, y2: yy, stroke: GRID_COLOR })}/>`;
    s += powerOfTenLabel(M.left - 6, yy + 4, k);
  }
  for (const t of x.ticks(8)) {
    const xx = x(t);
    s += `<line${attrs({ x1: xx, x2: xx, y1: M.top, y2: M.top + H, stroke: GRID_COLOR })}/>`;
    s += text(xx, M.top + H + 16, tickLabel(t), { 'text-anchor': 'middle' });
  }
  s += `<rect${attrs({ x: M.left, y: M.top, width: W, height: H, fill: 'none', stroke: AXIS_COLOR })}/>`;
  s += text(M.left + W / 2, M.top + H + 36, AXIS_LABEL[axis], { 'text-anchor': 'middle' });
  s += text(14, M.top + H / 2, 'relative residual', { 'text-anchor': 'middle', transform: `rotate(-90 14 ${num(M.top + H / 2)})` });
  s += '</g>';

  // Tolerances: a faint level line per distinct rtol, and a mark per recipe on the right edge in its
  // colour and shape (several recipes at one level sit side by side).
  const rtols = [...new Set(input.series.map((q) => q.rtol).filter((v): v is number => v !== undefined && v > 0))].sort((a, b) => b - a);
  for (const r of rtols) {
    const yy = y(r);
    s += `<line${attrs({ 'data-level': 'rtol', x1: M.left, x2: M.left + W, y1: yy, y2: yy, stroke: AXIS_COLOR, 'stroke-dasharray': '4 4', 'stroke-width': 0.8 })}/>`;
    // right-aligned above the level, on a white halo so crossing lines do not hide it
    s += text(M.left + W - 4, yy - 4, `rtol ${r.toExponential(0).replace('e+', 'e')}`, {
      fill: AXIS_COLOR, 'font-size': 11, 'text-anchor': 'end', stroke: '#fff', 'stroke-width': 3, 'paint-order': 'stroke', 'stroke-linejoin': 'round',
    });
  }
  const atLevel = new Map<number, number>();
  for (const ser of input.series) {
    if (ser.rtol === undefined || !(ser.rtol > 0)) continue;
    const k = atLevel.get(ser.rtol) ?? 0;
    atLevel.set(ser.rtol, k + 1);
    const st = seriesStyle(ser.colorIndex);
    const xx = M.left + W + 9 + 11 * k, yy = y(ser.rtol);
    s += `<g${attrs({ 'data-tolerance': ser.name, 'data-rtol': ser.rtol })}>`
      + `<line${attrs({ x1: xx - 5, x2: xx + 5, y1: yy, y2: yy, stroke: st.color, 'stroke-width': 3 })}/>`
      + `<path${attrs({ d: markerPath(st, 30), transform: `translate(${num(xx)},${num(yy - 7)})`, ...markerPaint(st) })}/></g>`;
  }

  const path = line<[number, number]>()
    .defined((p) => good(p[1]) && Number.isFinite(p[0]))
    .x((p) => x(p[0]))
    .y((p) => y(p[1]))
    .digits(2);
  s += `<g clip-path="url(#${esc(clip)})">`;
  // Earlier series are drawn wider underneath, so identical histories still show both colours.
  const nSeries = input.series.length;
  input.series.forEach((ser, si) => {
    const st = seriesStyle(ser.colorIndex);
    const strokeWidth = nSeries > 1 ? 1.5 + (2.5 * (nSeries - 1 - si)) / (nSeries - 1) : 2;
    const xs = xsOf(ser);
    // cut the history where it first leaves the plot upwards (above the cap or non-finite)
    const pts: Array<[number, number]> = [];
    for (let i = 0; i < ser.history.length; i++) {
      const v = ser.history[i];
      if (v > cap || v === Infinity) {
        const prev = pts.length ? pts[pts.length - 1] : undefined;
        // the label gives the largest value the run reached (+∞ when it overflowed)
        let peak = 0;
        for (const w of ser.history) if (w > peak || w === Infinity) peak = w;
        clipped.set(ser.name, { x: xs[i], v: peak });
        if (prev) pts.push([xs[i], yTop]);
        break;
      }
      pts.push([xs[i], v]);
    }
    const first = pts.find((p) => good(p[1]));
    const d = pts.length === 1 || !first ? '' : (path(pts) ?? '');
    s += `<path${attrs({
      'data-series': ser.name, 'data-watched': ser.leftPreconditioned ? 'left-preconditioned' : 'plain',
      d: d || (first ? `M${num(x(first[0]))},${num(y(Math.max(first[1], y.domain()[0])))}h0.01` : ''),
      fill: 'none', stroke: st.color, 'stroke-width': strokeWidth, 'stroke-dasharray': ser.leftPreconditioned ? WATCHED_LEFT_DASH : st.dash,
      'stroke-linejoin': 'round', 'stroke-linecap': ser.leftPreconditioned ? 'round' : 'butt',
    })}/>`;
    // markers: a few per series, shifted by the series' position so overlapping lines show all shapes
    const drawn = pts.filter((p) => good(p[1]));
    let markers = '';
    let count = 0;
    if (drawn.length > 0) {
      const slots = Math.min(MARKERS_PER_SERIES, drawn.length);
      const used = new Set<number>();
      for (let k = 0; k < slots; k++) {
        const frac = (k + (si + 0.5) / Math.max(1, nSeries)) / slots;
        const idx = Math.min(drawn.length - 1, Math.floor(frac * (drawn.length - 1) + 0.5));
        if (used.has(idx)) continue;
        used.add(idx);
        const [px, pv] = drawn[idx];
        markers += `<path${attrs({ d: markerPath(st), transform: `translate(${num(x(px))},${num(y(pv))})` })}/>`;
        count++;
      }
    }
    s += `<g${attrs({ 'data-markers': ser.name, 'data-marker-count': count, ...markerPaint(st) })}>${markers}</g>`;
  });
  s += '</g>';
  // clip markers: an arrow pointing up at the top edge, with the value it ran off to
  for (const ser of input.series) {
    const c = clipped.get(ser.name);
    if (!c) continue;
    const st = seriesStyle(ser.colorIndex);
    const xx = Number.isFinite(c.x) ? x(c.x) : M.left + W;
    const label = Number.isFinite(c.v) ? `↑ up to ${c.v.toExponential(0).replace('e+', 'e')}` : '↑ up to ∞';
    s += `<g${attrs({ 'data-clipped': ser.name })}>`
      + `<path${attrs({ d: `M${num(xx)},${num(M.top - 1)}l-5,9h10z`, fill: st.color })}/>`
      // near the right edge the label goes left of the arrow, so it stays off the legend
      + (xx > M.left + W - 100
        ? text(xx - 7, M.top + 9, label, { fill: st.color, 'font-size': 10, 'text-anchor': 'end' })
        : text(xx + 7, M.top + 9, label, { fill: st.color, 'font-size': 10 }))
      + '</g>';
  }
  if (clipped.size > 0) {
    s += text(M.left + W, M.top - 8, `cut at ${CLIP_FACTOR.toExponential(0).replace('e+', 'e')} × the starting residual`, { 'text-anchor': 'end', fill: AXIS_COLOR, 'font-size': 10 });
  }
  s += legend(entries, M.left + W + right + 8, M.top);
  return `${s}</svg>`;
}
