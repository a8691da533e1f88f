// The report with a scaling forecast beside the results, opened in headless Chromium (Debian
// package, driven by playwright-core): the forecast figure renders both panels with every P, its
// axes and legend inside the picture, and the page logs no errors. A screenshot is kept when
// SLABBENCH_SCREENSHOT_DIR names a folder (for looking at the plot by eye).
import { describe, it, expect } from 'vitest';
import { copyFileSync, existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';
import { writeReport } from '../../src/report/html.js';
import { EXAMPLE_MACHINE, runScale } from '../../src/run/scale.js';
import { readScaleReport, scaleFilesIn } from '../../src/run/scale-file.js';
import { DEFAULT_RECIPE } from '../../src/solvers/recipe.js';
import { csrToBsr } from '../../src/sparse/bsr.js';
import { poisson2d, randomVector, systemOf } from '../precond/helpers.js';
import { makeResults } from './fixture.js';

const CHROMIUM = '/usr/bin/chromium';

interface Box { left: number; right: number; top: number; bottom: number; width: number; height: number }
/** The few DOM members used inside the page (the project compiles without the DOM library). */
interface PageElement {
  getAttribute(name: string): string | null;
  querySelectorAll(sel: string): ArrayLike<PageElement>;
  getBoundingClientRect(): Box;
  textContent: string | null;
}

describe('report with a scaling forecast, in a browser', () => {
  it.runIf(existsSync(CHROMIUM))('plots iterations and modelled time against P from *.scale.json beside the results', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-scale-browser-'));
    const browser = await chromium.launch({
      executablePath: CHROMIUM, headless: true,
      args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--no-first-run', '--disable-sync'],
    });
    try {
      // a real forecast: 2D Poisson (16×16), GMRES + block ILU(0) as block Jacobi over P = 1 … 16 parts
      const a = csrToBsr(poisson2d(16), 1);
      const forecast = runScale(systemOf(a), randomVector(256, 1), { ...DEFAULT_RECIPE, name: 'gmres-block-ilu0', preconditioner: 'block-ilu0', restart: 100 },
        { maxParts: 16, machine: EXAMPLE_MACHINE, matrix: 'poisson-16.mtx' });
      writeFileSync(join(dir, 'poisson.scale.json'), `${JSON.stringify(forecast)}\n`);
      const scale = scaleFilesIn(dir).map((f) => ({ file: 'poisson.scale.json', report: readScaleReport(f) }));
      expect(scale).toHaveLength(1);
      const { htmlPath } = await writeReport(makeResults(), join(dir, 'out'), { scale });

      const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
      const errors: string[] = [];
      page.on('console', (m) => { if (m.type() === 'error' || m.type() === 'warning') errors.push(m.text()); });
      page.on('pageerror', (e) => errors.push(e.message));
      await page.goto(pathToFileURL(htmlPath).href, { waitUntil: 'load' });
      const fig = page.locator('section#scale figure');
      expect(await fig.count()).toBe(1);
      expect(await fig.getAttribute('data-file')).toBe('scale-poisson.svg');
      const facts = await fig.locator('svg[data-plot="scale"]').evaluate((el) => {
        const svg = el as unknown as PageElement;
        const outer = svg.getBoundingClientRect();
        const texts = Array.from(svg.querySelectorAll('text'));
        const count = (sel: string): number => svg.querySelectorAll(sel).length;
        return {
          width: outer.width, height: outer.height,
          iterationSeries: count('path[data-panel="iterations"]'), timeSeries: count('path[data-panel="time"]'),
          visiblePaths: Array.from(svg.querySelectorAll('path[data-series]')).filter((p) => { const b = p.getBoundingClientRect(); return b.width > 0 || b.height > 0; }).length,
          markers: count('[data-markers] circle'),
          legend: Array.from(svg.querySelectorAll('[data-legend]'), (g) => g.getAttribute('data-legend')),
          xLabels: Array.from(svg.querySelectorAll('[data-panel-axes="time"] [data-x-tick]'), (t) => t.textContent),
          yTicksTime: count('[data-panel-axes="time"] [data-y-tick]'),
          overflowing: texts.filter((t) => { const r = t.getBoundingClientRect(); return r.right > outer.right + 1 || r.left < outer.left - 1 || r.top < outer.top - 1 || r.bottom > outer.bottom + 1; }).map((t) => t.textContent),
          axisTitles: texts.map((t) => t.textContent ?? '').filter((s) => /iterations|µs|parts P/.test(s)),
        };
      });
      expect(facts.width).toBeGreaterThan(300);
      expect(facts.height).toBeGreaterThan(300);
      expect(facts.iterationSeries).toBe(1);
      expect(facts.timeSeries).toBe(2); // total and its compute share
      expect(facts.visiblePaths).toBe(3);
      expect(facts.markers).toBe(2 * forecast.rows.length); // one point per P in each panel
      expect(facts.legend).toEqual(['gmres-block-ilu0', 'compute share']);
      expect(facts.xLabels).toEqual(['1', '2', '4', '8', '16']);
      expect(facts.yTicksTime).toBeGreaterThanOrEqual(2);
      expect(facts.overflowing).toEqual([]);
      expect(facts.axisTitles.length).toBeGreaterThanOrEqual(3);
      expect(await page.locator('nav a[href="#scale"]').count()).toBe(1);
      expect(errors).toEqual([]);
      const shot = join(dir, 'scale.png');
      await fig.screenshot({ path: shot });
      const keep = process.env.SLABBENCH_SCREENSHOT_DIR;
      if (keep) copyFileSync(shot, join(keep, 'scale-forecast.png'));
    } finally {
      await browser.close();
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
