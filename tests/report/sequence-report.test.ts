// A sweep over sequence entries (real generator and solver, in this thread) and what the
// terminal tables, the report and `check` make of it; the page is opened in headless Chromium.
import { describe, expect, it, afterAll } from 'vitest';
import { existsSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';
import * as real from '../../src/run/real-deps.js';
import { readSuite } from '../../src/run/suite.js';
import { runSweep } from '../../src/run/sweep.js';
import { renderRankedTables } from '../../src/report/table.js';
import { renderReport, writeReport } from '../../src/report/html.js';
import { compareWithBaseline } from '../../src/run/baseline.js';
import { resultsCsv, CSV_COLUMNS } from '../../src/run/results.js';
import { tempDir } from '../run/helpers.js';

const CHROMIUM = '/usr/bin/chromium';

/** The few DOM members used inside the page (the project compiles without the DOM library). */
interface Boxed {
  getBoundingClientRect(): { left: number; right: number; top: number; bottom: number };
  querySelectorAll(sel: string): ArrayLike<Boxed>;
  textContent: string | null;
}
const t = tempDir('slabbench-seqreport-');
afterAll(() => t.cleanup());

async function sweep() {
  const suitePath = join(t.dir, 'suite.json');
  writeFileSync(suitePath, JSON.stringify({
    schema: 'slabbench-suite/1',
    matrices: [
      { name: 'bore-steps', note: 'invented: a small periodic channel', generate: { physics: 'burgers', dim: 1, order: 1, cells: [10], slabs: 2, periodic: [true], initial: '0.6 + 0.2*sin(2*pi*x)' }, sequence: { kind: 'newton', steps: 3 } },
      { name: 'duct-march', generate: { physics: 'advection', dim: 1, order: 1, cells: [12], slabs: 3 }, sequence: { kind: 'slabs' } },
    ],
    recipes: [
      { name: 'jacobi', krylov: 'gmres', preconditioner: 'block-jacobi' },
      { name: 'jacobi-previous', krylov: 'gmres', preconditioner: 'block-jacobi', initialGuess: 'previous' },
    ],
  }));
  const suite = readSuite(suitePath, real);
  return runSweep({ suite, outDir: join(t.dir, 'out'), jobs: 1, inProcess: real, builder: real, probe: false, repeats: 2, warmup: false, history: false });
}

describe('sequence entries through sweep, tables, report and check', async () => {
  const o = await sweep();
  const doc = o.doc;

  it('records per-system figures and totals for every pair', () => {
    expect(o.errors).toBe(0);
    expect(doc.runs).toHaveLength(4);
    for (const r of doc.runs) {
      const q = r.sequence!;
      expect(q.systems).toHaveLength(3);
      expect(q.totals.iterations).toBe(q.systems.reduce((a, s) => a + s.iterations, 0));
      expect(r.result!.iterations).toBe(q.totals.iterations);
      expect(r.result!.work).toEqual(q.totals.work);
      expect(q.totals.rebuilds).toBe(3);
      expect(r.repeats!.count).toBe(2);
      expect(q.systems.map((s) => s.x0)).toEqual(r.recipe === 'jacobi' ? ['zero', 'zero', 'zero'] : ['zero', 'previous', 'previous']);
    }
    expect(doc.matrices.find((m) => m.name === 'bore-steps')!.sequence).toEqual({ kind: 'newton', systems: 3, labels: ['newton 1', 'newton 2', 'newton 3'] });
    const csv = resultsCsv(doc).split('\n');
    const row = csv[1].split(',');
    expect(row[CSV_COLUMNS.indexOf('systems')]).toBe('3');
    expect(row[CSV_COLUMNS.indexOf('rebuilds')]).toBe('3');
  });

  it('prints a per-system table under each ranked table', () => {
    const text = renderRankedTables(doc, { width: 100 });
    expect(text).toContain('sequence of 3 systems (newton)');
    expect(text).toContain('per system: iterations (* = preconditioner set up for that system), then totals');
    const line = text.split('\n').find((l) => /^\s+jacobi\s+\d+\*/.test(l))!;
    const run = doc.runs.find((r) => r.matrix === 'bore-steps' && r.recipe === 'jacobi')!;
    expect(line.trim().split(/\s+/).slice(1, 5)).toEqual([...run.sequence!.systems.map((s) => `${s.iterations}*`), String(run.sequence!.totals.iterations)]);
  });

  it('check compares the totals and the rebuilds', () => {
    expect(compareWithBaseline(doc, doc).failures).toBe(0);
    const worse = structuredClone(doc);
    const run = worse.runs[0]!;
    run.sequence!.totals.rebuilds += 1;
    run.result!.work.setup.flops += 1;
    const rows = compareWithBaseline(worse, doc).rows;
    expect(rows[0]!.problems).toEqual(expect.arrayContaining([
      `preconditioner rebuilds 3 → 4 over the sequence`,
      expect.stringMatching(/^setup flops \d+ → \d+ \(allowed ≤ \d+, exact\)$/),
    ]));
  });

  it('the report has a per-system table and plot for each sequence', () => {
    const { html, svgs } = renderReport(doc);
    expect(svgs.map((s) => s.file)).toEqual(expect.arrayContaining(['sequence-bore-steps.svg', 'sequence-duct-march.svg']));
    expect(html.match(/<table class="ranked sequence" data-systems="3">/g)).toHaveLength(2);
    const plot = svgs.find((s) => s.file === 'sequence-bore-steps.svg')!.svg;
    expect(plot).toContain('data-plot="sequence"');
    expect(plot).toContain('data-series-count="2"');
    expect(plot).toContain('newton 3');
  });

  it.runIf(existsSync(CHROMIUM))('renders in a browser: the sequence plots have their series and no text leaves them', async () => {
    const { htmlPath } = await writeReport(doc, join(t.dir, 'report'));
    const browser = await chromium.launch({ executablePath: CHROMIUM, headless: true, args: ['--no-sandbox', '--disable-gpu'] });
    try {
      const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
      const errors: string[] = [];
      page.on('console', (m) => { if (m.type() === 'error' || m.type() === 'warning') errors.push(m.text()); });
      page.on('pageerror', (e) => errors.push(e.message));
      await page.goto(pathToFileURL(htmlPath).href, { waitUntil: 'load' });
      const facts = await page.$$eval('svg[data-plot="sequence"]', (svgs) => (svgs as unknown as Boxed[]).map((svg) => {
        const o = svg.getBoundingClientRect();
        return {
          series: svg.querySelectorAll('path[data-series]').length,
          overflowing: Array.from(svg.querySelectorAll('text')).filter((x) => {
            const r = x.getBoundingClientRect();
            return r.right > o.right + 1 || r.left < o.left - 1 || r.top < o.top - 1 || r.bottom > o.bottom + 1;
          }).map((x) => x.textContent),
        };
      }));
      expect(facts).toHaveLength(2);
      // two recipes, a line in each of the two panels
      for (const f of facts) { expect(f.series).toBe(4); expect(f.overflowing).toEqual([]); }
      expect(await page.locator('table.sequence tbody tr').count()).toBe(4);
      expect(errors).toEqual([]);
    } finally {
      await browser.close();
    }
  });
});
