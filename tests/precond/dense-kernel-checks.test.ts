/**
 * Contracts of the solve, inverse, mat-vec and product kernels of src/precond/dense.ts (lines
 * 179–539) that dense.test.ts does not pin (found by mutation testing, README "Mutation testing"):
 *  - each kernel, fast and naive twin, writes exactly its output range: decoys on both sides of
 *    every output stay untouched and an output prefilled with garbage is fully overwritten
 *    (luInverse, blockGemm), for block sizes on every fast path (1–3, three rows per pass 6–33,
 *    two rows per pass, odd and even);
 *  - hand-computed values: a 2×2 solve and inverse whose factors and results are exact in binary;
 *  - the mat-vec fast paths for bs 1–3 add in the naive twin's order (left to right), so they
 *    agree with it exactly;
 *  - the hand-over to WebAssembly when the arrays live in kernel memory: the solves and mat-vecs
 *    from bs 4 up only, the inverse and C = A·B for every size, C −= A·B from bs 2 up (bs 1 is a
 *    single multiply-subtract, done in TypeScript).
 */
import { describe, expect, it } from 'vitest';
import { inverse, Matrix, solve as mlSolve } from 'ml-matrix';
import {
  blockGemm, blockGemmSub, blockGemmSubNaive, blockMatVec, blockMatVecNaive, blockMatVecSub, blockMatVecSubNaive,
  luFactor, luInverse, luSolve, luSolveNaive,
} from '../../src/precond/dense.js';
import { rng } from './helpers.js';
import { firstDifference, inArena, withArena } from '../kernels/helpers.js';

const DECOY = 12345.5; // a value no kernel result here can take
const PAD = 40; // decoys before and after each range (more than one block row of the largest bs below)
const SIZES = [1, 2, 3, 4, 5, 6, 7, 8, 9, 12, 13, 30, 33, 36];

/** An array of PAD decoys, `len` values from fill(), PAD decoys; the range starts at PAD. */
function padded(len: number, fill: (p: number) => number): Float64Array {
  const a = new Float64Array(PAD + len + PAD).fill(DECOY);
  for (let p = 0; p < len; p++) a[PAD + p] = fill(p);
  return a;
}

function expectDecoys(a: Float64Array, len: number): void {
  for (let p = 0; p < PAD; p++) expect(a[p]).toBe(DECOY);
  for (let p = PAD + len; p < a.length; p++) expect(a[p]).toBe(DECOY);
}

function toMatrix(a: Float64Array, o: number, bs: number): Matrix {
  const rows: number[][] = [];
  for (let i = 0; i < bs; i++) rows.push(Array.from(a.subarray(o + i * bs, o + (i + 1) * bs)));
  return new Matrix(rows);
}

/** Max |a[ao+p] − b[bo+p]| over len entries, relative to max |b|. */
function relDiff(a: Float64Array, ao: number, b: ArrayLike<number>, bo: number, len: number): number {
  let d = 0, s = 0;
  for (let p = 0; p < len; p++) { d = Math.max(d, Math.abs(a[ao + p] - b[bo + p])); s = Math.max(s, Math.abs(b[bo + p])); }
  return d / Math.max(s, 1);
}

