import { describe, expect, it } from 'vitest';
import { createIlu0, Ilu0Preconditioner } from '../../src/precond/ilu0.js';
import { BlockIlu0Preconditioner, createBlockIlu0 } from '../../src/precond/block-ilu0.js';
import { gmres } from '../../src/solvers/gmres.js';
import { csrOperator } from '../../src/solvers/operator.js';
import { bsrToCsr, csrToBsr } from '../../src/sparse/bsr.js';
import { permuteBsr } from '../../src/sparse/permute.js';
import { orderingPermutation } from '../../src/precond/block-tools.js';
import {
  csrFromTriplets, maxAbsDiff, poisson2d, randomVector, recipe, reorderedApplyDifference, rng, csrMatVec, systemOfCsr,
} from './helpers.js';

function ilu0Of(csr: ReturnType<typeof poisson2d>): Ilu0Preconditioner {
  const M = createIlu0(systemOfCsr(csr), recipe({ preconditioner: 'ilu0' })) as Ilu0Preconditioner;
  expect(M.setup()).toEqual({ ok: true });
  return M;
}

describe('point ILU(0) on the 5-point matrix (Saad, Iterative Methods for Sparse Linear Systems, 2nd ed. 2003, §10.3)', () => {
  const m = 4;
  const A = poisson2d(m);
  const M = ilu0Of(A);
  const d = M.pivots();

  it('first six pivots are 4, 3.75, 3.7333333333, 3.7321428571, 3.75, 3.4666666667 (Saad 2003, §10.3)', () => {
    const expected = [4, 3.75, 3.7333333333, 3.7321428571, 3.75, 3.4666666667];
    expected.forEach((v, i) => expect(d[i]).toBeCloseTo(v, 9));
  });

  it('every pivot follows d_i = 4 − 1/d_{i−1} − 1/d_{i−m}, terms only for existing neighbours (Saad 2003, §10.3)', () => {
    for (let i = 0; i < m * m; i++) {
      let e = 4;
      if (i % m > 0) e -= 1 / d[i - 1];
      if (i >= m) e -= 1 / d[i - m];
      expect(Math.abs(d[i] - e)).toBeLessThan(1e-14);
    }
  });

  it('the remainder LU − A has 2(m−1)² = 18 nonzeros, all outside the pattern of A (Saad 2003, §10.3)', () => {
    const n = m * m;
    const f = M.factorValues();
    const L = new Float64Array(n * n), U = new Float64Array(n * n), Ad = new Float64Array(n * n);
    for (let i = 0; i < n; i++) {
      L[i * n + i] = 1;
      for (let k = A.rowPtr[i]; k < A.rowPtr[i + 1]; k++) {
        const j = A.colInd[k];
        Ad[i * n + j] = A.values[k];
        if (j < i) L[i * n + j] = f[k]; else U[i * n + j] = f[k];
      }
    }
    let count = 0, inPattern = 0;
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += L[i * n + k] * U[k * n + j];
      if (Math.abs(s - Ad[i * n + j]) > 1e-12) {
        count++;
        if (Ad[i * n + j] !== 0 || i === j) inPattern++;
      }
    }
    expect(count).toBe(2 * (m - 1) ** 2);
    expect(inPattern).toBe(0);
  });
});

describe('ILU(0) exactness (derived: no fill is dropped when the pattern is closed under elimination)', () => {
  it('ILU(0) of a non-symmetric tridiagonal matrix is its exact LU: M⁻¹(A x) = x', () => {
    const n = 30, r = rng(3);
    const e: Array<[number, number, number]> = [];
    for (let i = 0; i < n; i++) {
      e.push([i, i, 4 + r()]);
      if (i > 0) e.push([i, i - 1, -1 - r()]);
      if (i + 1 < n) e.push([i, i + 1, -r()]);
    }
    const A = csrFromTriplets(n, e);
    const M = ilu0Of(A);
    const x = randomVector(n, 4);
    const z = new Float64Array(n);
    M.apply(csrMatVec(A, x), z);
    expect(maxAbsDiff(z, x)).toBeLessThan(1e-13);
  });
});

