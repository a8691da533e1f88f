/**
 * Contracts of src/precond/dense.ts that the fast-against-naive tests of dense.test.ts do not pin
 * (found by mutation testing, README "Mutation testing"): the pivoting conventions, the
 * block-at-an-offset contract with decoys around the block, and the small reductions against
 * hand-computed values: largest entry, Frobenius
 * norm and the finiteness scan of a block stored at an offset, and the benchmark's flop formulas
 * (Golub & Van Loan, Matrix Computations, 4th ed. 2013, §1.1 and §3.2: gaxpy 2n², matrix product
 * 2n³, LU 2n³/3; the explicit inverse from the LU factors adds 4n³/3, §3.4 / common practice).
 */
import { describe, it, expect } from 'vitest';
import { LuDecomposition, Matrix } from 'ml-matrix';
import {
  allFinite, blockFrobenius, blockMaxAbs, denseFlops, luFactor, luFactorUnblocked, luInverse, luSolve,
} from '../../src/precond/dense.js';

describe('block reductions read exactly the block at its offset', () => {
  // 2×2 block [[2, −6], [9, 0]] at offset 2 (its largest entry is not the last), larger decoys outside
  const a = Float64Array.of(100, -200, 2, -6, 9, 0, 300, -400);
  it('max |entry| = 9, Frobenius norm = √(4 + 36 + 81) = 11', () => {
    expect(blockMaxAbs(a, 2, 2)).toBe(9);
    expect(blockFrobenius(a, 2, 2)).toBe(11);
    expect(blockMaxAbs(Float64Array.of(-7), 0, 1)).toBe(7); // a negative entry counts by its size
    expect(blockMaxAbs(new Float64Array(4), 0, 2)).toBe(0);
  });

  it('allFinite looks at a[o .. o+len) only and catches NaN, +Inf and −Inf', () => {
    const b = Float64Array.of(NaN, 1, 2, 3, Infinity);
    expect(allFinite(b, 1, 3)).toBe(true);
    expect(allFinite(b, 0, 2)).toBe(false);
    expect(allFinite(b, 2, 3)).toBe(false);
    expect(allFinite(Float64Array.of(1, -Infinity), 0, 2)).toBe(false);
    expect(allFinite(b, 1, 0)).toBe(true);
  });
});

describe('denseFlops (multiply and add counted separately)', () => {
  it('bs = 3: LU 18, inverse 54, product 54, mat-vec 18', () => {
    expect(denseFlops.lu(3)).toBe(18);
    expect(denseFlops.inverse(3)).toBe(54);
    expect(denseFlops.gemm(3)).toBe(54);
    expect(denseFlops.matVec(3)).toBe(18);
  });
});

describe('LU pivoting rules (LAPACK getrf conventions) and the block-at-an-offset contract', () => {
  // LAPACK's dgetf2 picks the pivot with idamax, which returns the FIRST index of the largest |entry|
  // (reference BLAS idamax documentation); a pivot fails here when |p| ≤ tiny (the doc of luFactor).
  it('ties in the pivot column keep the first row (bs = 2 unblocked and bs = 16 blocked)', () => {
    const a = Float64Array.of(1, 2, -1, 3); // |1| = |−1|
    const piv = new Int32Array(2);
    expect(luFactor(a, 0, 2, piv, 0, 0)).toBe(-1);
    expect(piv[0]).toBe(0);
    for (const fn of [luFactor, luFactorUnblocked]) {
      // 16×16: identity plus a −1 in column 0 at row 5, so rows 0 and 5 tie at step 0
      const bs = 16;
      const b = new Float64Array(bs * bs);
      for (let i = 0; i < bs; i++) b[i * bs + i] = 1;
      b[5 * bs] = -1;
      const p = new Int32Array(bs);
      expect(fn(b, 0, bs, p, 0, 0)).toBe(-1);
      expect(p[0]).toBe(0);
    }
  });

  it('a pivot equal to the threshold fails (|p| ≤ tiny), in both the blocked and the unblocked code', () => {
    expect(luFactor(Float64Array.of(0.5), 0, 1, new Int32Array(1), 0, 0.5)).toBe(0);
    for (const fn of [luFactor, luFactorUnblocked]) {
      const bs = 16;
      const b = new Float64Array(bs * bs);
      for (let i = 0; i < bs; i++) b[i * bs + i] = i === 9 ? 0.5 : 1;
      expect(fn(b, 0, bs, new Int32Array(bs), 0, 0.5)).toBe(9);
    }
  });

  it('LU and its solves read and write only their block: huge decoys around it change nothing', () => {
    // The same factorization with the block alone and between decoys of 1e300 (a decoy read as a
    // pivot candidate or written by an update would show). Reference: ml-matrix's LU solve.
    for (const bs of [5, 16, 19]) {
      const n2 = bs * bs;
      const alone = new Float64Array(n2);
      for (let p = 0; p < n2; p++) alone[p] = Math.sin(3 * p + bs) + (p % (bs + 1) === 0 ? 2 : 0);
      const original = alone.slice();
      const o = 7;
      const padded = new Float64Array(o + n2 + 2 * bs).fill(1e300);
      padded.set(original, o);
      const p1 = new Int32Array(bs), p2 = new Int32Array(bs + 3).fill(-7);
      expect(luFactor(alone, 0, bs, p1, 0, 0)).toBe(-1);
      expect(luFactor(padded, o, bs, p2, 3, 0)).toBe(-1);
      expect(Array.from(p2.subarray(3))).toEqual(Array.from(p1));
      expect(Array.from(p2.subarray(0, 3))).toEqual([-7, -7, -7]);
      for (let p = 0; p < n2; p++) expect(padded[o + p]).toBe(alone[p]);
      for (let p = 0; p < o; p++) expect(padded[p]).toBe(1e300);
      for (let p = o + n2; p < padded.length; p++) expect(padded[p]).toBe(1e300);
      // the solve and the inverse from the padded factors, also between decoys
      const rhs = Float64Array.from({ length: bs }, (_, i) => i + 1);
      const x = new Float64Array(bs + 4).fill(1e300);
      x.set(rhs, 2);
      luSolve(padded, o, p2, 3, bs, x, 2);
      const ref = new LuDecomposition(new Matrix(Array.from({ length: bs }, (_, i) => Array.from(original.subarray(i * bs, (i + 1) * bs)))))
        .solve(Matrix.columnVector(Array.from(rhs)));
      for (let i = 0; i < bs; i++) expect(Math.abs(x[2 + i] - ref.get(i, 0))).toBeLessThan(1e-9 * (1 + Math.abs(ref.get(i, 0))));
      expect([x[0], x[1], x[bs + 2], x[bs + 3]]).toEqual([1e300, 1e300, 1e300, 1e300]);
      const inv = new Float64Array(n2 + 6).fill(1e300);
      luInverse(padded, o, p2, 3, bs, inv, 3);
      for (let p = 0; p < 3; p++) expect(inv[p]).toBe(1e300);
      for (let p = 3 + n2; p < inv.length; p++) expect(inv[p]).toBe(1e300);
    }
  });
});
