/**
 * The small reductions of src/precond/dense.ts against hand-computed values: largest entry, Frobenius
 * norm and the finiteness scan of a block stored at an offset, and the benchmark's flop formulas
 * (Golub & Van Loan, Matrix Computations, 4th ed. 2013, §1.1 and §3.2: gaxpy 2n², matrix product
 * 2n³, LU 2n³/3; the explicit inverse from the LU factors adds 4n³/3, §3.4 / common practice).
 */
import { describe, it, expect } from 'vitest';
import { allFinite, blockFrobenius, blockMaxAbs, denseFlops } from '../../src/precond/dense.js';

describe('block reductions read exactly the block at its offset', () => {
  // 2×2 block [[3, −4], [0, 12]] at offset 2, with larger decoys outside it
  const a = Float64Array.of(100, -200, 3, -4, 0, 12, 300, -400);
  it('max |entry| = 12, Frobenius norm = √(9 + 16 + 144) = 13', () => {
    expect(blockMaxAbs(a, 2, 2)).toBe(12);
    expect(blockFrobenius(a, 2, 2)).toBe(13);
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
