import { describe, expect, it } from 'vitest';
import { LuDecomposition, Matrix, inverse } from 'ml-matrix';
import {
  blockGemm, blockGemmSub, blockGemmSubNaive, blockMatVec, blockMatVecNaive, blockMatVecSub,
  blockMatVecSubNaive, luFactor, luFactorUnblocked, luInverse, luSolve, luSolveNaive, PIVOT_RTOL,
} from '../../src/precond/dense.js';
import { maxAbsDiff, rng } from './helpers.js';

const SIZES = [1, 2, 3, 4, 5, 6, 7, 8, 20, 40];

/** Random non-symmetric block at an offset inside a larger array (so offsets are exercised). */
function randomBlock(bs: number, seed: number, offset: number): Float64Array {
  const r = rng(seed);
  const a = new Float64Array(offset + bs * bs + 3);
  for (let p = 0; p < a.length; p++) a[p] = 2 * r() - 1;
  return a;
}

function toMatrix(a: Float64Array, o: number, bs: number): Matrix {
  const rows: number[][] = [];
  for (let i = 0; i < bs; i++) rows.push(Array.from(a.subarray(o + i * bs, o + (i + 1) * bs)));
  return new Matrix(rows);
}

describe('dense LU with partial pivoting (reference: ml-matrix LuDecomposition / inverse, JAMA algorithm)', () => {
  for (const bs of SIZES) {
    it(`bs = ${bs}: U and the solve agree with ml-matrix; inverse agrees with ml-matrix inverse`, () => {
      const o = 5;
      const a = randomBlock(bs, 100 + bs, o);
      const ref = toMatrix(a, o, bs);
      const lu = a.slice();
      const piv = new Int32Array(bs + 2);
      expect(luFactor(lu, o, bs, piv, 2, 1e-300)).toBe(-1);
      const mlLu = new LuDecomposition(ref);
      // same pivoting rule (largest |entry| in the column) → same U
      const U = mlLu.upperTriangularMatrix;
      for (let i = 0; i < bs; i++) for (let j = i; j < bs; j++) {
        expect(Math.abs(lu[o + i * bs + j] - U.get(i, j))).toBeLessThan(1e-12 * (1 + Math.abs(U.get(i, j))));
      }
      // solve A x = b
      const b = Float64Array.from({ length: bs }, (_, i) => Math.sin(i + 1));
      const x = new Float64Array(bs + 4);
      x.set(b, 4);
      luSolve(lu, o, piv, 2, bs, x, 4);
      const xr = mlLu.solve(Matrix.columnVector(Array.from(b)));
      for (let i = 0; i < bs; i++) expect(Math.abs(x[4 + i] - xr.get(i, 0))).toBeLessThan(1e-10 * (1 + Math.abs(xr.get(i, 0))));
      // explicit inverse
      const inv = new Float64Array(bs * bs + 7);
      luInverse(lu, o, piv, 2, bs, inv, 7 - 0);
      const invRef = inverse(ref);
      let err = 0, scale = 0;
      for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) {
        err = Math.max(err, Math.abs(inv[7 + i * bs + j] - invRef.get(i, j)));
        scale = Math.max(scale, Math.abs(invRef.get(i, j)));
      }
      expect(err).toBeLessThan(1e-10 * scale);
    });
  }

  it('a zero pivot stops the factorization and names the column', () => {
    // [[1, 2], [2, 4]] is singular: after one step the (1,1) pivot is exactly 0
    const a = Float64Array.of(1, 2, 2, 4);
    const piv = new Int32Array(2);
    expect(luFactor(a, 0, 2, piv, 0, PIVOT_RTOL * 4)).toBe(1);
    const z = new Float64Array(9);
    expect(luFactor(z, 0, 3, new Int32Array(3), 0, 0)).toBe(0);
  });

  it('a NaN entry is caught as a failed pivot, not propagated silently', () => {
    const a = Float64Array.of(NaN, 1, 1, 1);
    expect(luFactor(a, 0, 2, new Int32Array(2), 0, 0)).toBe(0);
  });
});

