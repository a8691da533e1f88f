import { describe, it, expect } from 'vitest';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { DEFAULT_RECIPE, parseRecipe, type Recipe } from '../../src/solvers/recipe.js';
import { csrToBsr, bsrToCsr } from '../../src/sparse/bsr.js';
import type { Bsr, Csr } from '../../src/sparse/types.js';
import type { SystemMatrix } from '../../src/precond/types.js';
import { UserError } from '../../src/util/errors.js';
import { csrFromTriplets, csrMatVec, maxAbsDiff, tridiag } from './helpers.js';

function pointSystem(csr: Csr): SystemMatrix {
  return { csr, bsr: csrToBsr(csr, 1) };
}
function recipe(o: Partial<Recipe>): Recipe {
  return parseRecipe(o, 'test');
}

/**
 * Block lower bidiagonal matrix with nb block rows of size bs (each block row one time slab):
 * non-symmetric, diagonally dominant diagonal blocks, sub-diagonal coupling blocks. Seeded values.
 */
function slabBidiagonal(nb: number, bs: number, seed = 7): Bsr {
  let s = seed;
  const rand = () => { s = (s * 1103515245 + 12345) % 2147483648; return s / 2147483648 - 0.5; };
  const rowPtr = new Int32Array(nb + 1);
  const colInd: number[] = [];
  const values: number[] = [];
  for (let I = 0; I < nb; I++) {
    if (I > 0) {
      colInd.push(I - 1);
      for (let k = 0; k < bs * bs; k++) values.push(rand());
    }
    colInd.push(I);
    for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) values.push(i === j ? 4 + rand() : rand());
    rowPtr[I + 1] = colInd.length;
  }
  return { nBlockRows: nb, nBlockCols: nb, bs, rowPtr, colInd: Int32Array.from(colInd), values: Float64Array.from(values) };
}

