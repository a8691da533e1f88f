import { describe, it, expect } from 'vitest';
import { bsrOperator, csrOperator } from '../../src/solvers/operator.js';
import { gmres } from '../../src/solvers/gmres.js';
import { bicgstab } from '../../src/solvers/bicgstab.js';
import { stationary } from '../../src/solvers/stationary.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { DEFAULT_RECIPE, type Recipe } from '../../src/solvers/recipe.js';
import { denseWork, sparseWork } from '../../src/solvers/work.js';
import type { Bsr } from '../../src/sparse/types.js';
import { bsrToCsr, csrToBsr } from '../../src/sparse/bsr.js';
import { mulberry32 } from '../../src/util/random.js';
import { csrFromTriplets, opts, tridiag } from './helpers.js';

// The work model is README "Work model"; every count below is derived by hand from it.

/** A 3-block-row BSR (bs = 2) with blocks (0,0) (0,1) (1,1) (2,1) (2,2): nb = 3, k = 5, n = 6. */
function threeBlockRows(): Bsr {
  const rowPtr = Int32Array.of(0, 2, 3, 5);
  const colInd = Int32Array.of(0, 1, 1, 1, 2);
  const values = new Float64Array(5 * 4);
  for (let i = 0; i < values.length; i++) values[i] = 1 + (i % 7);
  return { nBlockRows: 3, nBlockCols: 3, bs: 2, rowPtr, colInd, values };
}

function recipe(over: Partial<Recipe>): Recipe {
  return { ...DEFAULT_RECIPE, ...over };
}

describe('matrix products', () => {
  it('one BSR SpMV of a 3-block-row matrix', () => {
    // flops 2·k·bs² = 2·5·4 = 40; bytes k·bs²·8 + k·4 + (nb+1)·4 + 2·n·8 = 160 + 20 + 16 + 96 = 292
    const w = bsrOperator(threeBlockRows()).applyWork;
    expect(w).toEqual({ matvecs: 1, preconditionerApplies: 0, innerIterations: 0, flops: 40, bytes: 292 });
  });

  it('one CSR SpMV (the same matrix as scalars: n = 6, nnz = 20)', () => {
    // flops 2·nnz = 40; bytes nnz·(8 + 4) + (n+1)·4 + 2·n·8 = 240 + 28 + 96 = 364
    const w = csrOperator(bsrToCsr(threeBlockRows())).applyWork;
    expect(w).toEqual({ matvecs: 1, preconditionerApplies: 0, innerIterations: 0, flops: 40, bytes: 364 });
  });

  it('the BSR formula counts the multiply-adds the plain triple loop performs (seeded random patterns)', () => {
    const r = mulberry32(7);
    for (const bs of [1, 2, 3, 5]) {
      const nb = 6;
      const triplets: Array<[number, number, number]> = [];
      for (let i = 0; i < nb * bs; i++) for (let t = 0; t < 3; t++) triplets.push([i, Math.floor(r() * nb * bs), 1]);
      for (let i = 0; i < nb * bs; i++) triplets.push([i, i, 1]);
      const a = csrToBsr(csrFromTriplets(nb * bs, triplets), bs);
      let multiplyAdds = 0; // the reference loop: for each stored block, bs rows of bs multiply-adds
      for (let I = 0; I < nb; I++) for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) multiplyAdds += bs * bs;
      expect(sparseWork.bsrSpmv(nb, bs, a.colInd.length).flops).toBe(2 * multiplyAdds);
    }
  });
});

describe('dense block kernels (plain-loop counts)', () => {
  it('LU, LU solve, inverse for bs = 1, 2, 3', () => {
    // LU: Σ_k [1 + (bs−k−1) + 2(bs−k−1)²]: bs 1 → 1; bs 2 → (1+1+2) + 1 = 5; bs 3 → (1+2+8) + (1+1+2) + 1 = 16
    expect([1, 2, 3].map((b) => denseWork.luFlops(b))).toEqual([1, 5, 16]);
    // LU solve 2bs² − bs: 1, 6, 15
    expect([1, 2, 3].map((b) => denseWork.luSolve(b).flops)).toEqual([1, 6, 15]);
    // inverse 2bs²(bs−1) + bs² + bs: 2, 14, 48
    expect([1, 2, 3].map((b) => denseWork.inverse(b).flops)).toEqual([2, 14, 48]);
    expect(denseWork.gemmSub(3).flops).toBe(54); // 2·bs³
  });
});

