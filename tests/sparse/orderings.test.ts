import { describe, expect, it } from 'vitest';
import type { Bsr } from '../../src/sparse/types.js';
import { blockOrdering, couplingWeights } from '../../src/sparse/orderings.js';
import { permuteBsr } from '../../src/sparse/permute.js';
import { bsrSpmv } from '../../src/sparse/bsr.js';
import { ORDERING_NAMES } from '../../src/solvers/recipe.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { maxAbsDiff, randomBsr, randomVector, recipe, rng, systemOf } from '../precond/helpers.js';

function shuffle(n: number, seed: number): Int32Array {
  const r = rng(seed);
  const p = Int32Array.from({ length: n }, (_, i) => i);
  for (let i = n - 1; i > 0; i--) { const j = Math.floor(r() * (i + 1)); [p[i], p[j]] = [p[j], p[i]]; }
  return p;
}

function isPermutation(p: Int32Array, n: number): boolean {
  if (p.length !== n) return false;
  const seen = new Uint8Array(n);
  for (const v of p) { if (v < 0 || v >= n || seen[v]) return false; seen[v] = 1; }
  return true;
}

function randomPattern(nb: number, perRow: number, seed: number): Bsr {
  const r = rng(seed);
  const pattern: Array<[number, number]> = [];
  for (let I = 0; I < nb; I++) for (let t = 0; t < perRow; t++) pattern.push([I, Math.floor(r() * nb)]);
  return randomBsr(nb, 2, pattern, seed + 1);
}

/** Stored blocks strictly above the block diagonal. */
function upperCount(a: Bsr): number {
  let c = 0;
  for (let I = 0; I < a.nBlockRows; I++) for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) if (a.colInd[k] > I) c++;
  return c;
}

function bandwidth(a: Bsr): number {
  let b = 0;
  for (let I = 0; I < a.nBlockRows; I++) for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) b = Math.max(b, Math.abs(a.colInd[k] - I));
  return b;
}

/** Block lower triangular matrix (random pattern below the diagonal), scrambled by a random renumbering. */
function scrambledTriangular(nb: number, seed: number): Bsr {
  const r = rng(seed);
  const pattern: Array<[number, number]> = [];
  for (let I = 1; I < nb; I++) for (let t = 0; t < 3; t++) pattern.push([I, Math.floor(r() * I)]);
  return permuteBsr(randomBsr(nb, 3, pattern, seed + 1), shuffle(nb, seed + 2));
}

describe('blockOrdering: every ordering', () => {
  const a = randomPattern(60, 4, 1);
  const slabs = Int32Array.of(0, 10, 25, 25 + 17, 60);
  for (const name of ORDERING_NAMES) {
    it(`${name}: returns a permutation, deterministic, and keeps each slab's block rows inside the slab`, () => {
      const p = blockOrdering(a, name);
      expect(isPermutation(p, 60)).toBe(true);
      const q = blockOrdering(a, name, { slabOffsets: slabs });
      expect(isPermutation(q, 60)).toBe(true);
      for (let s = 0; s + 1 < slabs.length; s++) {
        for (let i = slabs[s]; i < slabs[s + 1]; i++) {
          expect(q[i]).toBeGreaterThanOrEqual(slabs[s]);
          expect(q[i]).toBeLessThan(slabs[s + 1]);
        }
      }
      expect(blockOrdering(a, name, { slabOffsets: slabs })).toEqual(q);
    });
  }

  it('rejects an unknown name and slab offsets that do not cover the matrix', () => {
    expect(() => blockOrdering(a, 'spiral' as never)).toThrow(/unknown ordering 'spiral'/);
    expect(() => blockOrdering(a, 'rcm', { slabOffsets: Int32Array.of(0, 30) })).toThrow(/end at 60/);
  });

  it('natural is the identity', () => {
    expect(Array.from(blockOrdering(a, 'natural'))).toEqual(Array.from({ length: 60 }, (_, i) => i));
  });
});

