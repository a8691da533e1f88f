import { describe, it, expect } from 'vitest';
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { renderReport, writeReport } from '../../src/report/html.js';
import { LIMITS_STATEMENT } from '../../src/report/limits.js';
import { makeHistory, makeResults } from './fixture.js';

describe('renderReport', () => {
  it('is one self-contained page: no network URLs in src/href, no external scripts or styles', () => {
    const { html } = renderReport(makeResults(), { history: makeHistory() });
    expect(html).not.toMatch(/\b(src|href)\s*=\s*["']?\s*(https?:)?\/\//i);
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/<link\b/i);
    expect(html).not.toMatch(/@import|url\(\s*["']?https?:/i);
    expect(html).toContain('<style>');
    expect(html.startsWith('<!DOCTYPE html>')).toBe(true);
  });

  it('holds per matrix a table and four inline plots (residuals against iterations and matvecs), plus a history plot per matrix', () => {
    const results = makeResults();
    const { html, svgs } = renderReport(results, { history: makeHistory() });
    expect(svgs.map((s) => s.file)).toEqual([
      'residuals-duct-pulse.svg', 'residuals-duct-pulse.matvecs.svg', 'ritz-duct-pulse.svg', 'pattern-duct-pulse.svg',
      'residuals-tank-stir.svg', 'residuals-tank-stir.matvecs.svg', 'ritz-tank-stir.svg', 'pattern-tank-stir.svg',
      'history-duct-pulse.svg', 'history-tank-stir.svg',
    ]);
    expect((html.match(/<svg /g) ?? []).length).toBe(10);
    for (const s of svgs) expect(html).toContain(s.svg);
    expect((html.match(/<table class="ranked">/g) ?? []).length).toBe(2);
    expect((html.match(/<tr class="winner"/g) ?? []).length).toBe(2);
    // numbers of the table are there
    expect(html).toContain('<td>120</td>'); // tank-stir gmres-bjacobi iterations
    expect(html).toContain('2.30e-4');
    expect(html).toContain(LIMITS_STATEMENT);
    // ids are unique within the page
    const ids = [...html.matchAll(/\bid="([^"]+)"/g)].map((m) => m[1]);
    expect(new Set(ids).size).toBe(ids.length);
    // user text is escaped
    expect(html).toContain('&lt;invented scenarios &amp; &quot;quotes&quot;&gt;');
  });

  it('is deterministic and leaves out the history section without history', () => {
    const a = renderReport(makeResults());
    expect(renderReport(makeResults()).html).toBe(a.html);
    expect(a.svgs).toHaveLength(8);
    expect(a.html).not.toContain('id="history"');
    const none = makeResults();
    none.runs = [];
    const empty = renderReport(none);
    expect(empty.svgs).toEqual([]);
    expect(empty.html).toContain('No runs in the results.');
  });
});

describe('writeReport', () => {
  it('writes report.html and every plot as its own svg file, nothing else', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-report-'));
    try {
      const out = await writeReport(makeResults(), join(dir, 'nested', 'out'), { history: makeHistory() });
      const files = readdirSync(join(dir, 'nested', 'out')).sort();
      expect(files).toEqual([
        'history-duct-pulse.svg', 'history-tank-stir.svg', 'pattern-duct-pulse.svg', 'pattern-tank-stir.svg',
        'report.html', 'residuals-duct-pulse.matvecs.svg', 'residuals-duct-pulse.svg', 'residuals-tank-stir.matvecs.svg',
        'residuals-tank-stir.svg', 'ritz-duct-pulse.svg', 'ritz-tank-stir.svg',
      ]);
      expect(out.svgPaths).toHaveLength(10);
      const svg = readFileSync(out.svgPaths[0], 'utf8');
      expect(svg.startsWith('<?xml version="1.0" encoding="UTF-8"?>\n<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
      expect(readFileSync(out.htmlPath, 'utf8')).toContain('slabbench report');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('writeReport into a folder used before', () => {
  it('removes our plot files that no longer belong to the results and leaves every other file alone', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-report-stale-'));
    try {
      await writeReport(makeResults(), dir, { history: makeHistory(), axes: ['iterations', 'matvecs', 'seconds'] });
      expect(readdirSync(dir)).toContain('residuals-tank-stir.seconds.svg');
      writeFileSync(join(dir, 'notes.svg'), '<svg/>');
      writeFileSync(join(dir, 'residuals-my-own.txt'), 'mine');
      const fewer = makeResults();
      fewer.runs = fewer.runs.filter((r) => r.matrix === 'duct-pulse');
      const out = await writeReport(fewer, dir, {});
      const files = readdirSync(dir).sort();
      expect(files).toEqual([
        'notes.svg', 'pattern-duct-pulse.svg', 'report.html', 'residuals-duct-pulse.matvecs.svg', 'residuals-duct-pulse.svg',
        'residuals-my-own.txt', 'ritz-duct-pulse.svg',
      ]);
      expect(out.removed.map((p) => p.slice(dir.length + 1)).sort()).toEqual([
        'history-duct-pulse.svg', 'history-tank-stir.svg', 'pattern-tank-stir.svg', 'residuals-duct-pulse.seconds.svg',
        'residuals-tank-stir.matvecs.svg', 'residuals-tank-stir.seconds.svg', 'residuals-tank-stir.svg', 'ritz-tank-stir.svg',
      ]);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('report honesty', () => {
  it('partial results carry a banner, and a matrix missing recipes has no winner row', () => {
    const results = makeResults();
    results.status = 'partial';
    results.suite.recipeNames = [...new Set(results.runs.map((r) => r.recipe))];
    results.runs = results.runs.filter((r) => !(r.matrix === 'tank-stir' && r.recipe === 'gmres-bilu0'));
    const { html } = renderReport(results);
    expect(html).toContain('data-status="partial"');
    const tank = html.slice(html.indexOf('data-matrix="tank-stir"'));
    expect(tank).toContain('data-incomplete="1"');
    expect(tank).not.toContain('class="winner"');
    expect((html.match(/<tr class="winner"/g) ?? []).length).toBe(1);
  });

  it('history: no section for a matrix absent from the results; repeated commits get distinct labels; a suite change is marked', () => {
    const history = makeHistory();
    history[1].commit = history[0].commit;
    for (const e of history) e.suite = { fingerprint: 'one-suite' };
    history.push({ ...history[history.length - 1], suite: { fingerprint: 'another-suite' }, runs: [...history[0].runs, { ...history[0].runs[0], matrix: 'gone-matrix' }] });
    const { svgs } = renderReport(makeResults(), { history });
    const files = svgs.map((s) => s.file);
    expect(files).not.toContain('history-gone-matrix.svg');
    const h = svgs.find((s) => s.file === 'history-duct-pulse.svg')!.svg;
    if (history[0].commit) {
      const c = history[0].commit.slice(0, 7);
      expect(h).toContain(`>${c}<`);
      expect(h).toContain(`>${c}·2<`);
    }
    expect(h).toMatch(/data-suite-change="\d+"/);
  });
});