describe('GMRES', () => {
  it('A = diag(1, 2), b = (1, 1): two iterations, every count by hand', () => {
    const A = csrOperator(csrFromTriplets(2, [[0, 0, 1], [1, 1, 2]]));
    const b = Float64Array.of(1, 1);
    const r = gmres(A, b, new Float64Array(2), opts({ restart: 30, ritz: false }));
    expect(r.iterations).toBe(2); // the Krylov space of a 2×2 matrix: happy breakdown at the second step
    expect(r.restarts).toBe(0);
    expect(r.cause).toBe('relative-target');
    // SpMV (n 2, nnz 2): 4 flops, 2·12 + 3·4 + 2·16 = 68 bytes. n = 2 below.
    // start: isZero scan 16 B; ‖b‖ 4 fl 16 B; residual = SpMV + subtraction (2 fl, 48 B) + norm (4 fl, 16 B); v₀ ← r copy 32 B
    //        flops 4 + 4 + 2 + 4 = 14; bytes 16 + 16 + 68 + 48 + 16 + 32 = 196
    // cycle: v₀ scaled: 2 fl, 32 B
    // j = 0: SpMV (4, 68), ‖w‖ (4, 16), dot (4, 32), axpyNorm2 (8, 48), scale (2, 32), Givens 0·6 + 7
    //        flops 29; bytes 196
    // j = 1: SpMV (4, 68), ‖w‖ (4, 16), dot (4, 32), one axpyDot (8, 64), axpyNorm2 (8, 48), happy (no scale),
    //        Givens 1·6 + 7 = 13; flops 41; bytes 228
    // end: back substitution k² = 4 fl; x += two basis vectors (2 axpy: 8 fl, 2·48 = 96 B); true residual (10 fl, 132 B);
    //        v₀ ← r copy 32 B
    // total flops 14 + 2 + 29 + 41 + 4 + 8 + 10 = 108; bytes 196 + 32 + 196 + 228 + 96 + 132 + 32 = 912
    expect(r.work.solve).toEqual({ matvecs: 4, preconditionerApplies: 0, innerIterations: 0, flops: 108, bytes: 912 });
    expect(r.work.setup).toEqual({ matvecs: 0, preconditionerApplies: 0, innerIterations: 0, flops: 0, bytes: 0 });
  });

  it('restarted: matvecs = iterations + restarts + 2 (start, one per iteration, one true residual per cycle)', () => {
    const n = 40;
    const a = tridiag(n, -1, 2.2, -1.1);
    const b = new Float64Array(n).fill(1);
    for (const restart of [3, 7, 40]) {
      const r = gmres(csrOperator(a), b, new Float64Array(n), opts({ restart, rtol: 1e-10, ritz: false }));
      expect(r.converged).toBe(true);
      if (restart < 10) expect(r.restarts).toBeGreaterThan(0);
      expect(r.work.solve.matvecs).toBe(r.iterations + r.restarts + 2);
    }
  });

  it('right preconditioning: one apply per iteration and one per cycle (the update); left: one more at the start and per cycle', () => {
    const n = 40;
    const a = tridiag(n, -1, 2.2, -1.1);
    const sys = { csr: a, bsr: csrToBsr(a, 1) };
    const b = new Float64Array(n).fill(1);
    for (const side of ['right', 'left'] as const) {
      const M = createPreconditioner(sys, recipe({ preconditioner: 'jacobi' }));
      expect(M.setup().ok).toBe(true);
      const r = gmres(csrOperator(a), b, new Float64Array(n), opts({ M, restart: 5, side, rtol: 1e-10, ritz: false }));
      expect(r.converged).toBe(true);
      const cycles = r.restarts + 1;
      // right: M per iteration + M on the cycle's combination; left: M on r₀, per iteration, on each recomputed residual
      const applies = side === 'right' ? r.iterations + cycles : 1 + r.iterations + cycles;
      expect(r.work.solve.preconditionerApplies).toBe(applies);
      expect(r.timing.preconditionerApplications).toBe(applies);
      // jacobi apply: n flops, 24n bytes each
      const ownFlops = r.work.solve.flops - applies * n;
      expect(ownFlops).toBeGreaterThan(0);
      expect(r.work.solve.matvecs).toBe(r.iterations + r.restarts + 2);
    }
  });
});