describe('dense kernels write exactly their output range (decoys on both sides)', () => {
  for (const bs of SIZES) {
    it(`bs = ${bs}: mat-vecs, products, solves and the inverse, fast and naive`, () => {
      const r = rng(900 + bs);
      const bb = bs * bs;
      const A = padded(bb, () => 2 * r() - 1), B = padded(bb, () => 2 * r() - 1);
      for (let i = 0; i < bs; i++) A[PAD + i * bs + i] += bs; // well conditioned for the LU below
      const x = padded(bs, () => 2 * r() - 1);
      const y0 = Float64Array.from({ length: bs }, () => 2 * r() - 1);
      const ref = Array.from({ length: bs }, (_, i) => { let s = 0; for (let j = 0; j < bs; j++) s += A[PAD + i * bs + j] * x[PAD + j]; return s; });

      for (const mv of [blockMatVec, blockMatVecNaive]) {
        const y = padded(bs, () => 99);
        mv(A, PAD, bs, x, PAD, y, PAD);
        expect(relDiff(y, PAD, ref, 0, bs)).toBeLessThan(1e-14 * bs);
        expectDecoys(y, bs);
      }
      for (const mvs of [blockMatVecSub, blockMatVecSubNaive]) {
        const y = padded(bs, (p) => y0[p]);
        mvs(A, PAD, bs, x, PAD, y, PAD);
        expect(relDiff(y, PAD, y0.map((v, i) => v - ref[i]), 0, bs)).toBeLessThan(1e-14 * bs);
        expectDecoys(y, bs);
      }
      const AB = toMatrix(A, PAD, bs).mmul(toMatrix(B, PAD, bs)).to1DArray();
      const C0 = Float64Array.from({ length: bb }, () => 2 * r() - 1);
      for (const gs of [blockGemmSub, blockGemmSubNaive]) {
        const c = padded(bb, (p) => C0[p]);
        gs(c, PAD, A, PAD, B, PAD, bs);
        expect(relDiff(c, PAD, Array.from(C0, (v, p) => v - AB[p]), 0, bb)).toBeLessThan(1e-14 * bs);
        expectDecoys(c, bb);
      }
      const g = padded(bb, () => 77); // garbage in the output: C = A·B overwrites it
      blockGemm(g, PAD, A, PAD, B, PAD, bs);
      expect(relDiff(g, PAD, AB, 0, bb)).toBeLessThan(1e-14 * bs);
      expectDecoys(g, bb);

      const lu = A.slice(), piv = new Int32Array(bs);
      expect(luFactor(lu, PAD, bs, piv, 0, 0)).toBe(-1);
      const inv = padded(bb, () => 77); // garbage in the output: the inverse overwrites it
      luInverse(lu, PAD, piv, 0, bs, inv, PAD);
      expect(relDiff(inv, PAD, inverse(toMatrix(A, PAD, bs)).to1DArray(), 0, bb)).toBeLessThan(1e-12);
      expectDecoys(inv, bb);
      const want = mlSolve(toMatrix(A, PAD, bs), Matrix.columnVector(Array.from(y0))).to1DArray();
      for (const solve of [luSolve, luSolveNaive]) {
        const v = padded(bs, (p) => y0[p]);
        solve(lu, PAD, piv, 0, bs, v, PAD);
        expect(relDiff(v, PAD, want, 0, bs)).toBeLessThan(1e-12);
        expectDecoys(v, bs);
      }
    });
  }
});

describe('hand-computed 2×2 solve and inverse (every step exact in binary)', () => {
  // A = [[1, 1], [2, 1]]: the pivot is row 1 (|2| > |1|), l = 1/2, u = [[2, 1], [0, 1/2]];
  // A⁻¹ = [[−1, 1], [2, −1]]; A x = (3, 4) gives x = (1, 2)
  it('factors, solve (fast and naive) and inverse into a garbage-filled output', () => {
    const lu = Float64Array.of(1, 1, 2, 1), piv = new Int32Array(2);
    expect(luFactor(lu, 0, 2, piv, 0, 0)).toBe(-1);
    expect(Array.from(piv)).toEqual([1, 1]);
    expect(Array.from(lu)).toEqual([2, 1, 0.5, 0.5]);
    for (const solve of [luSolve, luSolveNaive]) {
      const x = Float64Array.of(3, 4);
      solve(lu, 0, piv, 0, 2, x, 0);
      expect(Array.from(x)).toEqual([1, 2]);
    }
    const inv = Float64Array.of(5, 5, 5, 5, 5);
    luInverse(lu, 0, piv, 0, 2, inv, 0);
    expect(Array.from(inv)).toEqual([-1, 1, 2, -1, 5]);
  });
});

describe('mat-vec fast paths for bs 1–3 sum left to right like the naive twins', () => {
  for (const bs of [1, 2, 3]) {
    it(`bs = ${bs}: equal to blockMatVecNaive and blockMatVecSubNaive exactly`, () => {
      for (let seed = 0; seed < 50; seed++) {
        const r = rng(seed * 10 + bs);
        // entries of mixed magnitude so a different summation order rounds differently
        const v = (): number => (2 * r() - 1) * 10 ** Math.floor(8 * r() - 4);
        const a = Float64Array.from({ length: bs * bs }, v), x = Float64Array.from({ length: bs }, v);
        const y0 = Float64Array.from({ length: bs }, v);
        const y1 = new Float64Array(bs), y2 = new Float64Array(bs);
        blockMatVec(a, 0, bs, x, 0, y1, 0);
        blockMatVecNaive(a, 0, bs, x, 0, y2, 0);
        for (let i = 0; i < bs; i++) expect(y1[i] === y2[i]).toBe(true);
        const s1 = y0.slice(), s2 = y0.slice();
        blockMatVecSub(a, 0, bs, x, 0, s1, 0);
        blockMatVecSubNaive(a, 0, bs, x, 0, s2, 0);
        for (let i = 0; i < bs; i++) expect(s1[i] === s2[i]).toBe(true);
      }
    });
  }
});

