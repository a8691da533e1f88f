import { describe, it, expect } from 'vitest';
import { Matrix, QrDecomposition } from 'ml-matrix';
import { bsrOperator, csrOperator } from '../../src/solvers/operator.js';
import { gmres } from '../../src/solvers/gmres.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import type { Bsr } from '../../src/sparse/types.js';
import { csrFromTriplets, maxAbsDiff, opts, toDense } from './helpers.js';

function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => { s = (Math.imul(s, 1664525) + 1013904223) >>> 0; return s / 4294967296 - 0.5; };
}

/** Seeded random BSR with non-symmetric blocks (so a transposed block cannot hide). */
function randomBsr(nb: number, bs: number, seed: number): Bsr {
  const r = rng(seed);
  const rowPtr = new Int32Array(nb + 1);
  const cols: number[] = [];
  for (let I = 0; I < nb; I++) {
    for (let J = 0; J < nb; J++) if (I === J || r() > 0.2) cols.push(J);
    rowPtr[I + 1] = cols.length;
  }
  const values = Float64Array.from({ length: cols.length * bs * bs }, () => r());
  return { nBlockRows: nb, nBlockCols: nb, bs, rowPtr, colInd: Int32Array.from(cols), values };
}

describe('matrix operators', () => {
  it('bsrOperator and csrOperator agree on seeded random non-symmetric blocks', () => {
    for (const bs of [1, 2, 3, 5]) {
      const a = randomBsr(9, bs, 11 + bs);
      const n = 9 * bs;
      const x = Float64Array.from({ length: n }, (_, i) => Math.sin(3 * i + 1));
      const y1 = new Float64Array(n), y2 = new Float64Array(n);
      bsrOperator(a).apply(x, y1);
      csrOperator(bsrToCsr(a)).apply(x, y2);
      expect(maxAbsDiff(y1, y2)).toBeLessThan(1e-13);
      // against a dense product (slow reference)
      const d = toDense(bsrToCsr(a)).mmul(Matrix.columnVector(Array.from(x))).to1DArray();
      expect(maxAbsDiff(y1, d)).toBeLessThan(1e-13);
    }
  });

  it('checks lengths and aliasing; x is never modified', () => {
    const op = bsrOperator(randomBsr(3, 2, 5));
    const x = new Float64Array(6).fill(1);
    expect(() => op.apply(x, x)).toThrow(/different arrays/);
    expect(() => op.apply(new Float64Array(5), new Float64Array(6))).toThrow(/x has length 5, expected 6/);
    expect(() => op.apply(x, new Float64Array(7))).toThrow(/y has length 7, expected 6/);
    op.apply(x, new Float64Array(6));
    expect(Array.from(x)).toEqual([1, 1, 1, 1, 1, 1]);
    expect(op.bytes.values).toBe(randomBsr(3, 2, 5).values.byteLength);
  });
});

describe('gmres against a slow reference', () => {
  it('after k steps x_k minimizes ‖b − A x‖ over the Krylov space K_k(A, b) (dense least squares)', () => {
    // Saad & Schultz 1986: GMRES iterate k is argmin over x0 + K_k(A, r0) of ‖b − A x‖₂. Reference: a
    // dense QR least-squares solve on the power basis [b, Ab, …, A^{k−1}b] (fine for small k).
    const r = rng(3);
    const n = 12;
    const t: Array<[number, number, number]> = [];
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (i === j || r() > 0.4) t.push([i, j, i === j ? 3 + r() : r()]);
    const A = csrFromTriplets(n, t);
    const Ad = toDense(A);
    const b = Float64Array.from({ length: n }, () => r());
    for (let k = 1; k <= 6; k++) {
      const K = Matrix.zeros(n, k);
      let v = Matrix.columnVector(Array.from(b));
      for (let c = 0; c < k; c++) { K.setColumn(c, v.to1DArray()); v = Ad.mmul(v); }
      const coef = new QrDecomposition(Ad.mmul(K)).solve(Matrix.columnVector(Array.from(b)));
      const xRef = K.mmul(coef).to1DArray();
      for (const orthogonalization of ['mgs', 'cgs2'] as const) {
        const x = new Float64Array(n);
        const res = gmres(csrOperator(A), b, x, opts({ restart: 10, maxIterations: k, rtol: 0, orthogonalization }));
        expect(res.iterations).toBe(k);
        expect(maxAbsDiff(x, xRef)).toBeLessThan(1e-9);
      }
    }
  });
});
