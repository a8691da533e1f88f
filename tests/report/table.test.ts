import { describe, it, expect, afterEach } from 'vitest';
import { renderRankedTables, shouldUseColor } from '../../src/report/table.js';
import { formatBytes, formatCount, formatResidual, formatSeconds } from '../../src/report/format.js';
import { makeResults } from './fixture.js';

const ANSI = /\x1b\[/;

describe('renderRankedTables', () => {
  it('prints one table per matrix with every number of every run', () => {
    const results = makeResults();
    const out = renderRankedTables(results, { width: 200 });
    expect(out).not.toMatch(ANSI);
    for (const name of ['duct-pulse', 'tank-stir']) expect(out).toContain(name);
    const lines = out.split('\n');
    for (const r of results.runs) {
      const res = r.result!;
      // The run's row: its matrix block, its recipe name.
      const start = lines.findIndex((l) => l.startsWith(r.matrix));
      const row = lines.slice(start).find((l) => l.includes(` ${r.recipe} `))!;
      expect(row, `${r.matrix}/${r.recipe}`).toBeDefined();
      const cells = row.trim().split(/\s{2,}/);
      expect(cells).toContain(String(res.iterations));
      expect(cells).toContain(String(res.restarts));
      expect(cells).toContain(res.cause);
      expect(row).toContain(formatResidual(res.trueRelativeResidual));
      expect(cells).toContain(formatSeconds(res.timing.setupSeconds));
      expect(cells).toContain(formatSeconds(res.timing.solveSeconds));
      expect(cells).toContain(formatBytes(res.memory.preconditionerBytes + res.memory.krylovBytes));
    }
  });

  it('marks exactly one winner per matrix, on the rank-1 converged row', () => {
    const out = renderRankedTables(makeResults(), { width: 200 });
    const winnerRows = out.split('\n').filter((l) => /^\s+1 ★\s/.test(l));
    expect(winnerRows).toHaveLength(2);
    for (const l of winnerRows) expect(l).toContain('gmres-bilu0');
    expect(out).toContain('winner: gmres-bilu0');
    // the diverged BiCGStab run is ranked last on tank-stir
    const tank = out.slice(out.indexOf('tank-stir'));
    expect(tank.indexOf('gmres-bjacobi')).toBeLessThan(tank.indexOf('bicgstab-jacobi'));
  });

  it('notes residual mismatch and says when nothing converged', () => {
    const results = makeResults();
    expect(renderRankedTables(results)).toContain('9.90e-9†');
    results.runs = results.runs.filter((r) => r.matrix === 'tank-stir' && !r.result!.converged);
    results.matrices = results.matrices.filter((m) => m.name === 'tank-stir');
    const out = renderRankedTables(results);
    expect(out).toContain('no recipe converged');
    expect(out).not.toContain('★');
  });

  it('colours only when asked', () => {
    expect(renderRankedTables(makeResults(), { color: true })).toMatch(ANSI);
    expect(renderRankedTables(makeResults(), { color: false })).not.toMatch(ANSI);
  });
});

describe('shouldUseColor', () => {
  const saved = process.env.NO_COLOR;
  afterEach(() => {
    if (saved === undefined) delete process.env.NO_COLOR;
    else process.env.NO_COLOR = saved;
  });
  it('needs a TTY and no NO_COLOR', () => {
    delete process.env.NO_COLOR;
    expect(shouldUseColor({ isTTY: true })).toBe(true);
    expect(shouldUseColor({ isTTY: false })).toBe(false);
    expect(shouldUseColor({})).toBe(false);
    process.env.NO_COLOR = '1';
    expect(shouldUseColor({ isTTY: true })).toBe(false);
  });
});

describe('format', () => {
  it('formats bytes in SI units with three significant digits', () => {
    expect(formatBytes(0)).toBe('0 B');
    expect(formatBytes(999)).toBe('999 B');
    expect(formatBytes(1000)).toBe('1.00 kB');
    expect(formatBytes(1536)).toBe('1.54 kB');
    expect(formatBytes(5e9)).toBe('5.00 GB');
    expect(formatBytes(1.5e12)).toBe('1.50 TB');
    expect(formatBytes(123.4e6)).toBe('123 MB');
    expect(formatBytes(999.7e3)).toBe('1.00 MB'); // rounding carries into the next unit, never "1000 kB"
    expect(formatBytes(12.34e6)).toBe('12.3 MB');
  });
  it('formats residuals, seconds and counts', () => {
    expect(formatResidual(3.2104e-9)).toBe('3.21e-9');
    expect(formatResidual(19000)).toBe('1.90e4');
    expect(formatResidual(NaN)).toBe('NaN');
    expect(formatSeconds(0.0123456)).toBe('0.0123');
    expect(formatSeconds(0.00005)).toBe('5.00e-5');
    expect(formatCount(1234567)).toBe('1 234 567');
  });
});

describe('renderRankedTables edge cases', () => {
  it('leaves out matrices without runs and shows runs that could not start', () => {
    const results = makeResults();
    results.runs = [{ matrix: 'lonely', recipe: 'r', recipeParams: results.runs[0].recipeParams, error: 'could not read lonely.mtx' }];
    const out = renderRankedTables(results);
    expect(out).not.toContain('duct-pulse');
    expect(out).toContain('lonely');
    expect(out).toContain('not run');
    expect(out).toContain('r: could not read lonely.mtx');
    results.runs = [];
    expect(renderRankedTables(results)).toBe('no runs in the results\n');
  });
});

describe('renderRankedTables layout and honesty', () => {
  const visible = (s: string): number => [...s].length;

  it('fits 80 columns in the narrow layout (time merged, recipe names shortened) and uses a wider terminal when there is one', () => {
    const results = makeResults();
    results.runs[0].recipe = 'gmres+block-ilu0-downstream-with-a-very-long-name';
    const narrow = renderRankedTables(results, { width: 80 });
    for (const line of narrow.split('\n')) expect(visible(line), line).toBeLessThanOrEqual(80);
    expect(narrow).toContain('time s');
    expect(narrow).not.toContain('setup s');
    expect(narrow).toContain('…');
    const wide = renderRankedTables(results, { width: 200 });
    expect(wide).toContain('setup s');
    expect(wide).toContain('restarts');
    expect(wide).toContain('gmres+block-ilu0-downstream-with-a-very-long-name');
    for (const line of renderRankedTables(results, { width: 60 }).split('\n')) expect(visible(line), line).toBeLessThanOrEqual(60);
  });

  it('shows matvecs and preconditioner applies beside iterations', () => {
    const results = makeResults();
    const res = results.runs[0].result!;
    (res as unknown as { work: unknown }).work = { setup: {}, solve: { matvecs: 1234, preconditionerApplies: 1233 } };
    const out = renderRankedTables(results, { width: 200 });
    const header = out.split('\n').find((l) => l.includes('iters'))!;
    expect(header.indexOf('iters')).toBeLessThan(header.indexOf('matvecs'));
    expect(header.indexOf('matvecs')).toBeLessThan(header.indexOf('applies'));
    expect(out).toMatch(/1 234\s+1 233/);
  });

  it('a matrix where only some of the sweep’s recipes ran has no winner, and partial results say so first', () => {
    const results = makeResults();
    results.suite.recipeNames = ['gmres-bilu0', 'gmres-bjacobi', 'bicgstab-jacobi'];
    results.runs = results.runs.filter((r) => !(r.matrix === 'tank-stir' && r.recipe === 'gmres-bilu0'));
    results.status = 'interrupted';
    const out = renderRankedTables(results, { width: 200 });
    expect(out.split('\n')[0]).toMatch(/^warning: these results are from an interrupted sweep/);
    const tank = out.slice(out.indexOf('tank-stir'));
    expect(tank).not.toContain('★');
    expect(tank).toContain('incomplete: 1 recipe of the sweep did not run here (gmres-bilu0), so no winner is named');
    const duct = out.slice(0, out.indexOf('tank-stir'));
    expect(duct).toContain('★ winner: gmres-bilu0');
  });

  it('a failure message that already names the recipe is not prefixed twice', () => {
    const results = makeResults();
    const run = results.runs.find((r) => r.matrix === 'tank-stir' && !r.result!.converged)!;
    run.recipe = 'ilu0';
    run.result!.failure = { message: 'ilu0: zero or tiny pivot in row 3 (block row 1)' };
    const out = renderRankedTables(results, { width: 200 });
    expect(out).toContain('ilu0: zero or tiny pivot');
    expect(out).not.toContain('ilu0: ilu0:');
  });

  it('singular and plural: 1 slab, 2 slabs', () => {
    const results = makeResults();
    results.matrices[0].nSlabs = 1;
    expect(renderRankedTables(results, { width: 200 })).toContain(', 1 slab');
    expect(renderRankedTables(results, { width: 200 })).toMatch(/, [2-9]\d* slabs/);
  });
});