describe('solveSystem with the project preconditioners', () => {
  it('reproduces the 5×5 ILU(0) + left GMRES example with the registry ilu0', () => {
    // Source: J. Burkardt, MGMRES test output (shared/references.md): ‖M⁻¹b‖ = 12.0830, 3.67696, ~2.5e-15, 2 iterations.
    const ia = [1, 4, 5, 7, 8, 10], ja = [1, 4, 5, 2, 1, 3, 4, 2, 5], av = [1, 2, 1, 2, 3, 3, 4, 1, 5];
    const t: Array<[number, number, number]> = [];
    for (let i = 0; i < 5; i++) for (let k = ia[i] - 1; k < ia[i + 1] - 1; k++) t.push([i, ja[k] - 1, av[k]]);
    const b = Float64Array.from([14, 4, 12, 16, 27]);
    const { result, x } = solveSystem(pointSystem(csrFromTriplets(5, t)), b,
      recipe({ krylov: 'gmres', side: 'left', preconditioner: 'ilu0' }));
    expect(result.iterations).toBe(2);
    expect(result.watched).toBe('left-preconditioned');
    expect(Math.abs(result.referenceNorm - 12.083)).toBeLessThan(0.5e-4);
    expect(Math.abs(result.history[1] * result.referenceNorm - 3.67696)).toBeLessThan(0.5e-5);
    expect(result.history[2] * result.referenceNorm).toBeLessThan(1e-13);
    expect(maxAbsDiff(x, [1, 2, 3, 4, 5])).toBeLessThan(1e-13);
  });

  it('stationary Jacobi and block-gs (bs = 1) iterations: ρ_J = cos πh, ρ_GS = cos² πh, n = 21', () => {
    // Strang §7.4; Young 1971 (shared/references.md): 0.9898214419 and 0.9797464868.
    const sys = pointSystem(tridiag(21, -1, 2, -1));
    const b = new Float64Array(21).fill(1);
    const factor = (r: Recipe, k1: number, k2: number) => {
      const { result } = solveSystem(sys, b, r);
      expect(result.iterations).toBe(k2);
      return (result.history[k2] / result.history[k1]) ** (1 / (k2 - k1));
    };
    const base = { krylov: 'none' as const, rtol: 0, maxIterations: 1200 };
    expect(Math.abs(factor(recipe({ ...base, preconditioner: 'jacobi' }), 600, 1200) - 0.9898214419)).toBeLessThan(1e-8);
    expect(Math.abs(factor(recipe({ ...base, preconditioner: 'block-gs', maxIterations: 600 }), 300, 600) - 0.9797464868)).toBeLessThan(1e-8);
    // SOR ω = 1.5 inside block-gs (outer step 1): Young's relation (μ + ω − 1)² = μω²ρ_J² (Young 1971)
    const rhoJ = Math.cos(Math.PI / 22), w = 1.5;
    const expected = ((w * rhoJ + Math.sqrt(w * w * rhoJ * rhoJ - 4 * (w - 1))) / 2) ** 2;
    expect(Math.abs(factor(recipe({ ...base, preconditioner: 'block-gs', omega: w, maxIterations: 400 }), 200, 400) - expected)).toBeLessThan(1e-6);
  });

  it('block lower bidiagonal slabs: block-gs and block-ilu0 are exact (1 iteration); block-jacobi needs ≤ nSlabs', () => {
    // Derived (shared/references.md, "Block lower bidiagonal"): forward block GS and block ILU(0) of a block
    // lower triangular matrix are its exact LU; with M = block diagonal, M⁻¹A = I + N with N nilpotent of
    // index ≤ nb, so the minimal polynomial has degree ≤ nb and GMRES ends within nb iterations.
    const nb = 6, bs = 3;
    const bsr = slabBidiagonal(nb, bs);
    const sys: SystemMatrix = { csr: bsrToCsr(bsr), bsr, slabOffsets: Int32Array.from([0, 1, 2, 3, 4, 5, 6]) };
    const xStar = Float64Array.from({ length: nb * bs }, (_, i) => 1 + 0.1 * i);
    const b = csrMatVec(sys.csr, xStar);
    for (const p of ['block-gs', 'block-ilu0'] as const) {
      const { result, x } = solveSystem(sys, b, recipe({ preconditioner: p, rtol: 1e-12 }));
      expect(result.iterations).toBe(1);
      expect(maxAbsDiff(x, xStar)).toBeLessThan(1e-10);
    }
    const { result } = solveSystem(sys, b, recipe({ preconditioner: 'block-jacobi', rtol: 1e-12 }));
    expect(result.converged).toBe(true);
    expect(result.iterations).toBeLessThanOrEqual(nb);
    const slab = solveSystem(sys, b, recipe({ krylov: 'fgmres', preconditioner: 'slab', rtol: 1e-10 }));
    expect(slab.result.converged).toBe(true);
    expect(slab.result.iterations).toBeLessThanOrEqual(2);
    expect(slab.result.preconditionerStats).toBeDefined();
  });

  it('fills memory from the operator actually used (BSR when bs > 1, else CSR) and the preconditioner', () => {
    const bsr = slabBidiagonal(5, 2);
    const sys: SystemMatrix = { csr: bsrToCsr(bsr), bsr };
    const b = new Float64Array(10).fill(1);
    const t0 = performance.now();
    const { result } = solveSystem(sys, b, recipe({ preconditioner: 'block-jacobi' }));
    const wall = (performance.now() - t0) / 1000;
    expect(result.memory.matrixBytes).toBe(bsr.rowPtr.byteLength + bsr.colInd.byteLength + bsr.values.byteLength);
    expect(result.memory.buffers.matrix.values).toBe(bsr.values.byteLength);
    // block-jacobi, inverse blocks: nb·bs² doubles of inverses + one bs² work block + bs Int32 pivots.
    expect(result.memory.preconditionerBytes).toBe(5 * 4 * 8 + 4 * 8 + 2 * 4);
    // GMRES, restart min(30, n) = 10: a full cycle reserves 11 vectors of length 10; the run holds
    // the min(iterations, 10) + 1 it wrote; the total is the sum of the named buffers.
    expect(result.memory.basisReservedBytes).toBe(11 * 10 * 8);
    expect(result.iterations).toBeGreaterThan(0);
    expect(result.memory.buffers.krylov.basis).toBe((Math.min(result.iterations, 10) + 1) * 10 * 8);
    expect(result.memory.krylovBytes).toBe(Object.values(result.memory.buffers.krylov).reduce((s, v) => s + v, 0));
    expect(result.memory.workBytes).toBe(Object.values(result.memory.buffers.work).reduce((s, v) => s + v, 0));
    // The peak RSS holds every counted buffer.
    const counted = result.memory.matrixBytes + result.memory.preconditionerBytes + result.memory.krylovBytes + result.memory.workBytes;
    expect(Number.isFinite(result.memory.peakBytes)).toBe(true);
    expect(result.memory.peakBytes).toBeGreaterThan(counted);
    // Timings: finite, non-negative, and within the wall time of the call.
    for (const s of [result.timing.setupSeconds, result.timing.solveSeconds]) {
      expect(Number.isFinite(s)).toBe(true);
      expect(s).toBeGreaterThanOrEqual(0);
    }
    expect(result.timing.setupSeconds + result.timing.solveSeconds).toBeLessThanOrEqual(wall);
    expect(result.preconditioner).toBe('block-jacobi');
    const point = solveSystem(pointSystem(tridiag(10, -1, 2, -1)), b, recipe({}));
    const c = tridiag(10, -1, 2, -1);
    expect(point.result.memory.matrixBytes).toBe(c.rowPtr.byteLength + c.colInd.byteLength + c.values.byteLength);
    expect(point.result.memory.preconditionerBytes).toBe(0);
  });

  it('the reported true residual equals ‖b − A x‖/‖b‖ recomputed from the returned x with a naive CSR loop', () => {
    // Independent of residualInto (src/solvers/operator.ts): the test's own loop over the CSR arrays.
    const bsr = slabBidiagonal(6, 3, 11);
    const sys: SystemMatrix = { csr: bsrToCsr(bsr), bsr };
    const b = Float64Array.from({ length: 18 }, (_, i) => Math.sin(i + 1));
    for (const r of [
      recipe({ preconditioner: 'block-jacobi', rtol: 1e-6 }),
      recipe({ krylov: 'bicgstab', preconditioner: 'ilu0', rtol: 1e-8 }),
      recipe({ krylov: 'gmres', side: 'left', preconditioner: 'block-gs', rtol: 1e-5 }),
      recipe({ krylov: 'gmres', preconditioner: 'none', maxIterations: 3 }), // stops early: a residual well above round-off
    ]) {
      const { result, x } = solveSystem(sys, b, r);
      const { rowPtr, colInd, values } = sys.csr;
      let rr = 0, bb = 0;
      for (let i = 0; i < 18; i++) {
        let s = b[i];
        for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) s -= values[k] * x[colInd[k]];
        rr += s * s;
        bb += b[i] * b[i];
      }
      const recomputed = Math.sqrt(rr / bb);
      expect(result.trueRelativeResidual).toBeGreaterThan(0);
      expect(Math.abs(result.trueRelativeResidual - recomputed)).toBeLessThan(1e-10 * recomputed + 1e-15);
    }
  });

  it('a zero pivot ends the run as preconditioner-error with the block row; a shift lets it run', () => {
    // ILU(0) pivot of row 1 is 1 − 1·1/1 = 0 (hand-factored); the matrix itself is nonsingular (det = −1)
    const A = csrFromTriplets(3, [[0, 0, 1], [0, 1, 1], [1, 0, 1], [1, 1, 1], [1, 2, 1], [2, 1, 1], [2, 2, 2]]);
    const b = Float64Array.from([1, 2, 3]);
    const { result, x } = solveSystem(pointSystem(A), b, recipe({ preconditioner: 'ilu0' }));
    expect(result.cause).toBe('preconditioner-error');
    expect(result.converged).toBe(false);
    expect(result.iterations).toBe(0);
    expect(result.history).toEqual([1]);
    expect(result.failure?.blockRow).toBe(1);
    expect(result.failure?.message).toMatch(/pivot/);
    expect(Array.from(x)).toEqual([0, 0, 0]);
    const shifted = solveSystem(pointSystem(A), b, recipe({ preconditioner: 'ilu0', shift: 0.5, maxIterations: 50 }));
    expect(shifted.result.cause).toBe('relative-target');
  });

  it('never modifies b or x0; rejects a wrong-length right-hand side with a UserError', () => {
    const sys = pointSystem(tridiag(8, -1, 2, -1));
    const b = Float64Array.from({ length: 8 }, (_, i) => i);
    const x0 = new Float64Array(8).fill(0.5);
    const bCopy = Float64Array.from(b), x0Copy = Float64Array.from(x0);
    const { result } = solveSystem(sys, b, recipe({ preconditioner: 'jacobi' }), { x0 });
    expect(result.converged).toBe(true);
    expect(Array.from(b)).toEqual(Array.from(bCopy));
    expect(Array.from(x0)).toEqual(Array.from(x0Copy));
    expect(() => solveSystem(sys, new Float64Array(3), DEFAULT_RECIPE)).toThrow(UserError);
  });
});