describe('block ILU(0) with bs = 1 equals point ILU(0) (derived: the block algorithm with 1×1 blocks is Saad Alg. 10.4)', () => {
  it('same factors (block version stores 1/u_ii on the diagonal) and same apply on a random non-symmetric matrix', () => {
    const n = 40, r = rng(11);
    const e: Array<[number, number, number]> = [];
    for (let i = 0; i < n; i++) {
      e.push([i, i, 6]);
      for (let t = 0; t < 4; t++) e.push([i, Math.floor(r() * n), 2 * r() - 1]);
    }
    const A = csrFromTriplets(n, e);
    const sys = systemOfCsr(A, 1);
    const P = createIlu0(sys, recipe()) as Ilu0Preconditioner;
    const B = createBlockIlu0(sys, recipe()) as BlockIlu0Preconditioner;
    expect(P.setup().ok).toBe(true);
    expect(B.setup().ok).toBe(true);
    const fp = P.factorValues(), fb = B.factorValues();
    for (let i = 0; i < n; i++) {
      for (let k = A.rowPtr[i]; k < A.rowPtr[i + 1]; k++) {
        const want = A.colInd[k] === i ? 1 / fp[k] : fp[k];
        expect(Math.abs(fb[k] - want)).toBeLessThan(1e-13 * (1 + Math.abs(want)));
      }
    }
    const rhs = randomVector(n, 12);
    const z1 = new Float64Array(n), z2 = new Float64Array(n);
    P.apply(rhs, z1);
    B.apply(rhs, z2);
    expect(maxAbsDiff(z1, z2)).toBeLessThan(1e-12);
  });
});

describe('published ILU(0) + left-preconditioned GMRES example (J. Burkardt, MGMRES test output)', () => {
  it('5×5 matrix: ‖M⁻¹b‖ = 12.0830, then 3.67696, converged in 2 iterations', () => {
    // CSR 1-based in the source: ia = [1,4,5,7,8,10], ja = [1,4,5, 2, 1,3, 4, 2,5], a = [1,2,1, 2, 3,3, 4, 1,5]
    const A = { nRows: 5, nCols: 5, rowPtr: Int32Array.of(0, 3, 4, 6, 7, 9),
      colInd: Int32Array.of(0, 3, 4, 1, 0, 2, 3, 1, 4), values: Float64Array.of(1, 2, 1, 2, 3, 3, 4, 1, 5) };
    const b = Float64Array.of(14, 4, 12, 16, 27);
    const M = ilu0Of(A);
    const mb = new Float64Array(5);
    M.apply(b, mb);
    expect(Math.hypot(...mb)).toBeCloseTo(12.0830, 4);
    const x = new Float64Array(5);
    const res = gmres(csrOperator(A), b, x, {
      M, restart: 10, side: 'left', orthogonalization: 'mgs', rtol: 1e-12, atol: 0,
      maxIterations: 10, divergence: 1e10, relativeTo: 'rhs',
    });
    expect(res.iterations).toBe(2);
    expect(res.history[1] * res.referenceNorm).toBeCloseTo(3.67696, 4);
    expect(maxAbsDiff(x, [1, 2, 3, 4, 5])).toBeLessThan(1e-12);
  });
});

