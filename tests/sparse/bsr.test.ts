import { describe, it, expect } from 'vitest';
import {
  bsrSpmv, bsrResidual, bsrMultiplyAdd, bsrSpmvKernel, bsrSpmvTiledKernel, bsrSpmvReferenceKernel,
  bsrToCsr, csrToBsr, bsrMemory, bsrBytes, bsrNnzBlocks, bsrBlockCount, bsrProblem,
} from '../../src/sparse/bsr.js';
import { csrSpmv, csrProblem } from '../../src/sparse/csr.js';
import type { Bsr, Csr } from '../../src/sparse/types.js';
import {
  rng, randomBsr, randomCsr, randomVector, bsrDense, csrDense, denseApply, maxAbsDiff, snapshot,
} from './random-sparse.js';

describe('bsr interface', () => {
  const a = randomBsr(rng(1), 4, 3, 2, 2);
  it('rejects wrong lengths and aliasing', () => {
    expect(() => bsrSpmv(a, new Float64Array(5), new Float64Array(8))).toThrow(/x has length 5, expected 6/);
    expect(() => bsrSpmv(a, new Float64Array(6), new Float64Array(6))).toThrow(/y has length 6, expected 8/);
    const sq = randomBsr(rng(2), 3, 3, 2, 2);
    const v = new Float64Array(6);
    expect(() => bsrSpmv(sq, v, v)).toThrow(/different arrays/);
    expect(() => bsrResidual(sq, v, new Float64Array(5), new Float64Array(6))).toThrow(/b has length 5/);
    expect(() => bsrMultiplyAdd(sq, v, 1, new Float64Array(5), new Float64Array(6))).toThrow(/z has length 5/);
  });
  it('leaves the matrix and x unmodified', () => {
    const x = randomVector(rng(3), 6);
    const before = snapshot({ a, x });
    bsrSpmv(a, x, new Float64Array(8));
    bsrResidual(a, x, new Float64Array(8).fill(1), new Float64Array(8));
    expect(snapshot({ a, x })).toBe(before);
  });
  it('counts bytes per buffer exactly', () => {
    const nb = bsrNnzBlocks(a);
    expect(bsrMemory(a)).toEqual({ rowPtr: 5 * 4, colInd: nb * 4, values: nb * 4 * 8 });
    expect(bsrBytes(a)).toBe(20 + nb * 4 + nb * 32);
  });
  it('bsrProblem accepts generated matrices and names defects', () => {
    expect(bsrProblem(a)).toBeUndefined();
    const bad: Bsr = { ...a, colInd: a.colInd.map(() => 0) };
    expect(bsrProblem(bad)).toMatch(/not ascending and unique|out of range/);
    expect(bsrProblem({ ...a, values: new Float64Array(3) })).toMatch(/values has length 3/);
  });
});

describe('bsr hand-computed product', () => {
  it('[[1 2 | 0 0],[3 4 | 0 5],[0 0 | 6 7],[0 0 | 8 9]] times (1, −1, 2, 3)', () => {
    const a: Bsr = {
      nBlockRows: 2, nBlockCols: 2, bs: 2,
      rowPtr: Int32Array.from([0, 2, 3]), colInd: Int32Array.from([0, 1, 1]),
      values: Float64Array.from([1, 2, 3, 4, 0, 0, 0, 5, 6, 7, 8, 9]),
    };
    const x = Float64Array.from([1, -1, 2, 3]);
    const y = new Float64Array(4);
    bsrSpmv(a, x, y);
    // row-major blocks: row 1 = 3·1 + 4·(−1) + 0·2 + 5·3 = 14 (a column-major reading would give 2+15)
    expect(Array.from(y)).toEqual([-1, 14, 33, 43]);
    const y2 = new Float64Array(4);
    csrSpmv(bsrToCsr(a), x, y2);
    expect(Array.from(y2)).toEqual(Array.from(y));
  });
});

describe('bsr products against a dense ml-matrix product (non-symmetric blocks)', () => {
  for (const bs of [1, 2, 3, 4, 5, 6, 10, 20]) {
    it(`bs ${bs}: square and rectangular, y = A x, r = b − A x, y += α A x`, () => {
      const r = rng(1000 + bs);
      const nb = bs >= 10 ? 7 : 23;
      for (const [m, n] of [[nb, nb], [nb, nb + 3], [nb + 2, Math.max(1, nb - 4)]]) {
        const a = randomBsr(r, m, n, bs, 4);
        const d = bsrDense(a);
        const x = randomVector(r, n * bs);
        const ref = denseApply(d, x);
        const tol = 1e-13 * Math.max(1, bs);
        const y = new Float64Array(m * bs);
        bsrSpmv(a, x, y);
        expect(maxAbsDiff(y, ref)).toBeLessThan(tol);
        const b = randomVector(r, m * bs);
        const res = new Float64Array(m * bs);
        bsrResidual(a, x, b, res);
        expect(maxAbsDiff(res, b.map((bi, i) => bi - ref[i]))).toBeLessThan(tol);
        const acc = b.slice();
        bsrMultiplyAdd(a, x, -0.5, acc, acc); // z aliases y: y += α A x
        expect(maxAbsDiff(acc, b.map((bi, i) => bi - 0.5 * ref[i]))).toBeLessThan(tol);
      }
    });
  }
  it('a transposed block would be caught: the product differs from Aᵀ-per-block', () => {
    const a = randomBsr(rng(5), 5, 5, 3, 3);
    const t: Bsr = { ...a, values: a.values.slice() };
    for (let k = 0; k < bsrNnzBlocks(a); k++) {
      for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) t.values[k * 9 + i * 3 + j] = a.values[k * 9 + j * 3 + i];
    }
    const x = randomVector(rng(6), 15);
    const y = new Float64Array(15), yt = new Float64Array(15);
    bsrSpmv(a, x, y);
    bsrSpmv(t, x, yt);
    expect(maxAbsDiff(y, yt)).toBeGreaterThan(1e-3);
  });
});

