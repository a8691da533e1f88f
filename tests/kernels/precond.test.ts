// Tier 3 (fast against slow): preconditioner sweeps and the dense block kernels of setup in
// WebAssembly against their TypeScript twins, on seeded random non-symmetric blocks, for every
// specialized block size and generic ones. Results must agree bit for bit (same arithmetic).
import { describe, expect, it } from 'vitest';
import { createPreconditioner } from '../../src/precond/registry.js';
import {
  allFinite, blockGemm, blockGemmSub, blockMatVec, blockMatVecSub, luFactor, luInverse, luSolve, PIVOT_RTOL,
} from '../../src/precond/dense.js';
import type { Recipe } from '../../src/solvers/recipe.js';
import type { SystemMatrix } from '../../src/precond/types.js';
import { randomBsr, randomVector, recipe, systemOf, rng } from '../precond/helpers.js';
import { BLOCK_SIZES, TILE_BLOCK_SIZES, bsrInArena, firstDifference, inArena, withArena } from './helpers.js';

const MiB = 1 << 20;

function blockSystem(nb: number, bs: number, seed: number): SystemMatrix {
  const pattern: Array<[number, number]> = [];
  for (let i = 1; i < nb; i++) { pattern.push([i, i - 1]); pattern.push([i - 1, i]); }
  for (let i = 4; i < nb; i += 3) pattern.push([i, i - 4]);
  return systemOf(randomBsr(nb, bs, pattern, seed, 2 * bs));
}

const PRECONDS: Array<Partial<Recipe>> = [
  { preconditioner: 'block-ilu0' },
  { preconditioner: 'block-ilu0', ordering: 'rcm' },
  { preconditioner: 'block-jacobi', blockInverse: 'inverse' },
  { preconditioner: 'block-jacobi', blockInverse: 'lu' },
  { preconditioner: 'block-gs', sweep: 'symmetric', omega: 1.3, sweeps: 2 },
  { preconditioner: 'block-gs', sweep: 'forward', ordering: 'rcm', blockInverse: 'lu' },
  { preconditioner: 'ilu0' },
  { preconditioner: 'jacobi' },
];

describe('preconditioner apply in WebAssembly against TypeScript', () => {
  for (const bs of BLOCK_SIZES) {
    for (const over of PRECONDS) {
      const label = Object.entries(over).map(([k, v]) => `${k}=${v}`).join(' ');
      it(`bs ${bs}: ${label}`, () => {
        const sys = blockSystem(17, bs, 300 + bs);
        const n = 17 * bs;
        const r = randomVector(n, 5);
        const rec = recipe(over);
        const ref = createPreconditioner(sys, rec);
        expect(ref.setup().ok).toBe(true);
        const zRef = new Float64Array(n);
        ref.apply(r, zRef);
        withArena(16 * MiB, (arena) => {
          const bsr = bsrInArena(arena, sys.bsr);
          const csr = { ...sys.csr, rowPtr: inArena(arena, sys.csr.rowPtr), colInd: inArena(arena, sys.csr.colInd), values: inArena(arena, sys.csr.values) };
          const M = createPreconditioner({ bsr, csr }, rec);
          expect(M.setup().ok).toBe(true);
          const R = inArena(arena, r), z = inArena(arena, new Float64Array(n));
          const before = arena.dispatched;
          M.apply(R, z);
          expect(arena.dispatched).toBeGreaterThan(before); // the apply really ran in WebAssembly
          expect(firstDifference(z, zRef)).toBeUndefined();
          expect(firstDifference(R, r)).toBeUndefined();
          expect(arena.spilledBytes).toBe(0);
        });
      });
    }
  }
});

