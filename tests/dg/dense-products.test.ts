/**
 * The dense products of the nonlinear assembler (src/dg/dense-products.ts) against a plain triple
 * loop (fast against slow), and the tiled kernels against each other bit for bit: every kernel forms
 * each entry as the same sum over k in the same order, so addProductNT (4×4 tiles), addProductNT24
 * (2×4) and addProductNTPair (two products sharing B) must agree exactly, at sizes that exercise
 * every row and column remainder and at the assembler's sizes.
 */
import { describe, expect, it } from 'vitest';
import { addProductNT, addProductNT24, addProductNTPair, transposeTable } from '../../src/dg/dense-products.js';
import { mulberry32 } from '../../src/util/random.js';

const rand = (n: number, r: () => number): Float64Array => { const a = new Float64Array(n); for (let i = 0; i < n; i++) a[i] = r() - 0.5; return a; };

/** out[oo + r·ldo + c] += s Σ_k A[ao + r·K + k] B[bo + c·K + k], one entry at a time. */
function plain(A: Float64Array, ao: number, nr: number, B: Float64Array, bo: number, nc: number, K: number, s: number, out: Float64Array, oo: number, ldo: number): void {
  for (let r = 0; r < nr; r++) {
    for (let c = 0; c < nc; c++) {
      let t = 0;
      for (let k = 0; k < K; k++) t += A[ao + r * K + k]! * B[bo + c * K + k]!;
      out[oo + r * ldo + c] += s * t;
    }
  }
}

// (nr, nc, K): all remainders of 4 in rows and columns, K = 0 and 1, and the assembler's sizes
const sizes: [number, number, number][] = [];
for (const nr of [1, 2, 3, 4, 5, 6, 7, 10]) for (const nc of [1, 2, 3, 4, 5, 6, 7, 9]) sizes.push([nr, nc, nr % 3 === 0 ? 0 : (nr + nc) % 5 + 1]);
sizes.push([32, 20, 125], [32, 40, 20], [10, 40, 8], [16, 21, 25], [10, 6, 6], [10, 40, 6], [13, 11, 7]);

describe('dense products', () => {
  it('addProductNT and addProductNT24 equal the plain loop to round-off and each other bit for bit (offsets, ldo, scale)', () => {
    const r = mulberry32(7);
    for (const [nr, nc, K] of sizes) {
      const ao = 3, bo = 5, oo = 2, ldo = nc + 3;
      const A = rand(ao + nr * K, r), B = rand(bo + nc * K, r);
      const start = rand(oo + nr * ldo + 4, r);
      const o1 = start.slice(), o2 = start.slice(), o3 = start.slice();
      addProductNT(A, ao, nr, B, bo, nc, K, -0.75, o1, oo, ldo);
      addProductNT24(A, ao, nr, B, bo, nc, K, -0.75, o2, oo, ldo);
      plain(A, ao, nr, B, bo, nc, K, -0.75, o3, oo, ldo);
      expect(o1).toEqual(o2);
      let err = 0;
      for (let i = 0; i < o1.length; i++) err = Math.max(err, Math.abs(o1[i]! - o3[i]!));
      expect(err, `${nr}×${nc}×${K}`).toBeLessThan(1e-14 * Math.max(1, K));
      // entries outside the nr×nc window with stride ldo are untouched
      for (let i = 0; i < o1.length; i++) {
        const rr = Math.floor((i - oo) / ldo), cc = (i - oo) - rr * ldo;
        if (i < oo || rr >= nr || cc >= nc) expect(o1[i]).toBe(start[i]);
      }
    }
  });

  it('addProductNTPair equals two addProductNT calls bit for bit, also when both outputs are one array (and overlap)', () => {
    const r = mulberry32(11);
    for (const [nr, nc, K] of sizes) {
      const ldo = nc + 1;
      const A = rand(nr * K + 2, r), A2 = rand(nr * K + 2, r), B = rand(nc * K + 1, r);
      const len = 2 * nr * ldo + 8;
      const start = rand(len, r);
      for (const ooB of [nr * ldo + 3, 0]) { // disjoint, then the same place as outA (sums in order A then B)
        const got = start.slice(), want = start.slice();
        addProductNTPair(A, A2, 2, nr, B, 1, nc, K, 1.5, got, 0, -1, got, ooB, ldo);
        addProductNT(A, 2, nr, B, 1, nc, K, 1.5, want, 0, ldo);
        addProductNT(A2, 2, nr, B, 1, nc, K, -1, want, ooB, ldo);
        expect(got, `${nr}×${nc}×${K} ooB ${ooB}`).toEqual(want);
      }
      // two separate arrays
      const gA = start.slice(), gB = start.slice(), wA = start.slice(), wB = start.slice();
      addProductNTPair(A, A2, 0, nr, B, 0, nc, K, 1, gA, 1, 2, gB, 2, ldo);
      plain(A, 0, nr, B, 0, nc, K, 1, wA, 1, ldo);
      plain(A2, 0, nr, B, 0, nc, K, 2, wB, 2, ldo);
      for (let i = 0; i < len; i++) {
        expect(Math.abs(gA[i]! - wA[i]!)).toBeLessThan(1e-14 * Math.max(1, K));
        expect(Math.abs(gB[i]! - wB[i]!)).toBeLessThan(1e-14 * Math.max(1, K));
      }
    }
  });

  it('transposeTable: out[b·nq + q] = t[q·n + b]', () => {
    const t = Float64Array.from([1, 2, 3, 4, 5, 6]); // 2 points × 3
    expect(Array.from(transposeTable(t, 2, 3))).toEqual([1, 4, 2, 5, 3, 6]);
  });
});
