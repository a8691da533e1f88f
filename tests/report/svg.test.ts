import { describe, it, expect } from 'vitest';
import { residualPlot } from '../../src/report/svg/residuals.js';
import { ritzPlot } from '../../src/report/svg/ritz.js';
import { patternPlot } from '../../src/report/svg/pattern.js';
import { historyPlot } from '../../src/report/svg/history.js';
import { decadeTicks, esc } from '../../src/report/svg/common.js';
import { blockPattern } from '../../src/report/pattern.js';
import { slabBsr } from './fixture.js';

const count = (s: string, re: RegExp): number => (s.match(re) ?? []).length;

/** Minimal well-formedness: every opened element is closed in order (no XML parser in Node). */
function balanced(svg: string): boolean {
  const stack: string[] = [];
  for (const m of svg.matchAll(/<(\/?)([a-zA-Z][\w:-]*)[^>]*?(\/?)>/g)) {
    const [, close, name, self] = m;
    if (self) continue;
    if (close) { if (stack.pop() !== name) return false; } else stack.push(name);
  }
  return stack.length === 0;
}

describe('residual plot', () => {
  const series = [
    { name: 'a', history: [1, 0.1, 0.01, 1e-9], colorIndex: 0, note: '3 it' },
    { name: 'b', history: [1, 0.5, NaN, 0.2, 0, 0.1], colorIndex: 1 },
    { name: 'c<&>"', history: [1], colorIndex: 2 },
  ];
  it('draws one path per recipe, escapes names and is deterministic', () => {
    const svg = residualPlot({ title: 'm: residuals', series, rtol: 1e-8, idPrefix: 'r-m' });
    expect(count(svg, /<path data-series=/g)).toBe(3);
    expect(svg).toContain('data-series="c&lt;&amp;&gt;&quot;"');
    expect(svg).not.toContain('c<&>');
    expect(svg).toContain('data-level="rtol"');
    expect(svg).toContain('id="r-m-clip"');
    expect(balanced(svg)).toBe(true);
    expect(residualPlot({ title: 'm: residuals', series, rtol: 1e-8, idPrefix: 'r-m' })).toBe(svg);
    // NaN and 0 break series b into separate pieces: two moveto commands
    const b = svg.match(/data-series="b" d="([^"]*)"/)![1];
    expect(count(b, /M/g)).toBe(3);
  });
  it('shows a framed note when nothing can be drawn', () => {
    const svg = residualPlot({ title: 't', series: [], idPrefix: 'x' });
    expect(svg).toContain('data-empty="true"');
    expect(count(svg, /data-series=/g)).toBe(0);
  });
});

describe('ritz plot', () => {
  it('has one group per recipe with Ritz values and one marker per value', () => {
    const svg = ritzPlot({
      title: 'ritz', idPrefix: 'z',
      series: [
        { name: 'g1', re: [1, 1.1, 0.9], im: [0, 0.2, -0.2], colorIndex: 0 },
        { name: 'g2', re: [0.5, 2], im: [0.1, -0.1], colorIndex: 1 },
        { name: 'none', re: [], im: [], colorIndex: 2 },
      ],
    });
    expect(count(svg, /<g data-series=/g)).toBe(2);
    const g1 = svg.match(/<g data-series="g1"[^>]*>(.*?)<\/g>/)![1];
    expect(count(g1, /<path /g)).toBe(3);
    expect(balanced(svg)).toBe(true);
  });
});

describe('pattern plot', () => {
  it('draws occupied cells and one boundary per interior slab offset', () => {
    const { bsr, slabOffsets } = slabBsr(5, 8, 2);
    const p = blockPattern(bsr, slabOffsets, 20);
    const svg = patternPlot({ title: 'pat', pattern: p, idPrefix: 'p' });
    expect(count(svg, /data-slab-boundary=/g)).toBe(4);
    expect(count(svg, /data-slab=/g)).toBe(5);
    const cells = svg.match(/<g data-series="blocks"[^>]*>(.*?)<\/g>/)![1];
    expect(count(cells, /<rect /g)).toBe(p.counts.filter((c) => c > 0).length);
    expect(svg).toContain(`${bsr.colInd.length} stored blocks`);
    expect(balanced(svg)).toBe(true);
  });
  it('renders a note without a pattern', () => {
    expect(patternPlot({ title: 'pat', pattern: undefined, idPrefix: 'p' })).toContain('data-empty="true"');
  });
});

describe('history plot', () => {
  it('has one path per recipe in each of the two panels and a point per stored run', () => {
    const svg = historyPlot({
      title: 'h', idPrefix: 'h', runLabels: ['abc1234', 'def5678', '2026-12-01'],
      series: [
        { name: 'r1', colorIndex: 0, iterations: [10, 12, 11], seconds: [0.1, 0.2, 0.15], converged: [true, true, false] },
        { name: 'r2', colorIndex: 1, iterations: [NaN, 40, 41], seconds: [NaN, 0.5, 0.52], converged: [false, true, true] },
      ],
    });
    expect(count(svg, /data-panel="iterations"/g)).toBe(2);
    expect(count(svg, /data-panel="time"/g)).toBe(2);
    expect(count(svg, /<circle /g)).toBe(2 * (3 + 2));
    expect(count(svg, /fill="#fff"/g)).toBeGreaterThanOrEqual(2); // hollow: non-converged r1 run 3 in both panels
    expect(svg).toContain('def5678');
    expect(balanced(svg)).toBe(true);
  });
});

describe('esc', () => {
  it('escapes the five XML specials', () => {
    expect(esc(`<a href="x">'&'</a>`)).toBe('&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;');
  });
});

describe('decadeTicks', () => {
  it('covers the data range with at most ~9 decade ticks, ending on ticks', () => {
    for (const [lo, hi] of [[1e-11, 1], [3e-9, 2.2e4], [0.5, 0.9], [1e-300, 1e10], [1e-10, 1e-10 * 1.0001]]) {
      const t = decadeTicks(lo, hi);
      expect(10 ** t[0], `${lo}`).toBeLessThanOrEqual(lo * (1 + 1e-12));
      expect(10 ** t[t.length - 1], `${hi}`).toBeGreaterThanOrEqual(hi * (1 - 1e-12));
      expect(t.length).toBeLessThanOrEqual(10);
      for (let i = 1; i < t.length; i++) expect(t[i]).toBeGreaterThan(t[i - 1]);
    }
    // thinned: 11 decades in steps of 2, extended below 1e-11
    expect(decadeTicks(1.7e-11, 1)).toEqual([-12, -10, -8, -6, -4, -2, 0]);
  });
});
