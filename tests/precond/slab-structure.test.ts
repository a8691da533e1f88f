/**
 * Block lower bidiagonal (time-slab) matrices, the structure an upwind-in-time DG discretization
 * produces when each slab couples only to itself and to the slab before it.
 */
import { describe, expect, it } from 'vitest';
import type { Bsr } from '../../src/sparse/types.js';
import type { Preconditioner } from '../../src/precond/types.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { SlabPreconditioner } from '../../src/precond/slab.js';
import { gmres } from '../../src/solvers/gmres.js';
import { bsrOperator } from '../../src/solvers/operator.js';
import { permuteBsr } from '../../src/sparse/permute.js';
import { bsrSpmv } from '../../src/sparse/bsr.js';
import type { Recipe } from '../../src/solvers/recipe.js';
import { maxAbsDiff, randomBsr, randomVector, recipe, rng, systemOf } from './helpers.js';

const nSlabs = 8, bs = 5;
/** One block per slab: blocks (s, s) and (s, s−1). */
function bidiagonal(seed: number): Bsr {
  const pattern: Array<[number, number]> = [];
  for (let s = 1; s < nSlabs; s++) pattern.push([s, s - 1]);
  return randomBsr(nSlabs, bs, pattern, seed, 2);
}

/** Block rows and columns lo..hi−1 of a BSR matrix (a slab's diagonal part). */
function diagonalPart(a: Bsr, lo: number, hi: number): Bsr {
  const bb = a.bs * a.bs;
  const rowPtr = new Int32Array(hi - lo + 1);
  const cols: number[] = [], vals: number[] = [];
  for (let I = lo; I < hi; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      const J = a.colInd[k];
      if (J < lo || J >= hi) continue;
      cols.push(J - lo);
      for (let q = 0; q < bb; q++) vals.push(a.values[k * bb + q]);
    }
    rowPtr[I - lo + 1] = cols.length;
  }
  return { nBlockRows: hi - lo, nBlockCols: hi - lo, bs: a.bs, rowPtr, colInd: Int32Array.from(cols), values: Float64Array.from(vals) };
}

/** Several element blocks per slab, coupled inside the slab (with cycles) and to the previous slab. */
function slabbed(nS: number, perSlab: number, b: number, seed: number): { a: Bsr; offsets: Int32Array } {
  const r = rng(seed);
  const pattern: Array<[number, number]> = [];
  for (let s = 0; s < nS; s++) {
    const lo = s * perSlab;
    for (let i = 0; i < perSlab; i++) {
      pattern.push([lo + i, lo + ((i + 1) % perSlab)]); // a cycle through the slab
      pattern.push([lo + i, lo + Math.floor(r() * perSlab)]);
      if (s > 0) pattern.push([lo + i, lo - perSlab + Math.floor(r() * perSlab)]);
    }
  }
  const offsets = Int32Array.from({ length: nS + 1 }, (_, s) => s * perSlab);
  return { a: randomBsr(nS * perSlab, b, pattern, seed + 1), offsets };
}

function setUp(a: Bsr, over: Partial<Recipe>, offsets?: Int32Array): Preconditioner {
  const M = createPreconditioner(systemOf(a, offsets), recipe(over));
  const out = M.setup();
  expect(out).toEqual({ ok: true });
  return M;
}

function applyToAx(a: Bsr, M: Preconditioner, seed: number): { x: Float64Array; z: Float64Array } {
  const n = a.nBlockRows * a.bs;
  const x = randomVector(n, seed);
  const ax = new Float64Array(n);
  bsrSpmv(a, x, ax);
  const z = new Float64Array(n);
  M.apply(ax, z);
  return { x, z };
}

function solve(a: Bsr, M: Preconditioner, flexible: boolean, rtol = 1e-10) {
  const n = a.nBlockRows * a.bs;
  const b = randomVector(n, 5);
  const x = new Float64Array(n);
  return gmres(bsrOperator(a), b, x, {
    M, restart: 50, side: 'right', orthogonalization: 'mgs', rtol, atol: 0, maxIterations: 200,
    divergence: 1e10, relativeTo: 'rhs', flexible,
  });
}