describe('fast paths against the generic kernels', () => {
  for (const bs of [1, 2, 3, 4, 5, 6, 7, 9, 10, 13, 30, 33, 36, 40]) {
    it(`bs ${bs}: dispatching kernel = tiled kernel = plain triple loop`, () => {
      const r = rng(77 + bs);
      const nb = bs >= 10 ? 9 : 60;
      const a = randomBsr(r, nb, nb, bs, 5);
      const x = randomVector(r, nb * bs);
      const y1 = new Float64Array(nb * bs).fill(NaN), y2 = y1.slice(), y3 = y1.slice();
      bsrSpmvKernel(nb, bs, a.rowPtr, a.colInd, a.values, x, y1);
      bsrSpmvTiledKernel(nb, bs, a.rowPtr, a.colInd, a.values, x, y2);
      bsrSpmvReferenceKernel(nb, bs, a.rowPtr, a.colInd, a.values, x, y3);
      // summation order differs between kernels: equal to rounding
      expect(maxAbsDiff(y1, y3)).toBeLessThan(1e-12 * bs);
      expect(maxAbsDiff(y2, y3)).toBeLessThan(1e-12 * bs);
    });
  }
  it('empty block rows give zero rows (y is overwritten, not accumulated)', () => {
    for (const bs of [1, 2, 3, 4, 6]) {
      const a: Bsr = { nBlockRows: 2, nBlockCols: 2, bs, rowPtr: Int32Array.from([0, 0, 1]), colInd: Int32Array.from([0]), values: new Float64Array(bs * bs).fill(1) };
      const y = new Float64Array(2 * bs).fill(7);
      bsrSpmv(a, new Float64Array(2 * bs).fill(1), y);
      expect(Array.from(y)).toEqual([...new Array(bs).fill(0), ...new Array(bs).fill(bs)]);
    }
  });
});

describe('CSR ↔ BSR conversions', () => {
  it('BSR → CSR → BSR is exact and keeps explicit zeros in the pattern', () => {
    for (const bs of [1, 2, 3, 5]) {
      const a = randomBsr(rng(10 + bs), 8, 6, bs, 3);
      a.values.fill(0, 0, bs * bs); // a whole stored block of zeros
      a.values[bs * bs + 0] = 0;
      const c = bsrToCsr(a);
      expect(csrProblem(c)).toBeUndefined();
      expect(c.rowPtr[c.nRows]).toBe(a.values.length);
      const back = csrToBsr(c, bs);
      expect(snapshot(back)).toBe(snapshot(a));
    }
  });
  it('CSR → BSR fills missing entries of a touched block with stored zeros, and matches the dense matrix', () => {
    const c = randomCsr(rng(4), 12, 18, 3);
    for (const bs of [1, 2, 3, 6]) {
      const b = csrToBsr(c, bs);
      expect(bsrProblem(b)).toBeUndefined();
      expect(b.nBlockCols).toBe(18 / bs);
      expect(bsrDense(b).to2DArray()).toEqual(csrDense(c).to2DArray());
      expect(bsrNnzBlocks(b)).toBe(bsrBlockCount(c, bs));
      // back to CSR: every block entry is now in the pattern
      expect(bsrToCsr(b).rowPtr[12]).toBe(bsrNnzBlocks(b) * bs * bs);
    }
  });
  it('accepts unsorted columns within a CSR row', () => {
    const sorted: Csr = {
      nRows: 4, nCols: 4, rowPtr: Int32Array.from([0, 3, 4, 6, 7]),
      colInd: Int32Array.from([0, 2, 3, 1, 0, 3, 2]), values: Float64Array.from([1, 2, 3, 4, 5, 6, 7]),
    };
    const unsorted: Csr = { ...sorted, colInd: Int32Array.from([3, 0, 2, 1, 3, 0, 2]), values: Float64Array.from([3, 1, 2, 4, 6, 5, 7]) };
    expect(snapshot(csrToBsr(unsorted, 2))).toBe(snapshot(csrToBsr(sorted, 2)));
  });
  it('rejects a block size that does not divide the size', () => {
    const c = randomCsr(rng(4), 6, 9, 2);
    expect(() => csrToBsr(c, 2)).toThrow(/6×9 is not divisible by block size 2/);
    expect(() => csrToBsr(c, 0)).toThrow(/not a positive integer/);
  });
});
