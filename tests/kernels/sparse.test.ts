// Tier 3 (fast against slow): each WebAssembly sparse and vector kernel against its TypeScript
// twin on seeded random non-symmetric blocks. The WebAssembly kernels keep the TypeScript
// summation order, so results must agree bit for bit.
import { describe, expect, it } from 'vitest';
import { bsrMultiplyAdd, bsrResidual, bsrSpmv, bsrSpmvTiledKernel } from '../../src/sparse/bsr.js';
import { csrMultiplyAdd, csrSpmv } from '../../src/sparse/csr.js';
import { axpy, axpyDot, axpyNorm2, bicgDirection, dot, norm2, scale, subtractFrom, waxpy } from '../../src/solvers/vector.js';
import { activeArena } from '../../src/kernels-host/arena.js';
import { randomBsr, randomCsr, randomVector, rng } from '../sparse/random-sparse.js';
import { BLOCK_SIZES, TILE_BLOCK_SIZES, bsrInArena, firstDifference, inArena, withArena } from './helpers.js';

const MiB = 1 << 20;

describe('BSR products in WebAssembly against TypeScript', () => {
  for (const bs of [...BLOCK_SIZES, ...TILE_BLOCK_SIZES]) {
    it(`bs ${bs}: y = A x, y = z + αA x, y += αA x, r = b − A x, generic tile`, () => {
      const r = rng(100 + bs);
      const a = randomBsr(r, 23, 23, bs, 4);
      const n = 23 * bs;
      const x = randomVector(r, n), z = randomVector(r, n);
      const ref = { y: new Float64Array(n), w: new Float64Array(n), acc: Float64Array.from(z), res: new Float64Array(n), tiled: new Float64Array(n) };
      bsrSpmv(a, x, ref.y);
      bsrMultiplyAdd(a, x, -0.7, z, ref.w);
      bsrMultiplyAdd(a, x, 1.3, ref.acc, ref.acc);
      bsrResidual(a, x, z, ref.res);
      bsrSpmvTiledKernel(a.nBlockRows, bs, a.rowPtr, a.colInd, a.values, x, ref.tiled);
      withArena(8 * MiB, (arena) => {
        const A = bsrInArena(arena, a), X = inArena(arena, x), Z = inArena(arena, z);
        const y = inArena(arena, new Float64Array(n).fill(NaN)), w = inArena(arena, new Float64Array(n));
        const acc = inArena(arena, z), res = inArena(arena, new Float64Array(n)), tiled = inArena(arena, new Float64Array(n));
        expect(activeArena()).toBe(arena);
        bsrSpmv(A, X, y);
        bsrMultiplyAdd(A, X, -0.7, Z, w);
        bsrMultiplyAdd(A, X, 1.3, acc, acc);
        bsrResidual(A, X, Z, res);
        bsrSpmvTiledKernel(A.nBlockRows, bs, A.rowPtr, A.colInd, A.values, X, tiled);
        expect(firstDifference(y, ref.y)).toBeUndefined();
        expect(firstDifference(w, ref.w)).toBeUndefined();
        expect(firstDifference(acc, ref.acc)).toBeUndefined();
        expect(firstDifference(res, ref.res)).toBeUndefined();
        expect(firstDifference(tiled, ref.tiled)).toBeUndefined();
        // inputs unmodified
        expect(firstDifference(X, x)).toBeUndefined();
        expect(firstDifference(A.values, a.values)).toBeUndefined();
      });
    });
  }

  it('an array outside kernel memory makes the product run in TypeScript (same result)', () => {
    const r = rng(7);
    const a = randomBsr(r, 10, 10, 5, 3);
    const x = randomVector(r, 50);
    const ref = new Float64Array(50);
    bsrSpmv(a, x, ref);
    withArena(MiB, (arena) => {
      const A = bsrInArena(arena, a);
      const y = new Float64Array(50); // JavaScript heap
      bsrSpmv(A, inArena(arena, x), y);
      expect(firstDifference(y, ref)).toBeUndefined();
    });
  });
});

