import { describe, it, expect, afterEach } from 'vitest';
import { renderRankedTables, shouldUseColor } from '../../src/report/table.js';
import { formatBytes, formatCount, formatResidual, formatSeconds } from '../../src/report/format.js';
import { makeResults } from './fixture.js';

const ANSI = /\x1b\[/;

describe('renderRankedTables', () => {
  it('prints one table per matrix with every number of every run', () => {
    const results = makeResults();
    const out = renderRankedTables(results);
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
    const out = renderRankedTables(makeResults());
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
  it('formats bytes in binary units', () => {
    expect(formatBytes(0)).toBe('0 B');
    expect(formatBytes(1023)).toBe('1023 B');
    expect(formatBytes(1024)).toBe('1.00 KiB');
    expect(formatBytes(1536)).toBe('1.50 KiB');
    expect(formatBytes(5 * 1024 ** 3)).toBe('5.00 GiB');
    expect(formatBytes(1.5 * 1024 ** 4)).toBe('1.50 TiB');
    expect(formatBytes(123.4 * 1024 ** 2)).toBe('123 MiB');
  });
  it('formats residuals, seconds and counts', () => {
    expect(formatResidual(3.2104e-9)).toBe('3.21e-9');
    expect(formatResidual(19000)).toBe('1.90e4');
    expect(formatResidual(NaN)).toBe('NaN');
    expect(formatSeconds(0.0123456)).toBe('0.0123');
    expect(formatSeconds(0.00005)).toBe('5.0e-5');
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