describe('blocked LU (bs ≥ 16 fast path) against the unblocked LU', () => {
  for (const bs of [16, 17, 19, 20, 35, 40]) {
    it(`bs = ${bs}: same pivots, same factors to rounding`, () => {
      const a = randomBlock(bs, 500 + bs, 0);
      const f1 = a.slice(), f2 = a.slice();
      const p1 = new Int32Array(bs), p2 = new Int32Array(bs);
      expect(luFactor(f1, 0, bs, p1, 0, 0)).toBe(-1);
      expect(luFactorUnblocked(f2, 0, bs, p2, 0, 0)).toBe(-1);
      expect(Array.from(p1)).toEqual(Array.from(p2));
      expect(maxAbsDiff(f1, f2)).toBeLessThan(1e-11);
    });
  }
  it('the blocked path stops at a zero pivot in a later panel and names its column', () => {
    // rank-deficient 18×18: row 17 = row 0 + row 1, so elimination leaves a zero in the last pivot
    const bs = 18;
    const a = randomBlock(bs, 77, 0).subarray(0, bs * bs).slice();
    for (let j = 0; j < bs; j++) a[17 * bs + j] = a[j] + a[bs + j];
    const norm = Math.max(...Array.from(a, Math.abs));
    expect(luFactor(a, 0, bs, new Int32Array(bs), 0, PIVOT_RTOL * norm)).toBe(17);
  });
});

describe('luSolve (two rows per pass) against luSolveNaive (one running sum per row)', () => {
  for (const bs of [1, 2, 3, 4, 5, 6, 7, 8, 13, 20, 29, 30, 31, 40]) {
    it(`bs = ${bs}: same solution up to rounding, entries outside the vector untouched`, () => {
      const o = 3;
      const lu = randomBlock(bs, 300 + bs, o);
      const piv = new Int32Array(bs + 1);
      expect(luFactor(lu, o, bs, piv, 1, 1e-300)).toBe(-1);
      const r = rng(500 + bs);
      const x0 = Float64Array.from({ length: bs + 6 }, () => 2 * r() - 1);
      const x1 = x0.slice(), x2 = x0.slice();
      luSolve(lu, o, piv, 1, bs, x1, 2);
      luSolveNaive(lu, o, piv, 1, bs, x2, 2);
      let scale = 0;
      for (let i = 0; i < bs; i++) scale = Math.max(scale, Math.abs(x2[2 + i]));
      expect(maxAbsDiff(x1, x2)).toBeLessThan(1e-12 * bs * (1 + scale));
      expect(x1[0]).toBe(x0[0]);
      expect(x1[1]).toBe(x0[1]);
      for (let p = bs + 2; p < x0.length; p++) expect(x1[p]).toBe(x0[p]);
    });
  }
});

describe('block kernels: fast paths against the naive twins (random non-symmetric blocks)', () => {
  for (const bs of [1, 2, 3, 4, 5, 6, 7, 8, 9, 13, 20, 30, 33, 35, 36, 40]) {
    it(`bs = ${bs}: mat-vec, mat-vec-subtract, C −= A·B and C = A·B`, () => {
      const r = rng(7 + bs);
      const A = Float64Array.from({ length: bs * bs + 3 }, () => 2 * r() - 1);
      const B = Float64Array.from({ length: bs * bs + 1 }, () => 2 * r() - 1);
      const x = Float64Array.from({ length: bs + 2 }, () => 2 * r() - 1);
      const y0 = Float64Array.from({ length: bs + 5 }, () => 2 * r() - 1);
      const y1 = y0.slice(), y2 = y0.slice();
      blockMatVec(A, 3, bs, x, 2, y1, 5);
      blockMatVecNaive(A, 3, bs, x, 2, y2, 5);
      expect(maxAbsDiff(y1, y2)).toBeLessThan(1e-13 * bs);
      const s1 = y0.slice(), s2 = y0.slice();
      blockMatVecSub(A, 3, bs, x, 2, s1, 5);
      blockMatVecSubNaive(A, 3, bs, x, 2, s2, 5);
      expect(maxAbsDiff(s1, s2)).toBeLessThan(1e-13 * bs);
      const C0 = Float64Array.from({ length: bs * bs + 2 }, () => 2 * r() - 1);
      const c1 = C0.slice(), c2 = C0.slice();
      blockGemmSub(c1, 2, A, 3, B, 1, bs);
      blockGemmSubNaive(c2, 2, A, 3, B, 1, bs);
      expect(maxAbsDiff(c1, c2)).toBeLessThan(1e-13 * bs);
      // C = A·B equals 0 − (−(A·B)): compare against the subtract kernel on a zero block
      const g = C0.slice();
      blockGemm(g, 2, A, 3, B, 1, bs);
      const z = new Float64Array(bs * bs);
      blockGemmSubNaive(z, 0, A, 3, B, 1, bs);
      for (let p = 0; p < bs * bs; p++) expect(Math.abs(g[2 + p] + z[p])).toBeLessThan(1e-13 * bs);
      expect(g[0]).toBe(C0[0]); // outside the block untouched
      expect(g[1]).toBe(C0[1]);
    });
  }
});