describe('dense block kernels in WebAssembly against TypeScript', () => {
  for (const bs of [...BLOCK_SIZES, ...TILE_BLOCK_SIZES, 33]) {
    it(`bs ${bs}: LU (pivots), inverse, solve, C −= A·B, C = A·B, y = A x, y −= A x`, () => {
      const r = rng(40 + bs);
      const bb = bs * bs;
      const a = new Float64Array(bb), b = new Float64Array(bb), c = new Float64Array(bb);
      for (let p = 0; p < bb; p++) { a[p] = 2 * r() - 1; b[p] = 2 * r() - 1; c[p] = 2 * r() - 1; }
      const x = randomVector(bs, 9), y = randomVector(bs, 10);
      const tiny = PIVOT_RTOL;
      // TypeScript
      const lu = Float64Array.from(a), piv = new Int32Array(bs);
      const fail = luFactor(lu, 0, bs, piv, 0, tiny);
      const inv = new Float64Array(bb); luInverse(lu, 0, piv, 0, bs, inv, 0);
      const sol = Float64Array.from(x); luSolve(lu, 0, piv, 0, bs, sol, 0);
      const cs = Float64Array.from(c); blockGemmSub(cs, 0, a, 0, b, 0, bs);
      const cg = new Float64Array(bb); blockGemm(cg, 0, a, 0, b, 0, bs);
      const mv = new Float64Array(bs); blockMatVec(a, 0, bs, x, 0, mv, 0);
      const mvs = Float64Array.from(y); blockMatVecSub(a, 0, bs, x, 0, mvs, 0);
      withArena(MiB, (arena) => {
        const A = inArena(arena, a), B = inArena(arena, b), X = inArena(arena, x);
        const LU = inArena(arena, a), PIV = inArena(arena, new Int32Array(bs));
        const before = arena.dispatched;
        expect(luFactor(LU, 0, bs, PIV, 0, tiny)).toBe(fail);
        expect(arena.dispatched).toBe(before + 1);
        expect(firstDifference(LU, lu)).toBeUndefined();
        expect(Array.from(PIV)).toEqual(Array.from(piv));
        const INV = inArena(arena, new Float64Array(bb)); luInverse(LU, 0, PIV, 0, bs, INV, 0);
        expect(firstDifference(INV, inv)).toBeUndefined();
        const SOL = inArena(arena, x); luSolve(LU, 0, PIV, 0, bs, SOL, 0);
        expect(firstDifference(SOL, sol)).toBeUndefined();
        const CS = inArena(arena, c); blockGemmSub(CS, 0, A, 0, B, 0, bs);
        expect(firstDifference(CS, cs)).toBeUndefined();
        const CG = inArena(arena, new Float64Array(bb).fill(7)); blockGemm(CG, 0, A, 0, B, 0, bs);
        expect(firstDifference(CG, cg)).toBeUndefined();
        const MV = inArena(arena, new Float64Array(bs)); blockMatVec(A, 0, bs, X, 0, MV, 0);
        expect(firstDifference(MV, mv)).toBeUndefined();
        const MVS = inArena(arena, y); blockMatVecSub(A, 0, bs, X, 0, MVS, 0);
        expect(firstDifference(MVS, mvs)).toBeUndefined();
      });
    });
  }

  it('allFinite: the same answer as TypeScript for a NaN, +Inf or −Inf at every position of every length 0–40, and for finite extremes', () => {
    const r = rng(77);
    withArena(MiB, (arena) => {
      const before = arena.dispatched;
      let calls = 0;
      for (let len = 0; len <= 40; len++) {
        const base = Float64Array.from({ length: len + 3 }, () => 2 * r() - 1);
        // finite extremes (−0, subnormal, largest double) must not read as non-finite
        if (len > 2) { base[1] = -0; base[2] = 5e-324; base[len] = -Number.MAX_VALUE; }
        const check = (a: Float64Array, o: number): void => {
          const expected = allFinite(a, o, len);
          expect(allFinite(inArena(arena, a), o, len)).toBe(expected);
          calls++;
        };
        check(base, 0);
        check(base, 3); // offset start: the window [3, 3 + len) misses entries 0–2
        for (const bad of [Number.NaN, Infinity, -Infinity]) {
          for (let p = 0; p < len; p++) {
            const a = Float64Array.from(base); a[p] = bad;
            check(a, 0);
            expect(allFinite(a, 0, len)).toBe(false);
          }
          if (len > 0) { const a = Float64Array.from(base); a[len] = bad; check(a, 0); expect(allFinite(a, 0, len)).toBe(true); }
        }
      }
      expect(arena.dispatched - before).toBe(calls);
    });
  });

  it('a zero pivot stops LU at the same column in both', () => {
    for (const bs of [3, 8, 20]) {
      const a = new Float64Array(bs * bs);
      for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) a[i * bs + j] = i < 2 ? (j + 1) * (i + 1) : (i === j ? 1 : 0);
      const piv = new Int32Array(bs);
      const k = luFactor(Float64Array.from(a), 0, bs, piv, 0, 1e-14);
      expect(k).toBe(1);
      withArena(MiB, (arena) => {
        expect(luFactor(inArena(arena, a), 0, bs, inArena(arena, piv), 0, 1e-14)).toBe(k);
      });
    }
  });
});
