import { scaleLinear, scaleLog } from 'd3-scale';
import { line } from 'd3-shape';
import type { ScaleReport } from '../../run/scale.js';
import { attrs, AXIS_COLOR, emptyPlot, GRID_COLOR, legend, legendWidth, num, seriesStyle, svgOpen, text, tickLabel, type LegendEntry } from './common.js';

export interface ScalePlotInput {
  title: string;
  /** The recipe's name (the series). */
  recipe: string;
  parts: number[];
  iterations: number[];
  /** Modelled seconds per iteration (total) and its compute share. */
  perIteration: number[];
  compute: number[];
  converged: boolean[];
  idPrefix: string;
}

const W = 480, PH = 160, GAP = 56;
const M = { top: 36, right: 16, bottom: 48, left: 64 };

interface Axis { ticks: number[]; at: (v: number) => number }

/** Linear axis from 0 to the largest value, 5 nice ticks. */
function linearAxis(vals: number[], top: number): Axis {
  let hi = 0;
  for (const v of vals) if (Number.isFinite(v)) hi = Math.max(hi, v);
  const y = scaleLinear().domain([0, hi > 0 ? hi : 1]).range([top + PH, top]).nice(5);
  return { ticks: y.ticks(5), at: (v) => y(v) };
}

/**
 * Log axis over the positive values: ends on 1-2-5 steps just outside the data; ticks at 1, 2, 5
 * per decade when the data span at most two decades, else at the decades.
 */
function logAxis(vals: number[], top: number): Axis {
  let lo = Infinity, hi = 0;
  for (const v of vals) if (Number.isFinite(v) && v > 0) { lo = Math.min(lo, v); hi = Math.max(hi, v); }
  if (!(hi > 0)) { lo = 1; hi = 10; }
  const steps = (k: number): number[] => [1, 2, 5].map((m) => m * 10 ** k);
  const all: number[] = [];
  for (let k = Math.floor(Math.log10(lo)) - 1; k <= Math.ceil(Math.log10(hi)); k++) all.push(...steps(k));
  const below = all.filter((t) => t <= lo * (1 + 1e-9));
  const above = all.filter((t) => t >= hi * (1 - 1e-9));
  const d0 = below[below.length - 1], d1 = above[0] > d0 ? above[0] : d0 * 2;
  const y = scaleLog().domain([d0, d1]).range([top + PH, top]);
  const fine = Math.log10(d1 / d0) <= 2;
  const ticks = all.filter((t) => t >= d0 * (1 - 1e-9) && t <= d1 * (1 + 1e-9) && (fine || Math.abs(Math.log10(t) - Math.round(Math.log10(t))) < 1e-9))
    .map((t) => Number(t.toPrecision(6)));
  return { ticks, at: (v) => y(v) };
}

/**
 * Iterations (top, linear from 0) and modelled µs per iteration (bottom, log scale: total, and
 * the compute share dashed) against the number of parts P on a log₂ axis. Hollow points: that P did not converge.
 */
