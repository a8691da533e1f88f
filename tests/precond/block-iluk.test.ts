/**
 * Block ILU(k): the level-of-fill pattern against a naive twin of Saad's rule and a derived
 * count on the 5-point matrix, k = 0 against block ILU(0), large k against the exact LU, and
 * the effect of k on GMRES iterations.
 */
import { describe, it, expect } from 'vitest';
import { fillPattern } from '../../src/sparse/fill-levels.js';
import { BlockIlukPreconditioner, createBlockIluk } from '../../src/precond/block-iluk.js';
import { BlockIlu0Preconditioner } from '../../src/precond/block-ilu0.js';
import { csrToBsr } from '../../src/sparse/bsr.js';
import { blockOrdering } from '../../src/sparse/orderings.js';
import { permuteBsr } from '../../src/sparse/permute.js';
import { bsrOperator } from '../../src/solvers/operator.js';
import { krylovSolve } from '../../src/solvers/krylov.js';
import { convectionDiffusion } from '../sparse/model-matrices.js';
import { maxAbsDiff, poisson2d, randomBsr, randomVector, recipe, reorderedApplyDifference, rng, systemOf } from './helpers.js';
import type { Bsr } from '../../src/sparse/types.js';

/** Naive twin of the level rule (Saad 2003 §10.3.3): dense level matrix, IKJ order, drop > k. */
function naiveLevels(a: Pick<Bsr, 'nBlockRows' | 'rowPtr' | 'colInd'>, k: number): number[][] {
  const n = a.nBlockRows;
  const lev = Array.from({ length: n }, () => new Array<number>(n).fill(Infinity));
  for (let i = 0; i < n; i++) for (let p = a.rowPtr[i]!; p < a.rowPtr[i + 1]!; p++) lev[i]![a.colInd[p]!] = 0;
  for (let i = 0; i < n; i++) {
    for (let kk = 0; kk < i; kk++) {
      if (lev[i]![kk]! > k) continue;
      for (let j = kk + 1; j < n; j++) {
        const l = lev[i]![kk]! + lev[kk]![j]! + 1;
        if (l < lev[i]![j]!) lev[i]![j] = l;
      }
    }
    for (let j = 0; j < n; j++) if (lev[i]![j]! > k) lev[i]![j] = Infinity;
  }
  return lev;
}

function randomPattern(nb: number, perRow: number, seed: number): Array<[number, number]> {
  const r = rng(seed);
  const out: Array<[number, number]> = [];
  for (let i = 0; i < nb; i++) for (let t = 0; t < perRow; t++) out.push([i, Math.floor(r() * nb)]);
  return out;
}

function solveIterations(a: Bsr, k: number | 'ilu0'): number {
  const sys = systemOf(a);
  const M = k === 'ilu0' ? new BlockIlu0Preconditioner(sys, 'natural', 0) : new BlockIlukPreconditioner(sys, 'natural', 0, k);
  expect(M.setup().ok).toBe(true);
  const n = a.nBlockRows * a.bs;
  const b = randomVector(n, 3);
  const res = krylovSolve(bsrOperator(a), b, new Float64Array(n), recipe({ restart: 200, rtol: 1e-10, maxIterations: 2000 }), M);
  expect(res.converged).toBe(true);
  return res.iterations;
}

describe('level-of-fill pattern (Saad 2003 §10.3.3)', () => {
  it('matches the naive dense twin of the level rule on random block graphs, for k = 0…4', () => {
    for (let seed = 1; seed <= 6; seed++) {
      const a = randomBsr(24, 1, randomPattern(24, 2, seed), seed);
      for (let k = 0; k <= 4; k++) {
        const pat = fillPattern(a, k);
        if ('tooBig' in pat) throw new Error('unexpected');
        const want = naiveLevels(a, k);
        const got = Array.from({ length: 24 }, () => new Array<number>(24).fill(Infinity));
        for (let i = 0; i < 24; i++) for (let p = pat.rowPtr[i]!; p < pat.rowPtr[i + 1]!; p++) got[i]![pat.colInd[p]!] = pat.level[p]!;
        expect(got, `seed ${seed}, k ${k}`).toEqual(want);
        // rows sorted, A's entries kept at level 0
        for (let i = 0; i < 24; i++) for (let p = pat.rowPtr[i]! + 1; p < pat.rowPtr[i + 1]!; p++) expect(pat.colInd[p]!).toBeGreaterThan(pat.colInd[p - 1]!);
        expect(pat.blocksPerLevel[0]).toBe(a.rowPtr[24]);
      }
    }
  });

  it('ILU(1) of the 5-point matrix adds exactly the 2(m−1)² positions ILU(0) discards', () => {
    // Derived: level-1 fill comes from (i, i−1)·(i−1, i−1+m) → (i, i+m−1) and (i, i−m)·(i−m, i−m+1)
    // → (i, i−m+1); both exist for (m−1)² rows each. They are the 2(m−1)² entries of LU − A outside
    // the pattern of A for ILU(0) (Saad 2003 §10.3; shared references file).
    for (const m of [3, 4, 7]) {
      const a = csrToBsr(poisson2d(m), 1);
      const pat = fillPattern(a, 1);
      if ('tooBig' in pat) throw new Error('unexpected');
      expect(pat.blocksPerLevel).toEqual([a.rowPtr[m * m], 2 * (m - 1) ** 2]);
      for (let i = 0; i < m * m; i++) {
        for (let p = pat.rowPtr[i]!; p < pat.rowPtr[i + 1]!; p++) {
          if (pat.level[p] === 1) expect([m - 1, -(m - 1)]).toContain(pat.colInd[p]! - i);
        }
      }
    }
  });

  it('stops before outgrowing a block budget', () => {
    const a = csrToBsr(poisson2d(6), 1);
    const r = fillPattern(a, 10, 200);
    expect('tooBig' in r && r.tooBig).toBeGreaterThan(0);
  });
});