describe('BiCGStab and stationary iteration', () => {
  it('BiCGStab: two matvecs and two applies per full iteration', () => {
    const n = 30;
    const a = tridiag(n, -1, 2.5, -1.2);
    const sys = { csr: a, bsr: csrToBsr(a, 1) };
    const M = createPreconditioner(sys, recipe({ preconditioner: 'jacobi' }));
    expect(M.setup().ok).toBe(true);
    const b = new Float64Array(n).fill(1);
    const r = bicgstab(csrOperator(a), b, new Float64Array(n), opts({ M, rtol: 1e-10, maxIterations: 200 }));
    expect(r.converged).toBe(true);
    const w = r.work.solve;
    // matvecs: 1 (start) + 2 per full iteration (1 for a final half step) + 1 true residual per pass
    const half = 2 * r.iterations - w.preconditionerApplies; // 1 when the last iteration was a half step
    expect([0, 1]).toContain(half);
    expect(w.matvecs).toBe(1 + 2 * r.iterations - half + (r.restarts + 1));
    expect(w.preconditionerApplies).toBe(r.timing.preconditionerApplications);
  });

  it('BiCGStab with M = A⁻¹ (point Jacobi on a diagonal matrix): one half step, counts by hand', () => {
    const n = 4;
    const a = csrFromTriplets(n, [[0, 0, 2], [1, 1, 3], [2, 2, 4], [3, 3, 5]]);
    const M = createPreconditioner({ csr: a, bsr: csrToBsr(a, 1) }, recipe({ preconditioner: 'jacobi' }));
    expect(M.setup().ok).toBe(true);
    const r = bicgstab(csrOperator(a), Float64Array.of(1, 2, 3, 4), new Float64Array(n), opts({ M }));
    expect(r.iterations).toBe(1);
    // SpMV n 4 nnz 4: 8 fl, 4·12 + 5·4 + 64 = 132 B; jacobi apply 4 fl, 96 B.
    // start: ‖b‖ (8 fl, 32 B) + residual (8 + 4 + 8 fl; 132 + 96 + 32 B) = 28 fl, 292 B
    // pass: r̂ ← r (64 B), p, v ← 0 (2·32 B) = 128 B
    // iteration: (r̂, r) 8 fl 64 B; p update 16 fl 128 B; M p (4, 96); A p̂ (8, 132); (r̂, v) (8, 64);
    //   s = r − αv (8, 96); ‖s‖ (8, 32) → half step: x += α p̂ (8, 96), r ← s (64) → 68 fl, 772 B
    // end: true residual 20 fl, 260 B
    // total flops 28 + 68 + 20 = 116; bytes 292 + 128 + 772 + 260 = 1452; matvecs 3; applies 1
    expect(r.work.solve).toEqual({ matvecs: 3, preconditionerApplies: 1, innerIterations: 0, flops: 116, bytes: 1452 });
  });

  it('stationary: one matvec and one apply per iteration, plus the start residual', () => {
    const n = 20;
    const a = tridiag(n, -1, 4, -1);
    const M = createPreconditioner({ csr: a, bsr: csrToBsr(a, 1) }, recipe({ preconditioner: 'jacobi' }));
    expect(M.setup().ok).toBe(true);
    const r = stationary(csrOperator(a), new Float64Array(n).fill(1), new Float64Array(n), opts({ M, rtol: 1e-6 }));
    expect(r.converged).toBe(true);
    const it = r.iterations;
    const nnz = a.values.length;
    // per iteration: apply (n fl) + axpy (2n) + residual (2·nnz + n + 2n); start: ‖b‖ (2n) + residual
    const residual = 2 * nnz + 3 * n;
    expect(r.work.solve).toMatchObject({ matvecs: it + 1, preconditionerApplies: it });
    expect(r.work.solve.flops).toBe(2 * n + residual + it * (n + 2 * n + residual));
  });
});

describe('solveSystem: the setup phase', () => {
  it('block Jacobi (inverse blocks, bs 2, nb 3): setup flops nb·(LU + inverse) = 3·(5 + 14) = 57', () => {
    const bsr = threeBlockRows();
    for (let I = 0; I < 3; I++) { // make the diagonal blocks well conditioned
      const k = [0, 2, 4][I];
      bsr.values[k * 4] += 20; bsr.values[k * 4 + 3] += 20;
    }
    const sys = { bsr, csr: bsrToCsr(bsr) };
    const b = new Float64Array(6).fill(1);
    const { result } = solveSystem(sys, b, recipe({ preconditioner: 'block-jacobi', blockInverse: 'inverse' }));
    expect(result.work.setup.flops).toBe(57);
    expect(result.work.setup.matvecs).toBe(0);
    // each apply: 3 block mat-vecs of 2·bs² = 8 flops
    const applies = result.work.solve.preconditionerApplies;
    expect(applies).toBe(result.timing.preconditionerApplications);
    expect(applies).toBe(result.iterations + result.restarts + 1);
  });

  it('a setup failure still reports its setup work and the residual of x₀', () => {
    const a = csrFromTriplets(3, [[0, 0, 1], [0, 1, 1], [1, 0, 1], [1, 1, 1], [1, 2, 1], [2, 1, 1], [2, 2, 2]]);
    const { result } = solveSystem({ csr: a, bsr: csrToBsr(a, 1) }, new Float64Array(3).fill(1), recipe({ preconditioner: 'ilu0' }));
    expect(result.cause).toBe('preconditioner-error');
    expect(result.work.solve.matvecs).toBe(1);
    expect(result.work.setup.flops).toBeGreaterThan(0);
  });
});
