import { describe, expect, it } from 'vitest';
import { axpyDot, axpyNorm2, dot, norm2 } from '../../src/solvers/vector.js';
import { maxAbsDiff, randomVector } from '../precond/helpers.js';

// One running sum, the plain form the unrolled kernels (four partial sums) must agree with.
function dotPlain(n: number, x: Float64Array, y: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += x[i] * y[i];
  return s;
}

describe('vector kernels with four partial sums against one running sum', () => {
  for (const n of [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 31, 1000]) {
    it(`n = ${n}: dot, norm2, axpyDot, axpyNorm2`, () => {
      // one entry past n in every array: the kernels must neither read it into the sum nor write it
      const x = randomVector(n + 1, 11 + n), y = randomVector(n + 1, 23 + n), z = randomVector(n + 1, 37 + n);
      x[n] = 1e6; y[n] = 1e6; z[n] = 1e6;
      const tol = 1e-14 * (n + 1);
      expect(Math.abs(dot(n, x, y) - dotPlain(n, x, y))).toBeLessThan(tol);
      expect(Math.abs(norm2(n, x) - Math.sqrt(dotPlain(n, x, x)))).toBeLessThan(tol);
      const a = -0.75;
      const yRef = y.slice();
      for (let i = 0; i < n; i++) yRef[i] += a * x[i];
      const y1 = y.slice();
      expect(Math.abs(axpyDot(n, a, x, y1, z) - dotPlain(n, yRef, z))).toBeLessThan(tol);
      expect(maxAbsDiff(y1, yRef)).toBe(0); // the update itself is exact, element by element
      const y2 = y.slice();
      expect(Math.abs(axpyNorm2(n, a, x, y2) - Math.sqrt(dotPlain(n, yRef, yRef)))).toBeLessThan(tol);
      expect(maxAbsDiff(y2, yRef)).toBe(0);
      expect(y1[n]).toBe(1e6);
    });
  }
  it('a NaN anywhere in the vector makes norm2 and axpyNorm2 non-finite', () => {
    for (const at of [0, 1, 2, 3, 4, 6]) {
      const x = randomVector(7, 5);
      x[at] = NaN;
      expect(Number.isFinite(norm2(7, x))).toBe(false);
      expect(Number.isFinite(axpyNorm2(7, 1, randomVector(7, 6), x))).toBe(false);
    }
  });
});