describe('block ILU(k) preconditioner', () => {
  const pattern = randomPattern(30, 2, 11);
  const a = randomBsr(30, 3, pattern, 11);

  it('k = 0 gives the block ILU(0) factors exactly', () => {
    const k0 = new BlockIlukPreconditioner(systemOf(a), 'natural', 0, 0);
    const i0 = new BlockIlu0Preconditioner(systemOf(a), 'natural', 0);
    expect(k0.setup().ok).toBe(true);
    expect(i0.setup().ok).toBe(true);
    expect(Array.from(k0.factorValues())).toEqual(Array.from(i0.factorValues()));
    expect(k0.stats().fillRatio).toBe(1);
  });

  it('counts the work of block ILU(0) on the same pattern, plus the copies of setup', () => {
    const k0 = new BlockIlukPreconditioner(systemOf(a), 'natural', 0, 0);
    const i0 = new BlockIlu0Preconditioner(systemOf(a), 'natural', 0);
    k0.setup(); i0.setup();
    const r = randomVector(90, 2), z = new Float64Array(90);
    for (let t = 0; t < 3; t++) { k0.apply(r, z); i0.apply(r, z); }
    const wk = k0.work(), wi = i0.work();
    expect(wk.apply).toEqual(wi.apply);
    expect(wk.setup.flops).toBe(wi.setup.flops);
    // natural order: zero-fill of the extended values (k blocks·bs²·8) + scatter of A (read + write)
    const blocks = a.rowPtr[30]!, bb = 9;
    expect(wk.setup.bytes - wi.setup.bytes).toBe(blocks * bb * 8 + 2 * blocks * bb * 8);
  });

  it('k ≥ n is the exact LU: GMRES converges in one iteration', () => {
    expect(solveIterations(a, 30)).toBe(1);
  });

  it('a higher level never needs more GMRES iterations on convection–diffusion (5-point, β = 0.9, γ = 0.8)', () => {
    const cd = csrToBsr(convectionDiffusion(12, 0.9, 0.8, 0.5), 1);
    const its = [solveIterations(cd, 'ilu0'), solveIterations(cd, 0), solveIterations(cd, 1), solveIterations(cd, 2), solveIterations(cd, 4)];
    expect(its[0]).toBe(its[1]);
    for (let i = 2; i < its.length; i++) expect(its[i]!).toBeLessThanOrEqual(its[i - 1]!);
    expect(its[4]!).toBeLessThan(its[0]!);
  });

  it('an ordering renumbers before the levels are computed (equals the natural-order twin on P A Pᵀ)', () => {
    const M = createBlockIluk(systemOf(a), recipe({ preconditioner: 'block-iluk', ordering: 'rcm', fillLevel: 2 }));
    expect(M.setup().ok).toBe(true);
    const perm = blockOrdering(a, 'rcm', {});
    const N = new BlockIlukPreconditioner(systemOf(permuteBsr(a, perm)), 'natural', 0, 2);
    expect(N.setup().ok).toBe(true);
    expect(reorderedApplyDifference(M, N, perm, 3, 5)).toBeLessThan(1e-12);
  });

  it('reports fill per level and names a zero pivot in the caller\'s numbering', () => {
    const M = new BlockIlukPreconditioner(systemOf(a), 'natural', 0, 2);
    expect(M.setup().ok).toBe(true);
    const st = M.stats() as { blocksPerLevel: number[]; factorBlocks: number; fillLevel: number };
    expect(st.fillLevel).toBe(2);
    expect(st.blocksPerLevel.reduce((x, y) => x + y, 0)).toBe(st.factorBlocks);
    expect(st.blocksPerLevel[0]).toBe(a.rowPtr[30]);
    const z = { ...a, values: a.values.slice() };
    z.values.fill(0, 0, 9); // block row 0's diagonal block (first stored block of row 0)
    const bad = new BlockIlukPreconditioner(systemOf(z), 'natural', 0, 1).setup();
    expect(bad.ok).toBe(false);
    if (!bad.ok) {
      expect(bad.reason).toBe('zero-pivot');
      expect(bad.blockRow).toBe(0);
      expect(bad.message).toMatch(/^block-iluk: /);
    }
    const rb = randomVector(90, 1), out = new Float64Array(90);
    M.apply(rb, out);
    expect(maxAbsDiff(rb, randomVector(90, 1))).toBe(0);
  });
});