describe('hand-over to WebAssembly when the arrays live in kernel memory', () => {
  /** Kernel calls handed over while fn runs, with every array of the call in kernel memory. */
  function handOvers(bs: number, call: (k: {
    a: Float64Array; b: Float64Array; c: Float64Array; x: Float64Array; y: Float64Array; lu: Float64Array; piv: Int32Array;
  }) => void): number {
    return withArena(1 << 20, (arena) => {
      const bb = bs * bs;
      const a0 = new Float64Array(bb);
      for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) a0[i * bs + j] = i === j ? 4 : 1 / (1 + i + j);
      const lu0 = a0.slice(), piv0 = new Int32Array(bs);
      expect(luFactor(lu0, 0, bs, piv0, 0, 0)).toBe(-1);
      const k = {
        a: inArena(arena, a0), b: inArena(arena, a0), c: inArena(arena, new Float64Array(bb)),
        x: inArena(arena, new Float64Array(bs).fill(1)), y: inArena(arena, new Float64Array(bs)),
        lu: inArena(arena, lu0), piv: inArena(arena, piv0),
      };
      const before = arena.dispatched;
      call(k);
      return arena.dispatched - before;
    });
  }

  it('luSolve, blockMatVec and blockMatVecSub: bs 3 in TypeScript, bs 4 and 5 in WebAssembly', () => {
    for (const [bs, want] of [[3, 0], [4, 1], [5, 1]] as const) {
      expect(handOvers(bs, (k) => luSolve(k.lu, 0, k.piv, 0, bs, k.x, 0))).toBe(want);
      expect(handOvers(bs, (k) => blockMatVec(k.a, 0, bs, k.x, 0, k.y, 0))).toBe(want);
      expect(handOvers(bs, (k) => blockMatVecSub(k.a, 0, bs, k.x, 0, k.y, 0))).toBe(want);
    }
  });

  it('luInverse and blockGemm at every size; blockGemmSub from bs 2 up', () => {
    for (const bs of [1, 2, 3, 4]) {
      expect(handOvers(bs, (k) => luInverse(k.lu, 0, k.piv, 0, bs, k.c, 0))).toBe(1);
      expect(handOvers(bs, (k) => blockGemm(k.c, 0, k.a, 0, k.b, 0, bs))).toBe(1);
      expect(handOvers(bs, (k) => blockGemmSub(k.c, 0, k.a, 0, k.b, 0, bs))).toBe(bs === 1 ? 0 : 1);
    }
  });
});

describe('mat-vecs above the three-rows-per-pass range, bit for bit against WebAssembly', () => {
  // bs 39: a multiple of 3 past 33, so two rows per pass with a last single row (its one running
  // sum rounds differently from a three-row pass); the WebAssembly twin makes the same choice
  it('bs = 39: y = A x and y −= A x agree exactly with the kernels in kernel memory', () => {
    const bs = 39, r = rng(3939);
    const a = Float64Array.from({ length: bs * bs }, () => 2 * r() - 1);
    const x = Float64Array.from({ length: bs }, () => 2 * r() - 1), y0 = Float64Array.from({ length: bs }, () => 2 * r() - 1);
    const mv = new Float64Array(bs), mvs = y0.slice();
    blockMatVec(a, 0, bs, x, 0, mv, 0);
    blockMatVecSub(a, 0, bs, x, 0, mvs, 0);
    withArena(1 << 20, (arena) => {
      const A = inArena(arena, a), X = inArena(arena, x);
      const MV = inArena(arena, new Float64Array(bs)), MVS = inArena(arena, y0);
      const before = arena.dispatched;
      blockMatVec(A, 0, bs, X, 0, MV, 0);
      blockMatVecSub(A, 0, bs, X, 0, MVS, 0);
      expect(arena.dispatched).toBe(before + 2);
      expect(firstDifference(MV, mv)).toBeUndefined();
      expect(firstDifference(MVS, mvs)).toBeUndefined();
    });
  });
});
