// BSR product and transpose against dense products (fast against slow: ml-matrix on dense copies).
import { describe, expect, it } from 'vitest';
import { Matrix } from 'ml-matrix';
import { bsrMultiply, bsrTranspose } from '../../src/sparse/bsr-product.js';
import { bsrProblem } from '../../src/sparse/bsr.js';
import { bsrDense, randomBsr, rng } from './random-sparse.js';

function maxDiff(a: Matrix, b: Matrix): number {
  let m = 0;
  for (let i = 0; i < a.rows; i++) for (let j = 0; j < a.columns; j++) m = Math.max(m, Math.abs(a.get(i, j) - b.get(i, j)));
  return m;
}

describe('bsrMultiply', () => {
  for (const bs of [1, 2, 3, 5]) {
    it(`bs ${bs}: A·B of rectangular random non-symmetric blocks equals the dense product; pattern sorted and unique`, () => {
      const r = rng(10 + bs);
      const a = randomBsr(r, 7, 9, bs, 3, false);
      const b = randomBsr(r, 9, 6, bs, 2, false);
      const c = bsrMultiply(a, b);
      expect(bsrProblem(c)).toBeUndefined();
      expect(c.nBlockRows).toBe(7);
      expect(c.nBlockCols).toBe(6);
      expect(maxDiff(bsrDense(c), bsrDense(a).mmul(bsrDense(b)))).toBeLessThan(1e-13);
    });
  }

  it('a column map selects and renumbers columns: A·B·Q for a selection Q', () => {
    const r = rng(3);
    const a = randomBsr(r, 6, 8, 2, 3);
    const b = randomBsr(r, 8, 8, 2, 3);
    const keep = [1, 4, 5, 7];
    const colMap = new Int32Array(8).fill(-1);
    keep.forEach((j, k) => { colMap[j] = k; });
    const c = bsrMultiply(a, b, colMap, keep.length);
    expect(bsrProblem(c)).toBeUndefined();
    const full = bsrDense(a).mmul(bsrDense(b));
    const want = Matrix.zeros(12, 8);
    keep.forEach((j, k) => { for (let i = 0; i < 12; i++) for (let q = 0; q < 2; q++) want.set(i, 2 * k + q, full.get(i, 2 * j + q)); });
    expect(maxDiff(bsrDense(c), want)).toBeLessThan(1e-13);
  });

  it('mismatched shapes and block sizes throw', () => {
    const r = rng(4);
    expect(() => bsrMultiply(randomBsr(r, 3, 4, 2, 2), randomBsr(r, 3, 3, 2, 2))).toThrow(/inner dimensions/);
    expect(() => bsrMultiply(randomBsr(r, 3, 3, 2, 2), randomBsr(r, 3, 3, 1, 2))).toThrow(/block sizes/);
  });
});

describe('bsrTranspose', () => {
  it('equals the dense transpose (blocks transposed too), columns sorted', () => {
    const r = rng(5);
    const a = randomBsr(r, 5, 8, 3, 3, false);
    const t = bsrTranspose(a);
    expect(bsrProblem(t)).toBeUndefined();
    expect(maxDiff(bsrDense(t), bsrDense(a).transpose())).toBe(0);
  });
});
