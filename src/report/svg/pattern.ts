import { scaleLinear } from 'd3-scale';
import type { BlockPattern } from '../../run/results-types.js';
import { attrs, AXIS_COLOR, emptyPlot, num, svgOpen, text, tickLabel } from './common.js';

export interface PatternPlotInput {
  title: string;
  pattern: BlockPattern | undefined;
  idPrefix: string;
}

const S = 330;
const M = { top: 36, right: 120, bottom: 24, left: 64 };
const INK = '#1d3f73';

/**
 * Block sparsity picture: one square per occupied cell of the coarse grid, darker where more
 * blocks fall (log shading), slab-diagonal squares tinted and slab boundaries drawn as lines.
 * Matrix orientation: block row 0 at the top, block column 0 at the left.
 */
export function patternPlot(input: PatternPlotInput): string {
  const p = input.pattern;
  const width = M.left + S + M.right, height = M.top + S + M.bottom + 20;
  if (!p || p.nBlockRows === 0) return emptyPlot(width, height, input.title, 'pattern', 'no block pattern recorded for this matrix');
  const n = p.nBlockRows;
  const pos = scaleLinear().domain([0, n]).range([0, S]);
  let max = 0, stored = 0;
  for (const c of p.counts) { if (c > max) max = c; stored += c; }

  let s = svgOpen(width, height, input.title, 'pattern', { 'data-slabs': p.slabOffsets.length - 1 });
  s += text(M.left, 20, input.title, { 'font-weight': 600, 'font-size': 13 });
  s += `<g transform="translate(${M.left},${M.top})">`;
  s += `<rect${attrs({ x: 0, y: 0, width: S, height: S, fill: '#fafafa' })}/>`;
  // Slab-diagonal squares: in a space-time matrix everything above them must be empty.
  for (let k = 0; k + 1 < p.slabOffsets.length; k++) {
    const a = pos(p.slabOffsets[k]), b = pos(p.slabOffsets[k + 1]);
    s += `<rect${attrs({ 'data-slab': k, x: a, y: a, width: b - a, height: b - a, fill: '#fff3d6' })}/>`;
  }
  s += `<g${attrs({ 'data-series': 'blocks', fill: INK })}>`;
  const logMax = Math.log1p(max);
  for (let i = 0; i < p.cells; i++) {
    for (let j = 0; j < p.cells; j++) {
      const c = p.counts[i * p.cells + j];
      if (!c) continue;
      const x0 = pos(j * p.blockRowsPerCell), x1 = pos(Math.min((j + 1) * p.blockRowsPerCell, n));
      const y0 = pos(i * p.blockRowsPerCell), y1 = pos(Math.min((i + 1) * p.blockRowsPerCell, n));
      const shade = logMax > 0 ? 0.25 + 0.75 * Math.log1p(c) / logMax : 1;
      s += `<rect${attrs({ x: x0, y: y0, width: Math.max(x1 - x0, 0.5), height: Math.max(y1 - y0, 0.5), 'fill-opacity': Math.round(shade * 100) / 100 })}/>`;
    }
  }
  s += '</g>';
  for (let k = 1; k + 1 < p.slabOffsets.length; k++) {
    const v = pos(p.slabOffsets[k]);
    s += `<path${attrs({ 'data-slab-boundary': k, d: `M${num(v)},0V${S}M0,${num(v)}H${S}`, stroke: '#c23b4a', 'stroke-width': 1, 'stroke-dasharray': '3 2' })}/>`;
  }
  s += `<rect${attrs({ x: 0, y: 0, width: S, height: S, fill: 'none', stroke: AXIS_COLOR })}/>`;
  for (const t of pos.ticks(5)) {
    s += text(pos(t), -4, tickLabel(t), { 'text-anchor': 'middle', 'font-size': 10 });
    s += text(-6, pos(t) + 4, tickLabel(t), { 'text-anchor': 'end', 'font-size': 10 });
  }
  s += text(-46, S / 2, 'block row', { 'text-anchor': 'middle', transform: `rotate(-90 -46 ${S / 2})` });
  s += '</g>';
  // Key on the right.
  const kx = M.left + S + 14;
  const nSlabs = p.slabOffsets.length - 1;
  s += text(kx, M.top + 10, `${stored} stored blocks`, { 'font-size': 11 });
  s += text(kx, M.top + 26, `${n} block rows`, { 'font-size': 11 });
  s += text(kx, M.top + 42, `${nSlabs} slab${nSlabs === 1 ? '' : 's'}`, { 'font-size': 11 });
  s += text(kx, M.top + 58, `cell = ${p.blockRowsPerCell} block row${p.blockRowsPerCell === 1 ? '' : 's'}`, { 'font-size': 11 });
  s += `<path${attrs({ d: `M${kx},${M.top + 76}h22`, stroke: '#c23b4a', 'stroke-dasharray': '3 2' })}/>`;
  s += text(kx + 28, M.top + 80, 'slab boundary', { 'font-size': 11 });
  s += `<rect${attrs({ x: kx, y: M.top + 90, width: 22, height: 10, fill: '#fff3d6', stroke: '#e0d2b0' })}/>`;
  s += text(kx + 28, M.top + 99, 'slab diagonal', { 'font-size': 11 });
  s += text(M.left + S / 2, M.top + S + 20, 'block column', { 'text-anchor': 'middle' });
  return `${s}</svg>`;
}
