import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync, mkdtempSync, rmSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gmres } from '../../src/solvers/gmres.js';
import { csrOperator } from '../../src/solvers/operator.js';
import { csrFromTriplets, maxAbsDiff, opts } from './helpers.js';

/**
 * Cross-check against scipy (fixtures from tests/fixtures/make_solver_fixtures.py, committed):
 * solutions against scipy.sparse.linalg.spsolve, and unpreconditioned GMRES(m) inner-iteration
 * counts against scipy.sparse.linalg.gmres for the same restart and tolerance (x0 = 0, atol 0).
 * scipy counts inner iterations by callback_type='pr_norm' calls; its restart/true-residual handling
 * differs in detail from ours, so counts agree within ±1.
 */
const here = dirname(fileURLToPath(import.meta.url));
const fixtureDir = join(here, '..', 'fixtures', 'solvers');
const script = join(here, '..', 'fixtures', 'make_solver_fixtures.py');

interface Fixture {
  name: string; n: number; rows: number[]; cols: number[]; values: number[]; b: number[]; spsolve: number[];
  gmres: { restart: number; rtol: number; info: number; innerIterations: number; prNorms: number[]; x: number[] };
}

function load(dir: string): Fixture[] {
  return readdirSync(dir).filter((f) => f.endsWith('.json')).sort()
    .map((f) => JSON.parse(readFileSync(join(dir, f), 'utf8')) as Fixture);
}

const hasScipy = (() => {
  try { execFileSync('/usr/bin/python3', ['-c', 'import scipy'], { stdio: 'ignore' }); return true; } catch { return false; }
})();

const fixtures = load(fixtureDir);

describe('scipy fixtures', () => {
  it('there are fixtures to compare against', () => {
    expect(fixtures.length).toBeGreaterThanOrEqual(3);
  });

  for (const fx of fixtures) {
    const A = csrFromTriplets(fx.n, fx.rows.map((r, k) => [r, fx.cols[k], fx.values[k]]));
    const b = Float64Array.from(fx.b);
    const scale = Math.max(...fx.spsolve.map(Math.abs));

    it(`${fx.name}: GMRES(${fx.gmres.restart}) inner iterations within ±1 of scipy's gmres`, () => {
      expect(fx.gmres.info).toBe(0);
      const x = new Float64Array(fx.n);
      const r = gmres(csrOperator(A), b, x, opts({ restart: fx.gmres.restart, rtol: fx.gmres.rtol }));
      expect(r.converged).toBe(true);
      expect(Math.abs(r.iterations - fx.gmres.innerIterations)).toBeLessThanOrEqual(1);
      expect(r.trueRelativeResidual).toBeLessThanOrEqual(fx.gmres.rtol);
      // the first cycle is the same minimization in exact arithmetic: histories agree closely
      const k = Math.min(fx.gmres.restart, fx.gmres.prNorms.length);
      for (let i = 0; i < k; i++) expect(Math.abs(r.history[i + 1] - fx.gmres.prNorms[i])).toBeLessThan(1e-8);
    });

    it(`${fx.name}: GMRES to rtol 1e-12 matches spsolve to 1e-8 (relative to max |x|)`, () => {
      const x = new Float64Array(fx.n);
      const r = gmres(csrOperator(A), b, x, opts({ restart: fx.gmres.restart, rtol: 1e-12, maxIterations: 5000 }));
      expect(r.converged).toBe(true);
      expect(maxAbsDiff(x, fx.spsolve) / scale).toBeLessThan(1e-8);
    });
  }

  it.runIf(hasScipy)('live: the committed fixtures are what the script produces with the installed scipy', () => {
    const out = mkdtempSync(join(tmpdir(), 'slabbench-solver-fixtures-'));
    try {
      execFileSync('/usr/bin/python3', [script, out], { stdio: 'ignore' });
      const live = load(out);
      expect(live.map((f) => f.name)).toEqual(fixtures.map((f) => f.name));
      for (let i = 0; i < live.length; i++) {
        expect(maxAbsDiff(live[i].spsolve, fixtures[i].spsolve)).toBeLessThan(1e-12);
        expect(Math.abs(live[i].gmres.innerIterations - fixtures[i].gmres.innerIterations)).toBeLessThanOrEqual(1);
      }
    } finally {
      rmSync(out, { recursive: true, force: true });
    }
  });
});
