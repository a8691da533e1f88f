import { describe, it, expect } from 'vitest';
import {
  csrSpmv, csrResidual, csrMultiplyAdd, csrMemory, csrBytes, csrNnz, csrTranspose, csrProblem,
} from '../../src/sparse/csr.js';
import type { Csr } from '../../src/sparse/types.js';
import { rng, randomCsr, randomVector, csrDense, denseApply, maxAbsDiff, snapshot } from './random-sparse.js';

describe('csr interface', () => {
  const a = randomCsr(rng(1), 7, 5, 3);
  it('rejects wrong lengths and aliasing with a message naming the argument', () => {
    expect(() => csrSpmv(a, new Float64Array(4), new Float64Array(7))).toThrow(/x has length 4, expected 5/);
    expect(() => csrSpmv(a, new Float64Array(5), new Float64Array(5))).toThrow(/y has length 5, expected 7/);
    const sq = randomCsr(rng(2), 4, 4, 2);
    const v = new Float64Array(4);
    expect(() => csrSpmv(sq, v, v)).toThrow(/different arrays/);
    expect(() => csrResidual(sq, v, new Float64Array(3), new Float64Array(4))).toThrow(/b has length 3/);
    expect(() => csrMultiplyAdd(sq, v, 1, new Float64Array(3), new Float64Array(4))).toThrow(/z has length 3/);
  });
  it('leaves the matrix and x unmodified', () => {
    const x = randomVector(rng(3), 5);
    const before = snapshot({ a, x });
    csrSpmv(a, x, new Float64Array(7));
    csrResidual(a, x, new Float64Array(7).fill(1), new Float64Array(7));
    expect(snapshot({ a, x })).toBe(before);
  });
  it('counts bytes per buffer exactly', () => {
    const nnz = csrNnz(a);
    expect(csrMemory(a)).toEqual({ rowPtr: 8 * 4, colInd: nnz * 4, values: nnz * 8 });
    expect(csrBytes(a)).toBe(32 + nnz * 12);
  });
});

describe('csr products against a dense ml-matrix product', () => {
  for (const [m, n] of [[1, 1], [13, 13], [40, 17], [9, 31]] as const) {
    it(`${m}×${n}: y = A x, r = b − A x, y += 2 A x`, () => {
      const r = rng(100 + m * n);
      const a = randomCsr(r, m, n, 4);
      const d = csrDense(a);
      const x = randomVector(r, n);
      const ref = denseApply(d, x);
      const y = new Float64Array(m);
      csrSpmv(a, x, y);
      expect(maxAbsDiff(y, ref)).toBeLessThan(1e-13);
      const b = randomVector(r, m);
      const res = new Float64Array(m);
      csrResidual(a, x, b, res);
      expect(maxAbsDiff(res, b.map((bi, i) => bi - ref[i]))).toBeLessThan(1e-13);
      // r may be b itself (in place)
      const b2 = b.slice();
      csrResidual(a, x, b2, b2);
      expect(maxAbsDiff(b2, res)).toBe(0);
      const acc = b.slice();
      csrMultiplyAdd(a, x, 2, acc, acc);
      expect(maxAbsDiff(acc, b.map((bi, i) => bi + 2 * ref[i]))).toBeLessThan(1e-13);
    });
  }
});

describe('csr transpose and structure check', () => {
  it('transpose equals the dense transpose and is sorted', () => {
    const a = randomCsr(rng(7), 12, 20, 5);
    const t = csrTranspose(a);
    expect(t.nRows).toBe(20);
    expect(csrProblem(t)).toBeUndefined();
    expect(csrDense(t).to2DArray()).toEqual(csrDense(a).transpose().to2DArray());
  });
  it('names the first structural problem', () => {
    const ok: Csr = { nRows: 2, nCols: 2, rowPtr: Int32Array.from([0, 1, 3]), colInd: Int32Array.from([0, 0, 1]), values: new Float64Array(3) };
    expect(csrProblem(ok)).toBeUndefined();
    expect(csrProblem({ ...ok, colInd: Int32Array.from([0, 1, 0]) })).toMatch(/row 1: columns not ascending/);
    expect(csrProblem({ ...ok, colInd: Int32Array.from([0, 0, 2]) })).toMatch(/column 2 out of range/);
    expect(csrProblem({ ...ok, rowPtr: Int32Array.from([0, 3]) })).toMatch(/rowPtr has length 2/);
  });
});
