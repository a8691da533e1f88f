import { describe, it, expect } from 'vitest';
import { parseGeneratorParams, resolveGenerator } from '../../src/dg/generate.js';
import { refinedParams, runRefinementStudy } from '../../src/dg/refine.js';
import {
  bandLuInPlace, bandLuSolveInPlace, bandwidth, luInPlace, luSolveInPlace, REFINE_RECIPE, slabMatrix, solveBySlabs,
} from '../../src/dg/slab-solve.js';
import { generateSystem } from '../../src/dg/generate.js';
import { bsrSpmv } from '../../src/sparse/bsr.js';
import { blockOrdering } from '../../src/sparse/orderings.js';
import type { Bsr } from '../../src/sparse/types.js';
import { UserError } from '../../src/util/errors.js';

describe('refinedParams', () => {
  it('keeps the final time, scales the slab thickness with h and keeps the aspect ratio of the cells', () => {
    const base = parseGeneratorParams({ physics: 'advection', dim: 2, cells: [4, 2], extent: [2, 1], slabs: 3, cfl: 0.5 }, 't');
    const T = resolveGenerator(base).finalTime;
    for (const size of [4, 8, 16]) {
      const p = refinedParams(base, size, T);
      expect(p.cells).toEqual([size, size / 2]);
      expect(p.cfl).toBeNull();
      expect(Number.isInteger(p.slabs)).toBe(true);
      expect(p.slabs * (p.slabThickness as number)).toBeCloseTo(T, 14);
      // thickness ≤ the CFL thickness for this h (rounded up number of slabs)
      expect(p.slabThickness as number).toBeLessThanOrEqual((0.5 * (2 / size)) / Math.hypot(1, 0.5) + 1e-15);
    }
  });
});

describe('runRefinementStudy', () => {
  it('rejects a single size, decreasing sizes and cases without an exact solution', () => {
    const base = parseGeneratorParams({ physics: 'advection', dim: 1 }, 't');
    expect(() => runRefinementStudy(base, [4])).toThrow(UserError);
    expect(() => runRefinementStudy(base, [8, 4])).toThrow(/must increase/);
    const field = parseGeneratorParams({ physics: 'advection', dim: 1, velocity: ['1 + x'] }, 't');
    expect(() => runRefinementStudy(field, [4, 8])).toThrow(/no exact solution/);
  });
  it('advection–diffusion with the decaying-wave exact solution converges at ≥ p + 1/2 (periodic, 1D+t)', () => {
    const base = parseGeneratorParams({ physics: 'advection-diffusion', dim: 1, order: 1, cells: 8, slabs: 2, periodic: true, diffusivity: 0.05 }, 't');
    const study = runRefinementStudy(base, [8, 16, 32]);
    for (const r of study.rows.slice(1)) expect(r.observedOrder!).toBeGreaterThan(1.5);
  });
});

describe('slab solve helpers', () => {
  it('dense LU with pivoting solves a non-symmetric system that needs row exchanges', () => {
    const a = Float64Array.from([0, 2, 1, 1, 1, 0, 3, 0, 1]);
    const x = [1, -2, 3];
    const b = Float64Array.from([0 * 1 + 2 * -2 + 1 * 3, 1 - 2, 3 * 1 + 3]);
    const piv = new Int32Array(3);
    luInPlace(a, 3, piv);
    luSolveInPlace(a, 3, piv, b);
    for (let i = 0; i < 3; i++) expect(b[i]).toBeCloseTo(x[i], 14);
  });
  it('solveBySlabs: block forward substitution on a block lower bidiagonal matrix reproduces a known solution', () => {
    // Two slabs of one 2×2 block each: [[D0, 0], [L, D1]] x = b.
    const bsr = {
      nBlockRows: 2, nBlockCols: 2, bs: 2, rowPtr: Int32Array.from([0, 1, 3]), colInd: Int32Array.from([0, 0, 1]),
      values: Float64Array.from([2, 1, 0, 3, /* L */ 1, -1, 2, 0.5, /* D1 */ 4, 0, 1, -2]),
    };
    const x = [1, 2, -1, 0.5];
    const b = Float64Array.from([2 * 1 + 1 * 2, 3 * 2, (1 * 1 - 1 * 2) + (4 * -1), (2 * 1 + 0.5 * 2) + (1 * -1 - 2 * 0.5)]);
    const out = solveBySlabs(bsr, b, [0, 1, 2]);
    expect(out.method).toBe('block-forward-substitution');
    for (let i = 0; i < 4; i++) expect(out.x[i]).toBeCloseTo(x[i], 14);
  });
});

function relResidual(a: Bsr, x: Float64Array, b: Float64Array): number {
  const y = new Float64Array(b.length);
  bsrSpmv(a, x, y);
  let num = 0, den = 0;
  for (let i = 0; i < b.length; i++) { num += (b[i] - y[i]) ** 2; den += b[i] ** 2; }
  return Math.sqrt(num / den);
}

