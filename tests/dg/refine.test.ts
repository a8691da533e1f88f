import { describe, it, expect } from 'vitest';
import { parseGeneratorParams, resolveGenerator } from '../../src/dg/generate.js';
import { refinedParams, runRefinementStudy } from '../../src/dg/refine.js';
import { solveBySlabs, luInPlace, luSolveInPlace } from '../../src/dg/slab-solve.js';
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