describe('reverse Cuthill–McKee (Cuthill & McKee 1969; George & Liu 1981)', () => {
  it('recovers a small bandwidth on a scrambled block-banded matrix', () => {
    const nb = 80;
    const pattern: Array<[number, number]> = [];
    for (let I = 0; I < nb; I++) for (let d = -2; d <= 2; d++) if (I + d >= 0 && I + d < nb && d !== 0) pattern.push([I, I + d]);
    const banded = randomBsr(nb, 2, pattern, 3);
    const scrambled = permuteBsr(banded, shuffle(nb, 4));
    const before = bandwidth(scrambled);
    const after = bandwidth(permuteBsr(scrambled, blockOrdering(scrambled, 'rcm')));
    expect(before).toBeGreaterThan(30);
    expect(after).toBeLessThanOrEqual(4); // a level structure of a band of half-width 2 has width ≤ 2·2
  });
});

describe('downstream ordering', () => {
  it('makes a scrambled block lower triangular matrix block lower triangular, so one forward block GS sweep is exact (derived)', () => {
    const a = scrambledTriangular(50, 7);
    expect(upperCount(a)).toBeGreaterThan(0);
    const p = blockOrdering(a, 'downstream');
    expect(upperCount(permuteBsr(a, p))).toBe(0);
    const n = 50 * 3, x = randomVector(n, 8), ax = new Float64Array(n), z = new Float64Array(n);
    bsrSpmv(a, x, ax);
    const M = createPreconditioner(systemOf(a), recipe({ preconditioner: 'block-gs', sweep: 'forward', ordering: 'downstream' }));
    expect(M.setup().ok).toBe(true);
    M.apply(ax, z);
    expect(maxAbsDiff(z, x)).toBeLessThan(1e-12);
  });

  it('breaks a cycle at its weakest coupling (coupling weight ‖A_IJ‖_F / ‖A_II‖_F)', () => {
    // A 3-cycle ("row I needs J"): row 0 needs 2, row 1 needs 0 (both strong), row 2 needs 1
    // only weakly. The weak link is the one to leave above the diagonal: 2 goes first, then 0
    // (needs 2), then 1 (needs 0).
    const a = randomBsr(3, 2, [[0, 2], [1, 0], [2, 1]], 9, 10);
    const bb = 4;
    const k21 = a.rowPtr[2]; // row 2 stores (2,1) then (2,2)
    expect(a.colInd[k21]).toBe(1);
    for (let p = 0; p < bb; p++) a.values[k21 * bb + p] *= 1e-3;
    expect(Array.from(blockOrdering(a, 'downstream'))).toEqual([2, 0, 1]);
    const w = couplingWeights(a);
    expect(w[k21]).toBeLessThan(1e-3);
  });
});

describe('minimum discarded fill (Persson & Peraire 2008; D\'Azevedo, Forsyth & Tang 1992)', () => {
  it('is deterministic and finds a zero-discard order for a scrambled block lower triangular matrix, making block ILU(0) exact (derived: no fill dropped ⇒ LU = A)', () => {
    const a = scrambledTriangular(40, 11);
    const p1 = blockOrdering(a, 'mdf');
    expect(blockOrdering(a, 'mdf')).toEqual(p1);
    const n = 40 * 3, x = randomVector(n, 12), ax = new Float64Array(n), z = new Float64Array(n);
    bsrSpmv(a, x, ax);
    const M = createPreconditioner(systemOf(a), recipe({ preconditioner: 'block-ilu0', ordering: 'mdf' }));
    expect(M.setup().ok).toBe(true);
    M.apply(ax, z);
    expect(maxAbsDiff(z, x)).toBeLessThan(1e-11);
  });

  it('runs on 2·10⁴ blocks with ~7 neighbours each (a 2D grid with diagonal links)', () => {
    const m = 140, nb = m * m;
    const pattern: Array<[number, number]> = [];
    for (let y = 0; y < m; y++) for (let x = 0; x < m; x++) {
      const i = y * m + x;
      if (x > 0) pattern.push([i, i - 1]);
      if (x + 1 < m) pattern.push([i, i + 1]);
      if (y > 0) pattern.push([i, i - m]);
      if (y + 1 < m) pattern.push([i, i + m]);
      if (x > 0 && y > 0) pattern.push([i, i - m - 1]);
      if (x + 1 < m && y + 1 < m) pattern.push([i, i + m + 1]);
    }
    const a = randomBsr(nb, 1, pattern, 13);
    const p = blockOrdering(a, 'mdf');
    expect(isPermutation(p, nb)).toBe(true);
  });
});