describe('CSR products in WebAssembly against TypeScript', () => {
  it('y = A x and y = z + αA x', () => {
    const r = rng(3);
    const a = randomCsr(r, 301, 301, 7);
    const x = randomVector(r, 301), z = randomVector(r, 301);
    const y0 = new Float64Array(301), w0 = new Float64Array(301);
    csrSpmv(a, x, y0);
    csrMultiplyAdd(a, x, -1, z, w0);
    withArena(MiB, (arena) => {
      const A = { ...a, rowPtr: inArena(arena, a.rowPtr), colInd: inArena(arena, a.colInd), values: inArena(arena, a.values) };
      const y = inArena(arena, new Float64Array(301)), w = inArena(arena, new Float64Array(301));
      csrSpmv(A, inArena(arena, x), y);
      csrMultiplyAdd(A, inArena(arena, x), -1, inArena(arena, z), w);
      expect(firstDifference(y, y0)).toBeUndefined();
      expect(firstDifference(w, w0)).toBeUndefined();
    });
  });
});

describe('vector kernels in WebAssembly against TypeScript (odd lengths: SIMD tails)', () => {
  for (const n of [0, 1, 2, 3, 4, 5, 7, 8, 12, 13, 15, 1001, 1006]) {
    it(`length ${n}`, () => {
      const r = rng(50 + n);
      const x = randomVector(r, n), y = randomVector(r, n), z = randomVector(r, n);
      const ref = {
        dot: dot(n, x, y), norm: norm2(n, x),
        ax: Float64Array.from(y), axd: Float64Array.from(y), axn: Float64Array.from(y), sc: Float64Array.from(x),
        sub: Float64Array.from(y), wx: new Float64Array(n), bd: Float64Array.from(y),
        axdV: 0, axnV: 0,
      };
      axpy(n, 0.3, x, ref.ax);
      ref.axdV = axpyDot(n, -0.4, x, ref.axd, z);
      ref.axnV = axpyNorm2(n, 0.9, x, ref.axn);
      scale(n, 1 / 3, ref.sc);
      subtractFrom(n, x, ref.sub);
      waxpy(n, x, -2.5, z, ref.wx);
      bicgDirection(n, x, 0.7, ref.bd, 0.2, z);
      withArena(MiB, (arena) => {
        const X = inArena(arena, x), Y = inArena(arena, y), Zv = inArena(arena, z);
        expect(Object.is(dot(n, X, Y), ref.dot)).toBe(true);
        expect(Object.is(norm2(n, X), ref.norm)).toBe(true);
        const ax = inArena(arena, y); axpy(n, 0.3, X, ax);
        expect(firstDifference(ax, ref.ax)).toBeUndefined();
        const axd = inArena(arena, y);
        expect(Object.is(axpyDot(n, -0.4, X, axd, Zv), ref.axdV)).toBe(true);
        expect(firstDifference(axd, ref.axd)).toBeUndefined();
        const axn = inArena(arena, y);
        expect(Object.is(axpyNorm2(n, 0.9, X, axn), ref.axnV)).toBe(true);
        expect(firstDifference(axn, ref.axn)).toBeUndefined();
        const sc = inArena(arena, x); scale(n, 1 / 3, sc);
        expect(firstDifference(sc, ref.sc)).toBeUndefined();
        const sub = inArena(arena, y); subtractFrom(n, X, sub);
        expect(firstDifference(sub, ref.sub)).toBeUndefined();
        const wx = inArena(arena, new Float64Array(n)); waxpy(n, X, -2.5, Zv, wx);
        expect(firstDifference(wx, ref.wx)).toBeUndefined();
        const bd = inArena(arena, y); bicgDirection(n, X, 0.7, bd, 0.2, Zv);
        expect(firstDifference(bd, ref.bd)).toBeUndefined();
      });
    });
  }
});
