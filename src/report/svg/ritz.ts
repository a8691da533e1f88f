import { scaleLinear } from 'd3-scale';
import { plural } from '../format.js';
import { symbol, symbolsFill } from 'd3-shape';
import {
  attrs, AXIS_COLOR, emptyPlot, esc, GRID_COLOR, legend, legendWidth, LEGEND_ROW, markerPaint, num, seriesStyle, svgOpen, text,
  tickLabel, type LegendEntry,
} from './common.js';

export interface RitzSeries {
  name: string;
  re: number[];
  im: number[];
  colorIndex: number;
}

export interface RitzPlotInput {
  title: string;
  series: RitzSeries[];
  idPrefix: string;
}

const S = 300; // square plot area: equal units on both axes
const M = { top: 36, right: 16, bottom: 44, left: 60 };
const MARKER_AREA = 40;

/**
 * Ritz values (estimates of the preconditioned spectrum) in the complex plane, one
 * <g data-series> per recipe that reported them. Both axes use the same scale so a circle stays
 * a circle; the origin and the point 1 are always in view (right preconditioning that works
 * gathers the values near 1, values near 0 slow GMRES down).
 */
export function ritzPlot(input: RitzPlotInput): string {
  const series = input.series.filter((s) => s.re.length > 0);
  const entries: LegendEntry[] = series.map((s) => ({
    name: s.name, style: seriesStyle(s.colorIndex), note: plural(s.re.length, 'value'),
    markerOnly: true,
  }));
  const lw = legendWidth(entries);
  const width = M.left + S + M.right + lw + 8;
  const height = Math.max(M.top + S + M.bottom, M.top + entries.length * LEGEND_ROW + 16);
  if (series.length === 0) return emptyPlot(M.left + S + M.right + 200, height, input.title, 'ritz', 'no Ritz values recorded (GMRES/FGMRES runs report them)');

  let xLo = 0, xHi = 1, yLo = 0, yHi = 0;
  for (const s of series) {
    for (let i = 0; i < s.re.length; i++) {
      const a = s.re[i], b = s.im[i] ?? 0;
      if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
      xLo = Math.min(xLo, a); xHi = Math.max(xHi, a);
      yLo = Math.min(yLo, b); yHi = Math.max(yHi, b);
    }
  }
  // Equal aspect: the larger span sets both; 8% padding.
  const span = Math.max(xHi - xLo, yHi - yLo, 1e-12) * 1.08;
  const cx = (xLo + xHi) / 2, cy = (yLo + yHi) / 2;
  const x = scaleLinear().domain([cx - span / 2, cx + span / 2]).range([M.left, M.left + S]);
  const y = scaleLinear().domain([cy - span / 2, cy + span / 2]).range([M.top + S, M.top]);

  let s = svgOpen(width, height, input.title, 'ritz', { 'data-series-count': series.length });
  s += text(M.left, 20, input.title, { 'font-weight': 600, 'font-size': 13 });
  const clip = `${input.idPrefix}-clip`;
  s += `<defs><clipPath id="${esc(clip)}"><rect${attrs({ x: M.left, y: M.top, width: S, height: S })}/></clipPath></defs>`;
  s += '<g class="axes">';
  for (const t of x.ticks(6)) {
    const xx = x(t);
    s += `<line${attrs({ x1: xx, x2: xx, y1: M.top, y2: M.top + S, stroke: GRID_COLOR })}/>`;
    s += text(xx, M.top + S + 16, tickLabel(t), { 'text-anchor': 'middle' });
  }
  for (const t of y.ticks(6)) {
    const yy = y(t);
    s += `<line${attrs({ x1: M.left, x2: M.left + S, y1: yy, y2: yy, stroke: GRID_COLOR })}/>`;
    s += text(M.left - 6, yy + 4, tickLabel(t), { 'text-anchor': 'end' });
  }
  // Real and imaginary axes through the origin, and a cross at 1.
  s += `<line${attrs({ x1: x(0), x2: x(0), y1: M.top, y2: M.top + S, stroke: AXIS_COLOR })}/>`;
  s += `<line${attrs({ x1: M.left, x2: M.left + S, y1: y(0), y2: y(0), stroke: AXIS_COLOR })}/>`;
  s += `<path${attrs({ d: `M${num(x(1) - 6)},${num(y(0))}h12M${num(x(1))},${num(y(0) - 6)}v12`, stroke: '#000', 'stroke-width': 1.5 })}/>`;
  s += text(x(1) + 5, y(0) + 15, '1', { 'font-size': 11 });
  s += `<rect${attrs({ x: M.left, y: M.top, width: S, height: S, fill: 'none', stroke: AXIS_COLOR })}/>`;
  s += text(M.left + S / 2, M.top + S + 36, 'real part', { 'text-anchor': 'middle' });
  s += text(14, M.top + S / 2, 'imaginary part', { 'text-anchor': 'middle', transform: `rotate(-90 14 ${num(M.top + S / 2)})` });
  s += '</g>';
  s += `<g clip-path="url(#${esc(clip)})">`;
  // earlier series are drawn larger underneath, so identical sets still show every shape
  series.forEach((ser, si) => {
    const st = seriesStyle(ser.colorIndex);
    const area = series.length > 1 ? MARKER_AREA * (1 + (1.6 * (series.length - 1 - si)) / (series.length - 1)) : MARKER_AREA;
    const d = symbol(symbolsFill[st.symbol], area)() ?? '';
    s += `<g${attrs({ 'data-series': ser.name, ...markerPaint(st), 'fill-opacity': st.hollow ? 1 : 0.8 })}>`;
    for (let i = 0; i < ser.re.length; i++) {
      const a = ser.re[i], b = ser.im[i] ?? 0;
      if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
      s += `<path${attrs({ d, transform: `translate(${num(x(a))},${num(y(b))})` })}/>`;
    }
    s += '</g>';
  });
  s += '</g>';
  s += legend(entries, M.left + S + M.right + 8, M.top);
  return `${s}</svg>`;
}