describe('block ILU(0) on a random block matrix, against its definition', () => {
  it('L·U reproduces A on the block pattern (derived: ILU(0) drops fill only outside the pattern)', () => {
    const r = rng(21);
    const nb = 12, bs = 3;
    const e: Array<[number, number, number]> = [];
    const pattern: Array<[number, number]> = [];
    for (let I = 0; I < nb; I++) for (let t = 0; t < 3; t++) pattern.push([I, Math.floor(r() * nb)]);
    // build via CSR triplets so block-ilu0 on csrToBsr sees dense blocks
    for (const [I, J] of [...pattern, ...Array.from({ length: nb }, (_, i) => [i, i] as [number, number])]) {
      for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) e.push([I * bs + i, J * bs + j, (I === J && i === j ? 8 : 0) + 2 * r() - 1]);
    }
    const A = csrFromTriplets(nb * bs, e);
    const bsr = csrToBsr(A, bs);
    const B = createBlockIlu0({ csr: A, bsr }, recipe()) as BlockIlu0Preconditioner;
    expect(B.setup().ok).toBe(true);
    // M = L·U; check (M v)_pattern = (A v) restricted... simpler: M⁻¹ A x ≈ x is not exact, but
    // L·U − A must vanish on every stored block. Form L and U densely from the factors.
    const n = nb * bs, f = B.factorValues(), bb = bs * bs;
    const L = new Float64Array(n * n), U = new Float64Array(n * n);
    for (let i = 0; i < n; i++) L[i * n + i] = 1;
    for (let I = 0; I < nb; I++) {
      for (let k = bsr.rowPtr[I]; k < bsr.rowPtr[I + 1]; k++) {
        const J = bsr.colInd[k];
        const blk = f.subarray(k * bb, (k + 1) * bb);
        let block = blk;
        if (J === I) {
          // the diagonal slot holds D⁻¹: invert back by solving with a tiny Gauss–Jordan
          block = invertSmall(blk, bs);
        }
        for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) {
          const v = block[i * bs + j];
          if (J < I) L[(I * bs + i) * n + J * bs + j] = v; else U[(I * bs + i) * n + J * bs + j] = v;
        }
      }
    }
    let worst = 0;
    for (let I = 0; I < nb; I++) {
      for (let k = bsr.rowPtr[I]; k < bsr.rowPtr[I + 1]; k++) {
        const J = bsr.colInd[k];
        for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) {
          const row = I * bs + i, col = J * bs + j;
          let s = 0;
          for (let q = 0; q < n; q++) s += L[row * n + q] * U[q * n + col];
          worst = Math.max(worst, Math.abs(s - bsr.values[k * bb + i * bs + j]));
        }
      }
    }
    expect(worst).toBeLessThan(1e-11);
  });
});

function invertSmall(a: Float64Array, n: number): Float64Array {
  const m = Array.from({ length: n }, (_, i) => [...Array.from(a.subarray(i * n, (i + 1) * n)), ...Array.from({ length: n }, (_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let i = c + 1; i < n; i++) if (Math.abs(m[i][c]) > Math.abs(m[p][c])) p = i;
    [m[c], m[p]] = [m[p], m[c]];
    const d = m[c][c];
    for (let j = 0; j < 2 * n; j++) m[c][j] /= d;
    for (let i = 0; i < n; i++) if (i !== c) { const f = m[i][c]; for (let j = 0; j < 2 * n; j++) m[i][j] -= f * m[c][j]; }
  }
  return Float64Array.from(m.flatMap((row) => row.slice(n)));
}

describe('block ILU(0) under a reordering equals block ILU(0) of the explicitly permuted matrix', () => {
  // Setup gathers each renumbered row from A on the fly instead of permuting a copy first; by
  // definition M(P A Pᵀ) = P M(A, ordered) Pᵀ, so applying either must give the same vector.
  for (const ordering of ['rcm', 'downstream', 'mdf'] as const) {
    it(`${ordering}: same apply as natural-order block ILU(0) on permuteBsr(A, perm), to rounding`, () => {
      const r = rng(33);
      const nb = 15, bs = 2;
      const e: Array<[number, number, number]> = [];
      const pairs: Array<[number, number]> = Array.from({ length: nb }, (_, i) => [i, i] as [number, number]);
      for (let I = 0; I < nb; I++) for (let t = 0; t < 3; t++) pairs.push([I, Math.floor(r() * nb)]);
      for (const [I, J] of pairs) {
        for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) e.push([I * bs + i, J * bs + j, (I === J && i === j ? 9 : 0) + 2 * r() - 1]);
      }
      const A = csrFromTriplets(nb * bs, e);
      const bsr = csrToBsr(A, bs);
      const B = createBlockIlu0({ csr: A, bsr }, recipe({ preconditioner: 'block-ilu0', ordering })) as BlockIlu0Preconditioner;
      expect(B.setup().ok).toBe(true);
      const perm = orderingPermutation(bsr, ordering, undefined);
      expect(perm).not.toBeNull();
      const pb = permuteBsr(bsr, perm!);
      const N = createBlockIlu0({ csr: bsrToCsr(pb), bsr: pb }, recipe({ preconditioner: 'block-ilu0' })) as BlockIlu0Preconditioner;
      expect(N.setup().ok).toBe(true);
      expect(maxAbsDiff(B.factorValues(), N.factorValues())).toBeLessThan(1e-13);
      expect(reorderedApplyDifference(B, N, perm!, bs, 5)).toBeLessThan(1e-13);
    });
  }
});
