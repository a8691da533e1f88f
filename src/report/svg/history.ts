import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import {
  attrs, AXIS_COLOR, emptyPlot, GRID_COLOR, legend, legendWidth, LEGEND_ROW, markerPaint, markerPath, num, seriesStyle, svgOpen, text,
  textWidth, tickLabel, type LegendEntry,
} from './common.js';

export interface HistorySeries {
  name: string;
  colorIndex: number;
  /** One value per stored run (NaN where the recipe did not run). */
  iterations: number[];
  /** setup + solve seconds per stored run (NaN where absent). */
  seconds: number[];
  /** Whether each run converged (non-converged points are drawn hollow). */
  converged: boolean[];
}

export interface HistoryPlotInput {
  title: string;
  /** x-axis labels, one per stored run (short commit, or date). */
  runLabels: string[];
  series: HistorySeries[];
  idPrefix: string;
  /** Indices i where run i used a different suite than run i − 1: a vertical line between them. */
  suiteChanges?: number[];
  /** data-plot of the root element (default 'history'); 'sequence' draws the systems of a sequence instead of stored runs. */
  kind?: 'history' | 'sequence';
}

const W = 560, PH = 170, GAP = 56;
const M = { top: 36, right: 16, bottom: 52, left: 64 };

/**
 * Iterations (top panel) and setup + solve time (bottom panel) per recipe across stored runs:
 * one <path data-series data-panel> per recipe and panel, a point per run.
 */
export function historyPlot(input: HistoryPlotInput): string {
  const nRuns = input.runLabels.length;
  const entries: LegendEntry[] = input.series.map((s) => ({ name: s.name, style: seriesStyle(s.colorIndex) }));
  const lw = legendWidth(entries);
  const width = M.left + W + M.right + lw + 8;
  const height = Math.max(M.top + 2 * PH + GAP + M.bottom, M.top + entries.length * LEGEND_ROW + 16);
  const kind = input.kind ?? 'history';
  if (nRuns === 0 || input.series.length === 0) return emptyPlot(width, 200, input.title, kind, kind === 'history' ? 'no stored runs' : 'no runs');

  const x = scaleLinear().domain(nRuns === 1 ? [-1, 1] : [0, nRuns - 1]).range([M.left + 12, M.left + W - 12]);
  // as many labels as fit side by side (the widest label decides)
  const labelW = Math.max(20, ...input.runLabels.map((l) => textWidth(l, 10))) + 8;
  const step = Math.max(1, Math.ceil(nRuns / Math.max(1, Math.floor((W - 24) / labelW))));
  let s = svgOpen(width, height, input.title, kind, { 'data-series-count': input.series.length, 'data-runs': nRuns });
  s += text(M.left, 20, input.title, { 'font-weight': 600, 'font-size': 13 });
  if (nRuns === 1 && kind === 'history') {
    s += text(M.left + W, 31, 'one stored run: trends appear from the second', { 'text-anchor': 'end', fill: AXIS_COLOR, 'font-size': 10, 'data-note': 'one-run' });
  }
  const changes = (input.suiteChanges ?? []).filter((i) => i > 0 && i < nRuns);

  const panels: Array<{ key: 'iterations' | 'time'; label: string; top: number; values: (h: HistorySeries) => number[] }> = [
    { key: 'iterations', label: 'iterations', top: M.top, values: (h) => h.iterations },
    { key: 'time', label: 'setup + solve s', top: M.top + PH + GAP, values: (h) => h.seconds },
  ];
  for (const panel of panels) {
    let hi = 0;
    for (const h of input.series) for (const v of panel.values(h)) if (Number.isFinite(v)) hi = Math.max(hi, v);
    const y = scaleLinear().domain([0, hi > 0 ? hi : 1]).range([panel.top + PH, panel.top]).nice(5);
    s += `<g${attrs({ class: 'axes', 'data-panel-axes': panel.key })}>`;
    for (const t of y.ticks(5)) {
      const yy = y(t);
      s += `<line${attrs({ x1: M.left, x2: M.left + W, y1: yy, y2: yy, stroke: GRID_COLOR })}/>`;
      s += text(M.left - 6, yy + 4, tickLabel(t), { 'text-anchor': 'end' });
    }
    for (let i = 0; i < nRuns; i += step) {
      const xx = x(i);
      s += `<line${attrs({ x1: xx, x2: xx, y1: panel.top + PH, y2: panel.top + PH + 4, stroke: AXIS_COLOR })}/>`;
      s += text(xx, panel.top + PH + 16, input.runLabels[i], { 'text-anchor': 'middle', 'font-size': 10 });
    }
    s += `<rect${attrs({ x: M.left, y: panel.top, width: W, height: PH, fill: 'none', stroke: AXIS_COLOR })}/>`;
    s += text(14, panel.top + PH / 2, panel.label, { 'text-anchor': 'middle', transform: `rotate(-90 14 ${num(panel.top + PH / 2)})` });
    s += '</g>';
    for (const i of changes) {
      const xx = (x(i - 1) + x(i)) / 2;
      s += `<g${attrs({ 'data-suite-change': i })}><line${attrs({ x1: xx, x2: xx, y1: panel.top, y2: panel.top + PH, stroke: '#a3202f', 'stroke-width': 1.2, 'stroke-dasharray': '5 3' })}/>`
        + (panel.key === 'iterations' ? text(xx + 3, panel.top + 11, 'suite changed', { fill: '#a3202f', 'font-size': 10 }) : '')
        + '</g>';
    }
    const path = line<[number, number]>().defined((p) => Number.isFinite(p[1])).x((p) => x(p[0])).y((p) => y(p[1])).digits(2);
    for (const h of input.series) {
      const st = seriesStyle(h.colorIndex);
      const vals = panel.values(h);
      // a line needs two runs; with one, the markers alone show the values
      const d = nRuns > 1 ? (path(vals.map((v, i) => [i, v] as [number, number])) ?? '') : '';
      if (d) s += `<path${attrs({ 'data-series': h.name, 'data-panel': panel.key, d, fill: 'none', stroke: st.color, 'stroke-width': 2, 'stroke-dasharray': st.dash })}/>`;
      s += `<g${attrs({ 'data-markers': h.name, 'data-panel': panel.key, ...(d ? {} : { 'data-series': h.name }) })}>`;
      vals.forEach((v, i) => {
        if (!Number.isFinite(v)) return;
        // filled marker = converged; hollow = did not converge
        const paint = h.converged[i] ? { ...markerPaint({ ...st, hollow: false }) } : { fill: '#fff', stroke: st.color, 'stroke-width': 1.5 };
        s += `<path${attrs({ d: markerPath(st, 48), transform: `translate(${num(x(i))},${num(y(v))})`, ...paint })}/>`;
      });
      s += '</g>';
    }
  }
  const xLabel = kind === 'history' ? 'stored run (oldest left; hollow marker = did not converge)' : 'system of the sequence, in order (hollow marker = did not converge)';
  s += text(M.left + W / 2, height - 12, xLabel, { 'text-anchor': 'middle', fill: AXIS_COLOR });
  s += legend(entries, M.left + W + M.right + 8, M.top);
  return `${s}</svg>`;
}
