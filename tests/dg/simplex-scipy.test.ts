import { describe, it, expect } from 'vitest';
import { readFileSync, mkdtempSync, rmSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gaussJacobi } from '../../src/dg/jacobi-polynomials.js';
import { orthonormalBasis } from '../../src/dg/basis.js';

/**
 * Cross-check against scipy (fixture from tests/fixtures/make_simplex_fixtures.py, committed):
 * Gauss–Jacobi nodes/weights against scipy.special.roots_jacobi, and PKD basis values against the
 * collapsed-coordinate formula evaluated with scipy.special.eval_jacobi (an independent evaluation:
 * division by s_k instead of our scaled recurrence).
 */
const here = dirname(fileURLToPath(import.meta.url));
const fixturePath = join(here, '..', 'fixtures', 'dg', 'simplex-reference.json');
const script = join(here, '..', 'fixtures', 'make_simplex_fixtures.py');

interface Fixture {
  order: number;
  gaussJacobi: { n: number; alpha: number; beta: number; nodes: number[]; weights: number[] }[];
  pkd: { dim: 1 | 2 | 3 | 4; n: number[]; points: number[][]; values: number[] }[];
}

const hasScipy = (() => {
  try { execFileSync('/usr/bin/python3', ['-c', 'import scipy'], { stdio: 'ignore' }); return true; } catch { return false; }
})();

function check(fx: Fixture): void {
  expect(fx.gaussJacobi.length).toBeGreaterThanOrEqual(6);
  for (const g of fx.gaussJacobi) {
    const { nodes, weights } = gaussJacobi(g.n, g.alpha, g.beta);
    for (let i = 0; i < g.n; i++) {
      expect(Math.abs(nodes[i] - g.nodes[i])).toBeLessThan(1e-14);
      expect(Math.abs(weights[i] - g.weights[i]) / g.weights[i]).toBeLessThan(1e-13);
    }
  }
  let compared = 0;
  for (const entry of fx.pkd) {
    const basis = orthonormalBasis(entry.dim, fx.order);
    const d = entry.dim;
    let b = -1;
    for (let i = 0; i < basis.nBasis && b < 0; i++) {
      let same = true;
      for (let k = 0; k < d; k++) if (basis.indices[i * d + k] !== entry.n[k]) same = false;
      if (same) b = i;
    }
    expect(b, `multi-index ${entry.n.join(',')}`).toBeGreaterThanOrEqual(0);
    const pts = Float64Array.from(entry.points.flat());
    const { values } = basis.evaluate(pts, entry.points.length);
    for (let p = 0; p < entry.points.length; p++) {
      expect(Math.abs(values[p * basis.nBasis + b] - entry.values[p])).toBeLessThan(1e-12 * (1 + Math.abs(entry.values[p])));
      compared++;
    }
  }
  // every function of order 3 in every dimension 1..4: 4 + 10 + 20 + 35 functions at 3 points
  expect(compared).toBe(3 * (4 + 10 + 20 + 35));
}

describe('scipy reference values for the simplex tools', () => {
  it('committed fixture: Gauss–Jacobi (scipy.special.roots_jacobi) and PKD values (scipy.special.eval_jacobi)', () => {
    check(JSON.parse(readFileSync(fixturePath, 'utf8')) as Fixture);
  });

  it.runIf(hasScipy)('live: the fixture script reproduces the committed values', () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-simplex-'));
    try {
      execFileSync('/usr/bin/python3', [script, dir], { stdio: 'ignore' });
      const live = JSON.parse(readFileSync(join(dir, 'simplex-reference.json'), 'utf8')) as Fixture;
      check(live);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
