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
    { name: 'a', history: [1, 0.1, 0.01, 1e-9], colorIndex: 0, note: '3 it', rtol: 1e-8 },
    { name: 'b', history: [1, 0.5, NaN, 0.2, 0, 0.1], colorIndex: 1 },
    { name: 'c<&>"', history: [1], colorIndex: 2 },
  ];
  it('draws one path per recipe, escapes names and is deterministic', () => {
    const svg = residualPlot({ title: 'm: residuals', series, idPrefix: 'r-m' });
    expect(count(svg, /<path data-series=/g)).toBe(3);
    expect(svg).toContain('data-series="c&lt;&amp;&gt;&quot;"');
    expect(svg).not.toContain('c<&>');
    expect(svg).toContain('data-level="rtol"');
    expect(svg).toContain('id="r-m-clip"');
    expect(balanced(svg)).toBe(true);
    expect(residualPlot({ title: 'm: residuals', series, idPrefix: 'r-m' })).toBe(svg);
    // NaN and 0 break series b into separate pieces: two moveto commands
    const b = svg.match(/data-series="b"[^>]* d="([^"]*)"/)![1];
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
    expect(count(svg, /<path data-series="[^"]*" data-panel="iterations"/g)).toBe(2);
    expect(count(svg, /<path data-series="[^"]*" data-panel="time"/g)).toBe(2);
    const markers = [...svg.matchAll(/<g data-markers="[^"]*"[^>]*>(.*?)<\/g>/g)].map((m) => count(m[1], /<path /g));
    expect(markers.reduce((a, b) => a + b, 0)).toBe(2 * (3 + 2));
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

describe('residual plot: telling series apart', () => {
  const attr = (svg: string, el: string, key: string, name: string): string | undefined =>
    new RegExp(`<${el}[^>]*data-(?:series|markers)="${name}"[^>]*?\\s${key}="([^"]*)"`).exec(svg)?.[1];

  it('overlapping histories differ in dash pattern and marker shape, not just colour; markers are offset per series', () => {
    const same = [1, 0.3, 0.1, 0.03, 0.01, 3e-3, 1e-3, 3e-4, 1e-4, 3e-5, 1e-5];
    const svg = residualPlot({ title: 't', idPrefix: 'o', series: [0, 1, 2, 3].map((i) => ({ name: `s${i}`, history: same, colorIndex: i })) });
    const dashes = [0, 1, 2, 3].map((i) => attr(svg, 'path', 'stroke-dasharray', `s${i}`) ?? 'solid');
    expect(new Set(dashes).size).toBe(4);
    const groups = [...svg.matchAll(/<g data-markers="(s\d)" data-marker-count="(\d+)"[^>]*>(.*?)<\/g>/g)];
    expect(groups).toHaveLength(4);
    const shapes = new Set<string>();
    const positions: string[][] = [];
    for (const g of groups) {
      expect(Number(g[2])).toBeGreaterThan(0);
      expect(count(g[3], /<path /g)).toBe(Number(g[2]));
      shapes.add(/ d="([^"]*)"/.exec(g[3])![1]);
      positions.push([...g[3].matchAll(/transform="([^"]*)"/g)].map((m) => m[1]));
    }
    expect(shapes.size).toBe(4);
    // at least one marker position differs between every pair of series
    for (let i = 0; i < 4; i++) for (let j = i + 1; j < 4; j++) expect(positions[i].join()).not.toBe(positions[j].join());
  });

  it('a tolerance mark per recipe at its own rtol, and a level line per distinct rtol', () => {
    const svg = residualPlot({
      title: 't', idPrefix: 'tol', series: [
        { name: 'a', history: [1, 1e-3, 1e-9], colorIndex: 0, rtol: 1e-8 },
        { name: 'b', history: [1, 1e-2, 1e-7], colorIndex: 1, rtol: 1e-6 },
        { name: 'c', history: [1, 1e-2, 1e-9], colorIndex: 2, rtol: 1e-8 },
      ],
    });
    expect(count(svg, /data-tolerance=/g)).toBe(3);
    expect(count(svg, /data-level="rtol"/g)).toBe(2);
    expect(svg).toMatch(/data-tolerance="b" data-rtol="0"/); // attribute values are rounded like coordinates …
    expect(svg).toContain('rtol 1e-6');
  });

  it('a left-preconditioned residual is dotted and says so in the legend', () => {
    const svg = residualPlot({
      title: 't', idPrefix: 'w', series: [
        { name: 'left', history: [1, 0.1, 1e-9], colorIndex: 0, leftPreconditioned: true },
        { name: 'right', history: [1, 0.1, 1e-9], colorIndex: 1 },
      ],
    });
    expect(count(svg, /data-watched="left-preconditioned"/g)).toBe(1);
    expect(count(svg, /data-watched="plain"/g)).toBe(1);
    expect(attr(svg, 'path', 'stroke-dasharray', 'left')).toBe('1.5 3.5');
    expect(svg).toMatch(/<g data-legend="left">.*left-preconditioned ‖M⁻¹r‖/);
    expect(svg).not.toMatch(/<g data-legend="right">[^]*?left-preconditioned[^]*?<\/g><g data-legend/);
  });

  it('a diverged history is cut at 1e3 × its start with a clip marker; the axis does not stretch to 1e12', () => {
    const svg = residualPlot({
      title: 't', idPrefix: 'd', series: [
        { name: 'ok', history: [1, 1e-2, 1e-6], colorIndex: 0 },
        { name: 'up', history: [1, 10, 1e4, 1e8, 1e12], colorIndex: 1 },
        { name: 'inf', history: [1, 2, Infinity], colorIndex: 2 },
      ],
    });
    expect(count(svg, /data-clipped=/g)).toBe(2);
    expect(svg).toContain('↑ up to 1e12'); // the largest value the run reached
    expect(svg).toContain('↑ up to ∞');
    // top decade tick is 10^3, nothing above
    const exps = [...svg.matchAll(/10<tspan[^>]*>([^<]*)<\/tspan>/g)].map((m) => Number(m[1].replace('\u2212', '-')));
    expect(Math.max(...exps)).toBe(3);
  });

  it('the x axis ends where the drawn parts end, not at the last iteration of a cut history', () => {
    const svg = residualPlot({
      title: 't', idPrefix: 'dx', series: [
        { name: 'ok', history: [1, 0.1, 0.01, 1e-3, 1e-4, 1e-5], colorIndex: 0 },
        { name: 'up', history: [1, 1e4, ...Array.from({ length: 38 }, (_v, i) => 1e5 * (i + 1))], colorIndex: 1 },
      ],
    });
    const ticks = [...svg.matchAll(/<text x="[\d.]+" y="[\d.]+" text-anchor="middle">(\d+)<\/text>/g)].map((m) => Number(m[1]));
    expect(Math.max(...ticks)).toBeLessThanOrEqual(6);
  });

  it('a legend is wide enough for five-digit notes (no clipping at the SVG edge)', () => {
    const note = '12345 it, max-iterations';
    const svg = residualPlot({ title: 't', idPrefix: 'l', series: [{ name: 'gmres+block-ilu0-downstream', history: [1, 0.5], colorIndex: 0, note }] });
    const width = Number(/<svg[^>]*\swidth="([\d.]+)"/.exec(svg)![1]);
    const legendX = Number(/class="legend" transform="translate\(([\d.]+)/.exec(svg)![1]);
    // 0.55 em per character at 12 px, about the average advance of DejaVu Sans (a wide UI font) over
    // such text; tests/report/html-browser.test.ts measures the real text boxes in Chromium
    const needed = 36 + ('gmres+block-ilu0-downstream'.length + 1 + note.length) * 12 * 0.55;
    expect(legendX + needed).toBeLessThanOrEqual(width);
  });

  it('draws against matvecs or seconds when x values are given, and labels the axis', () => {
    const svg = residualPlot({ title: 't', idPrefix: 'x', axis: 'matvecs', series: [{ name: 'b', history: [1, 0.1, 0.01], x: [0, 2, 4], colorIndex: 0 }] });
    expect(svg).toContain('data-axis="matvecs"');
    expect(svg).toContain('operator applications (matvecs)');
    expect(residualPlot({ title: 't', idPrefix: 'x', axis: 'seconds', series: [{ name: 'b', history: [1, 0.1], x: [0.2, 0.5], colorIndex: 0 }] })).toContain('seconds (setup');
  });
});

describe('history plot: labels, one run, suite changes', () => {
  it('one stored run is drawn as markers (no empty line) with a note', () => {
    const svg = historyPlot({
      title: 'h', idPrefix: 'h1', runLabels: ['abc1234'],
      series: [{ name: 'r1', colorIndex: 0, iterations: [10], seconds: [0.1], converged: [true] }],
    });
    expect(count(svg, /<path data-series=/g)).toBe(0);
    expect(count(svg, /<g data-markers="r1"[^>]*data-series="r1"/g)).toBe(2);
    expect(svg).toContain('data-note="one-run"');
  });

  it('a suite change between runs draws a vertical marker in both panels', () => {
    const svg = historyPlot({
      title: 'h', idPrefix: 'h2', runLabels: ['a', 'b', 'c'], suiteChanges: [2],
      series: [{ name: 'r1', colorIndex: 0, iterations: [10, 11, 30], seconds: [0.1, 0.1, 0.3], converged: [true, true, true] }],
    });
    expect(count(svg, /data-suite-change="2"/g)).toBe(2);
    expect(svg).toContain('suite changed');
    expect(balanced(svg)).toBe(true);
  });
});
