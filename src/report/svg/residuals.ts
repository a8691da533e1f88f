import { scaleLinear, scaleLog } from 'd3-scale';
import { line } from 'd3-shape';
import {
  attrs, AXIS_COLOR, decadeTicks, emptyPlot, esc, GRID_COLOR, legend, legendWidth, LEGEND_ROW, num,
  powerOfTenLabel, seriesStyle, svgOpen, text, tickLabel, type LegendEntry,
} from './common.js';

export interface ResidualSeries {
  name: string;
  /** Relative residuals, entry 0 = iteration 0. Values ≤ 0 or non-finite break the line. */
  history: number[];
  /** Palette index (fixed per recipe across all plots of a report). */
  colorIndex: number;
  /** Shown in the legend, e.g. "120 it, iteration-budget". */
  note?: string;
}

export interface ResidualPlotInput {
  title: string;
  series: ResidualSeries[];
  /** Draws a dashed level line when every recipe stopped at the same rtol. */
  rtol?: number;
  /** Prefix for element ids (clip path) so several plots can share one HTML page. */
  idPrefix: string;
}

const W = 560, H = 320;
const M = { top: 36, right: 16, bottom: 44, left: 60 };

/** Residual histories of all recipes on one log-scale plot: one <path data-series> per recipe. */
export function residualPlot(input: ResidualPlotInput): string {
  const usable = input.series.filter((s) => s.history.some((v) => Number.isFinite(v) && v > 0));
  const entries: LegendEntry[] = input.series.map((s) => ({ name: s.name, style: seriesStyle(s.colorIndex), note: s.note }));
  const lw = legendWidth(entries);
  const width = M.left + W + M.right + lw;
  const height = Math.max(M.top + H + M.bottom, M.top + entries.length * LEGEND_ROW + 16);
  if (usable.length === 0) return emptyPlot(width, height, input.title, 'residuals', 'no residual histories recorded');

  let lo = Infinity, hi = -Infinity, nMax = 1;
  for (const s of usable) {
    nMax = Math.max(nMax, s.history.length - 1);
    for (const v of s.history) if (Number.isFinite(v) && v > 0) { lo = Math.min(lo, v); hi = Math.max(hi, v); }
  }
  if (input.rtol !== undefined && input.rtol > 0) { lo = Math.min(lo, input.rtol); hi = Math.max(hi, input.rtol); }
  const ticks = decadeTicks(lo, hi === lo ? lo * 10 : hi);
  const y = scaleLog().domain([10 ** ticks[0], 10 ** ticks[ticks.length - 1]]).range([M.top + H, M.top]);
  const x = scaleLinear().domain([0, nMax]).range([M.left, M.left + W]).nice();

  let s = svgOpen(width, height, input.title, 'residuals', { 'data-series-count': input.series.length });
  s += text(M.left, 20, input.title, { 'font-weight': 600, 'font-size': 13 });
  const clip = `${input.idPrefix}-clip`;
  s += `<defs><clipPath id="${esc(clip)}"><rect${attrs({ x: M.left, y: M.top, width: W, height: H })}/></clipPath></defs>`;
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
  s += text(M.left + W / 2, M.top + H + 36, 'iteration', { 'text-anchor': 'middle' });
  s += text(14, M.top + H / 2, 'relative residual', { 'text-anchor': 'middle', transform: `rotate(-90 14 ${num(M.top + H / 2)})` });
  s += '</g>';
  if (input.rtol !== undefined && input.rtol > 0) {
    const yy = y(input.rtol);
    s += `<line${attrs({ 'data-level': 'rtol', x1: M.left, x2: M.left + W, y1: yy, y2: yy, stroke: AXIS_COLOR, 'stroke-dasharray': '4 4' })}/>`;
    s += text(M.left + W - 4, yy - 4, `rtol ${input.rtol.toExponential(0)}`, { 'text-anchor': 'end', fill: AXIS_COLOR, 'font-size': 11 });
  }
  const path = line<[number, number]>()
    .defined((p) => Number.isFinite(p[1]) && p[1] > 0)
    .x((p) => x(p[0]))
    .y((p) => y(p[1]))
    .digits(2);
  s += `<g clip-path="url(#${esc(clip)})">`;
  // Earlier series are drawn wider underneath, so identical histories still show both colours.
  const nSeries = input.series.length;
  input.series.forEach((ser, i) => {
    const st = seriesStyle(ser.colorIndex);
    const strokeWidth = nSeries > 1 ? 1.5 + (3.5 * (nSeries - 1 - i)) / (nSeries - 1) : 2;
    const pts = ser.history.map((v, i) => [i, v] as [number, number]);
    // One-point histories (zero iterations) still get a visible dot.
    const d = pts.length === 1 ? '' : (path(pts) ?? '');
    s += `<path${attrs({
      'data-series': ser.name, d: d || `M${num(x(0))},${num(y(Math.max(ser.history[0] > 0 ? ser.history[0] : 1, y.domain()[0])))}h0.01`,
      fill: 'none', stroke: st.color, 'stroke-width': strokeWidth, 'stroke-dasharray': st.dash, 'stroke-linejoin': 'round', 'stroke-linecap': 'round',
    })}/>`;
  });
  s += '</g>';
  s += legend(entries, M.left + W + M.right + 8, M.top);
  return `${s}</svg>`;
}