describe('banded LU', () => {
  it('solves a non-symmetric band system whose pivots need row interchanges (against dense LU)', () => {
    const n = 40, kl = 3, ku = 2, w = 2 * kl + ku + 1;
    let seed = 3;
    const rnd = (): number => { seed = (seed * 16807) % 2147483647; return seed / 2147483647 - 0.5; };
    const dense = new Float64Array(n * n);
    const ab = new Float64Array(n * w);
    for (let i = 0; i < n; i++) {
      for (let j = Math.max(0, i - kl); j <= Math.min(n - 1, i + ku); j++) {
        // a small diagonal forces interchanges
        const v = i === j ? 0.01 * rnd() : rnd();
        dense[i * n + j] = v;
        ab[i * w + (j - i + kl)] = v;
      }
    }
    const xTrue = Float64Array.from({ length: n }, (_, i) => Math.sin(i + 1));
    const b = new Float64Array(n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) b[i] += dense[i * n + j] * xTrue[j];
    const piv = new Int32Array(n);
    bandLuInPlace(ab, n, kl, ku, piv);
    expect([...piv].some((p, c) => p !== c)).toBe(true);
    const xb = Float64Array.from(b);
    bandLuSolveInPlace(ab, n, kl, ku, piv, xb);
    const pd = new Int32Array(n);
    luInPlace(dense, n, pd);
    const xd = Float64Array.from(b);
    luSolveInPlace(dense, n, pd, xd);
    for (let i = 0; i < n; i++) {
      expect(xb[i]).toBeCloseTo(xTrue[i], 9);
      expect(xb[i]).toBeCloseTo(xd[i], 10);
    }
  });
  it('reverse Cuthill–McKee narrows the band of a periodic 1D slab (a ring of elements)', () => {
    const p = parseGeneratorParams({ physics: 'advection-diffusion', dim: 1, order: 1, cells: 32, slabs: 2, periodic: true, diffusivity: 0.1 }, 't');
    const { bsr, layout } = generateSystem(p);
    const off = layout.slabOffsets as number[];
    const slab = slabMatrix(bsr, off[0], off[1]);
    const natural = Int32Array.from({ length: slab.nBlockRows }, (_, i) => i);
    const wide = bandwidth(slab, natural), narrow = bandwidth(slab, blockOrdering(slab, 'rcm'));
    expect(wide.kl).toBeGreaterThan(slab.nBlockRows * slab.bs / 2); // the wrap-around coupling
    expect(narrow.kl + narrow.ku).toBeLessThan((wide.kl + wide.ku) / 4);
  });
});

describe('solveBySlabs: every slab method gives the same solution', () => {
  const p = parseGeneratorParams({ physics: 'advection-diffusion', dim: 1, order: 2, cells: 24, slabs: 3, periodic: true, diffusivity: 0.5 }, 't');
  const { bsr, rhs, layout } = generateSystem(p);
  const off = layout.slabOffsets as number[];
  const dense = solveBySlabs(bsr, rhs, off);
  const banded = solveBySlabs(bsr, rhs, off, { maxDenseUnknowns: 0 });
  const gmres = solveBySlabs(bsr, rhs, off, { maxDenseUnknowns: 0, maxBandValues: 0 });
  it('dense LU, banded LU and GMRES + block ILU(0) per slab agree and solve the whole system', () => {
    expect(dense.method).toBe('slab-dense-lu');
    expect(banded.method).toBe('slab-banded-lu');
    expect(gmres.method).toBe('slab-gmres');
    expect(gmres.slabMethods).toEqual({ 'slab-gmres': 3 });
    expect(gmres.iterations).toBeGreaterThan(0);
    for (const out of [dense, banded, gmres]) expect(relResidual(bsr, out.x, rhs)).toBeLessThan(1e-10);
    for (let i = 0; i < rhs.length; i++) {
      expect(banded.x[i]).toBeCloseTo(dense.x[i], 11);
      expect(gmres.x[i]).toBeCloseTo(dense.x[i], 9);
    }
  });
  it('a slab whose iterative solve does not converge ends the solve, naming the slab and the reason', () => {
    const out = solveBySlabs(bsr, rhs, off, { maxDenseUnknowns: 0, maxBandValues: 0, recipe: { ...REFINE_RECIPE, maxIterations: 2 } });
    expect(out.converged).toBe(false);
    expect(out.failure?.slab).toBe(0);
    expect(out.failure?.message).toMatch(/^slab 1 of 3 \(\d+ unknowns\): gmres \+ block-ilu0 stopped \(.+\) after 2 iterations at relative residual/);
  });
});

describe('runRefinementStudy: a failing mesh keeps the finished rows', () => {
  it('returns the rows before the failure and names the mesh', () => {
    const base = parseGeneratorParams({ physics: 'advection-diffusion', dim: 1, order: 1, cells: 8, slabs: 2, periodic: true, diffusivity: 0.5 }, 't');
    const seen: number[] = [];
    // 8 cells: slabs of 48 unknowns go to dense LU; 16 cells: slabs of 96 go to a 2-iteration GMRES
    const study = runRefinementStudy(base, [8, 16, 32], {
      slabSolve: { maxDenseUnknowns: 60, maxBandValues: 0, recipe: { ...REFINE_RECIPE, maxIterations: 2 } },
      onRow: (r) => seen.push(r.cells[0]),
    });
    expect(study.rows.map((r) => r.cells[0])).toEqual([8]);
    expect(seen).toEqual([8]);
    expect(study.failure?.cells).toEqual([16]);
    expect(study.failure?.message).toMatch(/slab 1 of \d+/);
  });
});
