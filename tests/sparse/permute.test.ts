import { describe, it, expect } from 'vitest';
import { permuteBsr, permuteCsrBlocks, inversePermutation, permuteVectorBlocks, permutationProblem } from '../../src/sparse/permute.js';
import { bsrSpmv, bsrToCsr, csrToBsr, bsrProblem } from '../../src/sparse/bsr.js';
import { csrProblem } from '../../src/sparse/csr.js';
import type { Bsr } from '../../src/sparse/types.js';
import { rng, randomBsr, randomCsr, randomVector, bsrDense, csrDense, maxAbsDiff, snapshot } from './random-sparse.js';

function randomPerm(r: () => number, n: number): Int32Array {
  const p = Int32Array.from({ length: n }, (_, i) => i);
  for (let i = n - 1; i > 0; i--) { const j = Math.floor(r() * (i + 1)); [p[i], p[j]] = [p[j], p[i]]; }
  return p;
}

/** With b = P A Pᵀ: P x and max |(b (P x)) − P (A x)|, which is 0 up to rounding. */
function permutedProductGap(a: Bsr, b: Bsr, p: Int32Array, x: Float64Array): { px: Float64Array; gap: number } {
  const bs = a.bs, len = x.length;
  const px = new Float64Array(len), ax = new Float64Array(len), pax = new Float64Array(len), bpx = new Float64Array(len);
  permuteVectorBlocks(x, p, bs, px);
  bsrSpmv(a, x, ax);
  permuteVectorBlocks(ax, p, bs, pax);
  bsrSpmv(b, px, bpx);
  return { px, gap: maxAbsDiff(bpx, pax) };
}

describe('permutations', () => {
  it('inverse of the inverse is the permutation; perm[inv[i]] = i', () => {
    const p = randomPerm(rng(1), 50);
    const inv = inversePermutation(p);
    for (let i = 0; i < 50; i++) expect(p[inv[i]]).toBe(i);
    expect(Array.from(inversePermutation(inv))).toEqual(Array.from(p));
  });
  it('names what is wrong with a non-permutation', () => {
    expect(permutationProblem([0, 2, 2], 3)).toMatch(/entry 2 repeats 2/);
    expect(permutationProblem([0, 3, 1], 3)).toMatch(/entry 1 is 3/);
    expect(permutationProblem([0, 1], 3)).toMatch(/length 2, expected 3/);
    expect(() => inversePermutation(Int32Array.from([1, 1]))).toThrow(/repeats/);
  });

  for (const bs of [1, 2, 3, 5]) {
    it(`bs ${bs}: permuteBsr is P A Pᵀ entry by entry, and (PAPᵀ)(Px) = P(Ax)`, () => {
      const r = rng(20 + bs);
      const n = 17;
      const a = randomBsr(r, n, n, bs, 4);
      const before = snapshot(a);
      const p = randomPerm(r, n);
      const b = permuteBsr(a, p);
      expect(snapshot(a)).toBe(before);
      expect(bsrProblem(b)).toBeUndefined();
      const da = bsrDense(a), db = bsrDense(b);
      for (let I = 0; I < n; I++) for (let J = 0; J < n; J++) for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) {
        expect(db.get(I * bs + i, J * bs + j)).toBe(da.get(p[I] * bs + i, p[J] * bs + j));
      }
      const x = randomVector(r, n * bs);
      const { px, gap } = permutedProductGap(a, b, p, x);
      expect(gap).toBeLessThan(1e-13);
      // round trips: matrix and vector come back exactly
      const inv = inversePermutation(p);
      expect(snapshot(permuteBsr(b, inv))).toBe(before);
      const back = new Float64Array(n * bs);
      permuteVectorBlocks(px, inv, bs, back);
      expect(Array.from(back)).toEqual(Array.from(x));
    });
  }

  it('permuteCsrBlocks keeps the scalar pattern and agrees with the BSR route on dense blocks', () => {
    const r = rng(9);
    const c = randomCsr(r, 24, 24, 4); // blocks of 3 are not dense: the CSR route must not fill them
    const p = randomPerm(r, 8);
    const pc = permuteCsrBlocks(c, p, 3);
    expect(csrProblem(pc)).toBeUndefined();
    expect(pc.rowPtr[24]).toBe(c.rowPtr[24]);
    const viaBsr = bsrDense(permuteBsr(csrToBsr(c, 3), p));
    expect(csrDense(pc).to2DArray()).toEqual(viaBsr.to2DArray());
    const dense = bsrToCsr(csrToBsr(c, 3));
    expect(snapshot(permuteCsrBlocks(dense, p, 3))).toBe(snapshot(bsrToCsr(permuteBsr(csrToBsr(c, 3), p))));
  });

  it('validates its inputs', () => {
    const a = randomBsr(rng(3), 4, 4, 2, 2);
    expect(() => permuteBsr(a, Int32Array.from([0, 1, 2]))).toThrow(/permuteBsr: permutation has length 3, expected 4/);
    expect(() => permuteBsr(randomBsr(rng(3), 4, 5, 2, 2), Int32Array.from([0, 1, 2, 3]))).toThrow(/square/);
    const x = new Float64Array(8);
    expect(() => permuteVectorBlocks(x, Int32Array.from([0, 1, 2, 3]), 2, x)).toThrow(/different arrays/);
    expect(() => permuteVectorBlocks(x, Int32Array.from([0, 1, 2]), 2, new Float64Array(6))).toThrow(/x has length 8, expected 6/);
    expect(() => permuteCsrBlocks(randomCsr(rng(2), 6, 6, 2), Int32Array.from([0, 1]), 4)).toThrow(/does not divide/);
  });
});

describe('properties (fast-check)', () => {
  it('for any block matrix and permutation: permute then un-permute is exact, and the product commutes', async () => {
    const fc = await import('fast-check');
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 12 }), fc.integer({ min: 1, max: 5 }), fc.integer(), (n, bs, seed) => {
        const r = rng(seed);
        const a = randomBsr(r, n, n, bs, 3);
        const p = randomPerm(r, n);
        const b = permuteBsr(a, p);
        if (snapshot(permuteBsr(b, inversePermutation(p))) !== snapshot(a)) return false;
        return permutedProductGap(a, b, p, randomVector(r, n * bs)).gap < 1e-12;
      }),
      { numRuns: 200, seed: 20261201 },
    );
  });
});
