// Opens the report in headless Chromium (Debian package, driven by playwright-core) and checks
// that every plot renders with the right number of series and that the page logs no errors.
import { describe, it, expect } from 'vitest';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';
import { writeReport } from '../../src/report/html.js';
import { makeHistory, makeResults } from './fixture.js';

const CHROMIUM = '/usr/bin/chromium';

/** The few DOM members used inside the page (the project compiles without the DOM library). */
interface PageElement {
  getAttribute(name: string): string | null;
  querySelector(sel: string): PageElement | null;
  querySelectorAll(sel: string): ArrayLike<PageElement>;
  getBoundingClientRect(): { width: number; height: number };
  getBBox(): { width: number; height: number };
  textContent: string | null;
}

interface PlotFacts {
  plot: string;
  file: string;
  width: number;
  height: number;
  series: number;
  visibleSeries: number;
  panels: Record<string, number>;
  slabBoundaries: number;
  markerGroups: number;
  tolerances: number;
  /** Text elements whose box pokes out of the plot's box by more than a pixel. */
  overflowing: string[];
}

const by0 = (facts: PlotFacts[], file: string): PlotFacts => facts.find((f) => f.file === file)!;

describe('HTML report in a browser', () => {
  it.runIf(existsSync(CHROMIUM))('renders every plot with its series and no console errors', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-browser-'));
    const browser = await chromium.launch({
      executablePath: CHROMIUM, headless: true,
      args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--no-first-run', '--disable-sync'],
    });
    try {
      const { htmlPath, svgPaths } = await writeReport(makeResults(), join(dir, 'out'), { history: makeHistory() });
      const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
      const errors: string[] = [];
      const requests: string[] = [];
      page.on('console', (m) => { if (m.type() === 'error' || m.type() === 'warning') errors.push(m.text()); });
      page.on('pageerror', (e) => errors.push(e.message));
      page.on('request', (r) => requests.push(r.url()));
      await page.goto(pathToFileURL(htmlPath).href, { waitUntil: 'load' });

      const facts: PlotFacts[] = await page.$$eval('figure', (figs) => (figs as unknown as PageElement[]).map((f) => {
        const svg = f.querySelector('svg[data-plot]')!;
        const box = svg.getBoundingClientRect();
        const series = Array.from(svg.querySelectorAll('[data-series]'));
        const panels: Record<string, number> = {};
        for (const el of series) {
          const p = el.getAttribute('data-panel');
          if (p) panels[p] = (panels[p] ?? 0) + 1;
        }
        return {
          plot: svg.getAttribute('data-plot') ?? '',
          file: f.getAttribute('data-file') ?? '',
          width: box.width,
          height: box.height,
          series: series.length,
          visibleSeries: series.filter((el) => { const b = el.getBBox(); return b.width > 0 || b.height > 0; }).length,
          panels,
          slabBoundaries: svg.querySelectorAll('[data-slab-boundary]').length,
          markerGroups: svg.querySelectorAll('[data-markers]').length,
          tolerances: svg.querySelectorAll('[data-tolerance]').length,
          overflowing: Array.from(svg.querySelectorAll('text')).filter((t) => {
            const r = (t as unknown as { getBoundingClientRect(): { left: number; right: number; top: number; bottom: number } }).getBoundingClientRect();
            const o = (svg as unknown as { getBoundingClientRect(): { left: number; right: number; top: number; bottom: number } }).getBoundingClientRect();
            return r.right > o.right + 1 || r.left < o.left - 1 || r.top < o.top - 1 || r.bottom > o.bottom + 1;
          }).map((t) => t.textContent ?? ''),
        };
      }));

      expect(facts.map((f) => f.plot)).toEqual([
        'residuals', 'residuals', 'ritz', 'pattern', 'residuals', 'residuals', 'ritz', 'pattern', 'history', 'history',
      ]);
      for (const f of facts) {
        expect(f.width, f.file).toBeGreaterThan(100);
        expect(f.height, f.file).toBeGreaterThan(100);
        expect(f.visibleSeries, f.file).toBe(f.series);
        // legends, labels and notes stay inside the picture (measured with the browser's own fonts)
        expect(f.overflowing, f.file).toEqual([]);
      }
      // residual plots: a marker group and a tolerance mark per recipe, on both axes
      for (const file of ['residuals-duct-pulse.svg', 'residuals-duct-pulse.matvecs.svg', 'residuals-tank-stir.svg']) {
        expect(by0(facts, file).markerGroups, file).toBe(3);
        expect(by0(facts, file).tolerances, file).toBe(3);
      }
      const by = (file: string): PlotFacts => facts.find((f) => f.file === file)!;
      // residuals: all three recipes; Ritz: only the two GMRES recipes report Ritz values
      expect(by('residuals-duct-pulse.svg').series).toBe(3);
      expect(by('residuals-tank-stir.svg').series).toBe(3);
      expect(by('ritz-duct-pulse.svg').series).toBe(2);
      expect(by('ritz-tank-stir.svg').series).toBe(2);
      // pattern: one block layer; 4 and 6 slabs → 3 and 5 interior boundaries
      expect(by('pattern-duct-pulse.svg').series).toBe(1);
      expect(by('pattern-duct-pulse.svg').slabBoundaries).toBe(3);
      expect(by('pattern-tank-stir.svg').slabBoundaries).toBe(5);
      // history: duct-pulse has three recipes across runs, tank-stir one; each in both panels
      expect(by('history-duct-pulse.svg').panels).toEqual({ iterations: 3, time: 3 });
      expect(by('history-tank-stir.svg').panels).toEqual({ iterations: 1, time: 1 });

      // The ranked tables render with the winner marked.
      expect(await page.locator('tr.winner').count()).toBe(2);
      expect(errors).toEqual([]);
      // Nothing but the page itself was loaded.
      expect(requests.filter((u) => !u.startsWith('file:') && !u.startsWith('data:'))).toEqual([]);

      // A standalone .svg file renders on its own too.
      await page.goto(pathToFileURL(svgPaths[0]).href);
      const box = await page.locator('svg').first().boundingBox();
      expect(box && box.width > 100 && box.height > 100).toBe(true);
      expect(errors).toEqual([]);
    } finally {
      await browser.close();
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