export function scalePlot(input: ScalePlotInput): string {
  const n = input.parts.length;
  const entries: LegendEntry[] = [
    { name: input.recipe, style: seriesStyle(0) },
    { name: 'compute share', style: { ...seriesStyle(0), dash: '5 3' }, noMarker: true },
  ];
  const lw = legendWidth(entries);
  const width = M.left + W + M.right + lw + 8;
  const height = M.top + 2 * PH + GAP + M.bottom;
  if (n === 0) return emptyPlot(width, 200, input.title, 'scale', 'no part counts');
  const lx = input.parts.map((p) => Math.log2(p));
  const x = scaleLinear().domain(n === 1 ? [-1, 1] : [lx[0], lx[n - 1]]).range([M.left + 12, M.left + W - 12]);
  let s = svgOpen(width, height, input.title, 'scale', { 'data-series-count': 1, id: `${input.idPrefix}scale` });
  s += text(M.left, 20, input.title, { 'font-weight': 600, 'font-size': 13 });
  const panels = [
    { key: 'iterations', label: 'iterations', top: M.top, series: [{ vals: input.iterations, dash: undefined as string | undefined, name: input.recipe }] },
    {
      key: 'time', label: 'modelled µs / iteration (log)', top: M.top + PH + GAP, series: [
        { vals: input.perIteration.map((v) => v * 1e6), dash: undefined as string | undefined, name: input.recipe },
        { vals: input.compute.map((v) => v * 1e6), dash: '5 3', name: 'compute share' },
      ],
    },
  ];
  const st = seriesStyle(0);
  for (const panel of panels) {
    const y = panel.key === 'time' ? logAxis(panel.series.flatMap((ser) => ser.vals), panel.top) : linearAxis(panel.series.flatMap((ser) => ser.vals), panel.top);
    s += `<g${attrs({ class: 'axes', 'data-panel-axes': panel.key })}>`;
    for (const t of y.ticks) {
      const yy = y.at(t);
      s += `<line${attrs({ x1: M.left, x2: M.left + W, y1: yy, y2: yy, stroke: GRID_COLOR })}/>`;
      s += text(M.left - 6, yy + 4, tickLabel(t), { 'text-anchor': 'end', 'data-y-tick': t });
    }
    input.parts.forEach((p, i) => {
      const xx = x(lx[i]);
      s += `<line${attrs({ x1: xx, x2: xx, y1: panel.top + PH, y2: panel.top + PH + 4, stroke: AXIS_COLOR })}/>`;
      s += text(xx, panel.top + PH + 16, String(p), { 'text-anchor': 'middle', 'font-size': 10, 'data-x-tick': p });
    });
    s += `<rect${attrs({ x: M.left, y: panel.top, width: W, height: PH, fill: 'none', stroke: AXIS_COLOR })}/>`;
    s += text(14, panel.top + PH / 2, panel.label, { 'text-anchor': 'middle', transform: `rotate(-90 14 ${num(panel.top + PH / 2)})` });
    s += '</g>';
    const drawn = (v: number): boolean => Number.isFinite(v) && (panel.key !== 'time' || v > 0);
    const path = line<[number, number]>().defined((q) => drawn(q[1])).x((q) => x(q[0])).y((q) => y.at(q[1])).digits(2);
    for (const ser of panel.series) {
      const d = path(ser.vals.map((v, i) => [lx[i], v] as [number, number])) ?? '';
      s += `<path${attrs({ 'data-series': ser.name, 'data-panel': panel.key, d, fill: 'none', stroke: st.color, 'stroke-width': ser.dash ? 1.5 : 2, 'stroke-dasharray': ser.dash })}/>`;
      if (ser.dash) continue;
      s += `<g${attrs({ 'data-markers': ser.name, stroke: st.color, 'stroke-width': 1.5 })}>`;
      ser.vals.forEach((v, i) => {
        if (!drawn(v)) return;
        s += `<circle${attrs({ cx: x(lx[i]), cy: y.at(v), r: 3.5, fill: input.converged[i] ? st.color : '#fff' })}/>`;
      });
      s += '</g>';
    }
  }
  s += text(M.left + W / 2, height - 12, 'parts P (log₂ axis; hollow point = did not converge)', { 'text-anchor': 'middle', fill: AXIS_COLOR });
  s += legend(entries, M.left + W + M.right + 8, M.top);
  return `${s}</svg>`;
}

/** The plot of a forecast (`slabbench scale`): iterations and modelled time per iteration against P. */
export function scaleForecastPlot(r: ScaleReport, idPrefix: string): string {
  return scalePlot({
    title: `${r.recipe}${r.matrix !== undefined ? ` on ${r.matrix}` : ''}: iterations and modelled time against P`, recipe: r.recipe,
    parts: r.rows.map((x) => x.parts), iterations: r.rows.map((x) => x.iterations),
    perIteration: r.rows.map((x) => x.modelled.perIteration), compute: r.rows.map((x) => x.modelled.compute),
    converged: r.rows.map((x) => x.converged), idPrefix,
  });
}