describe('block lower bidiagonal matrix (derived facts, see each check)', () => {
  const a = bidiagonal(31);

  it('block ILU(0) is exact: the L and U patterns of a block bidiagonal matrix need no fill (derived)', () => {
    const { x, z } = applyToAx(a, setUp(a, { preconditioner: 'block-ilu0' }), 1);
    expect(maxAbsDiff(z, x)).toBeLessThan(1e-12);
  });

  it('one forward block Gauss–Seidel sweep is exact: with no blocks above the diagonal it is forward block substitution (derived)', () => {
    const { x, z } = applyToAx(a, setUp(a, { preconditioner: 'block-gs', sweep: 'forward' }), 2);
    expect(maxAbsDiff(z, x)).toBeLessThan(1e-12);
  });

  it('GMRES with block ILU(0) or forward block Gauss–Seidel converges in one iteration (derived: M = A)', () => {
    expect(solve(a, setUp(a, { preconditioner: 'block-ilu0' }), false).iterations).toBe(1);
    expect(solve(a, setUp(a, { preconditioner: 'block-gs' }), false).iterations).toBe(1);
  });

  it(`block-Jacobi GMRES needs at most nSlabs = ${nSlabs} iterations (derived: D⁻¹A = I − N with N = −D⁻¹L strictly block lower triangular, so N^nSlabs = 0 and the minimal polynomial of D⁻¹A has degree ≤ nSlabs)`, () => {
    const res = solve(a, setUp(a, { preconditioner: 'block-jacobi' }), false);
    expect(res.converged).toBe(true);
    expect(res.iterations).toBeLessThanOrEqual(nSlabs);
    expect(res.iterations).toBeGreaterThan(1); // the bound is not met trivially
  });
});

describe('slab preconditioner (forward block substitution over slabs)', () => {
  const { a, offsets } = slabbed(4, 6, 3, 41);

  it('with the default inner recipe (GMRES + block ILU(0), rtol 1e-10) it is A⁻¹ up to the inner tolerance; FGMRES converges in one iteration', () => {
    const M = setUp(a, { preconditioner: 'slab' }, offsets);
    expect(M.variable).toBe(true);
    const { x, z } = applyToAx(a, M, 3);
    expect(maxAbsDiff(z, x)).toBeLessThan(1e-7);
    const res = solve(a, M, true, 1e-8);
    expect(res.iterations).toBe(1);
    const stats = M.stats!();
    expect(stats.slabSource).toBe('layout');
    expect(stats.nSlabs).toBe(4);
    expect(stats.blocksAboveSlabDiagonal).toBe(0);
    const perSlab = stats.innerIterationsPerSlab as number[];
    expect(perSlab).toHaveLength(4);
    // Each slab's inner GMRES needs at least one iteration and, at rtol 1e-10, at most the slab's
    // size (full GMRES terminates in n steps in exact arithmetic; Saad 2003, §6.5).
    for (const v of perSlab) { expect(Number.isInteger(v)).toBe(true); expect(v).toBeGreaterThanOrEqual(1); expect(v).toBeLessThanOrEqual(a.nBlockRows / 4 * a.bs); }
  });

  it('without slab offsets, the slabs come from strongly connected components, also after a random renumbering', () => {
    const r = rng(5);
    const n = a.nBlockRows;
    const perm = Int32Array.from({ length: n }, (_, i) => i);
    for (let i = n - 1; i > 0; i--) { const j = Math.floor(r() * (i + 1)); [perm[i], perm[j]] = [perm[j], perm[i]]; }
    const scrambled = permuteBsr(a, perm);
    const M = setUp(scrambled, { preconditioner: 'slab' });
    const { x, z } = applyToAx(scrambled, M, 4);
    expect(maxAbsDiff(z, x)).toBeLessThan(1e-7);
    expect(M.stats!().slabSource).toBe('strongly-connected-components');
  });

  it('with an exact one-step inner solve (block ILU(0) on one-block slabs, krylov none, 1 step) it is exactly A⁻¹ and not variable', () => {
    const b = bidiagonal(77);
    const offs = Int32Array.from({ length: nSlabs + 1 }, (_, s) => s);
    const inner = recipe({ name: 'exact', krylov: 'none', preconditioner: 'block-ilu0', maxIterations: 1 });
    const M = setUp(b, { preconditioner: 'slab', inner }, offs);
    expect(M.variable).toBe(false);
    const { x, z } = applyToAx(b, M, 6);
    expect(maxAbsDiff(z, x)).toBeLessThan(1e-12);
  });

  it('holds one slab at a time: reported inner-preconditioner bytes are those of the largest single slab', () => {
    const M = setUp(a, { preconditioner: 'slab' }, offsets) as SlabPreconditioner;
    const mem = M.memory();
    const perSlab = mem['inner preconditioner (peak, one slab at a time)'];
    const whole = createPreconditioner(systemOf(a), recipe({ preconditioner: 'block-ilu0' }));
    whole.setup();
    const wholeBytes = Object.values(whole.memory()).reduce((s, v) => s + v, 0);
    // The same inner preconditioner built here on each slab's diagonal part: the peak is the largest.
    let largest = 0;
    for (let s = 0; s < 4; s++) {
      const one = createPreconditioner(systemOf(diagonalPart(a, offsets[s], offsets[s + 1])), recipe({ preconditioner: 'block-ilu0' }));
      expect(one.setup().ok).toBe(true);
      largest = Math.max(largest, Object.values(one.memory()).reduce((t, v) => t + v, 0));
    }
    expect(perSlab).toBe(largest);
    expect(perSlab).toBeLessThan(wholeBytes / 2); // 4 equal slabs: about a quarter
  });
});
