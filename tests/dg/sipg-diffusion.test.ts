/**
 * The symmetric interior penalty (SIPG) part of advection–diffusion (reference-value tier).
 *
 * Symmetry and coercivity: the diffusion part of the space-time matrix, A(ν) − A(0) on one mesh,
 * is ν times the SIPG bilinear form in space, which is symmetric by construction and coercive for
 * a large enough penalty (Arnold, Brezzi, Cockburn & Marini, SIAM J. Numer. Anal. 39(5), 2002,
 * §3–4; Epshteyn & Rivière, J. Comput. Appl. Math. 206, 2007, for the size of σ). With Dirichlet
 * (Nitsche) space boundaries and elements joined by faces with n_x ≠ 0, a function with zero
 * energy has ∇_x u = 0 and no jumps on those faces, so it vanishes: the form is positive definite
 * (derived). Checked densely on small 1D+t, 2D+t and 3D+t meshes: |D − Dᵀ| at round-off, a
 * Cholesky factorization that succeeds (test's own loop) and a smallest eigenvalue > 0 (ml-matrix
 * symmetric eigen-decomposition).
 *
 * Order of accuracy: SIPG for diffusion converges at p + 1 in L² (Arnold, Brezzi, Cockburn &
 * Marini 2002); with DG in time of the same degree and upwinding, p + 1 is the expected rate on
 * these periodic, nearly diffusion-dominated 2D+t cases. Observed on the meshes below: 1.90 (p = 1)
 * and 2.88 (p = 2), pre-asymptotic on such small meshes, so the assertion is p + 3/4.
 *
 * Guards against: SIPG turned into its non-symmetric variant (the sign of the symmetrizing term
 * −∫{∇_x v·n_x}[u] flipped in the matrix and the residual, src/dg/assemble-scalar.ts): the
 * symmetry checks fail (asymmetry of order one). The non-symmetric variant is still coercive and,
 * at these mesh sizes, converges at nearly the same rate (its L² loss for even p shows only
 * asymptotically), so the order test alone would not notice it: it guards the penalty and
 * consistency terms instead (e.g. a dropped consistency term loses convergence).
 */
import { describe, it, expect } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { parseGeneratorParams, generateWithDiscretization } from '../../src/dg/generate.js';
import { runRefinementStudy } from '../../src/dg/refine.js';
import { bsrToDense } from '../precond/helpers.js';

const params = (o: Record<string, unknown>) => parseGeneratorParams(o, 'test');

/** Dense matrix of the diffusion part A(ν) − A(0) of one mesh (n×n row-major). */
function diffusionPart(o: Record<string, unknown>, nu: number): { D: Float64Array; n: number } {
  const base = { physics: 'advection-diffusion', velocity: [0.3, -0.2, 0.1].slice(0, o.dim as number), ...o };
  const withNu = generateWithDiscretization(params({ ...base, diffusivity: nu })).system.bsr;
  const without = generateWithDiscretization(params({ ...base, diffusivity: 0 })).system.bsr;
  expect(Array.from(withNu.colInd)).toEqual(Array.from(without.colInd)); // one pattern, one mesh
  const a = bsrToDense(withNu), b = bsrToDense(without);
  for (let i = 0; i < a.length; i++) a[i] -= b[i];
  return { D: a, n: withNu.nBlockRows * withNu.bs };
}

/** In-place Cholesky of a symmetric n×n matrix (lower triangle); false when a pivot is ≤ 0. */
function cholesky(A: Float64Array, n: number): boolean {
  for (let j = 0; j < n; j++) {
    let s = A[j * n + j];
    for (let k = 0; k < j; k++) s -= A[j * n + k] ** 2;
    if (!(s > 0)) return false;
    const ljj = Math.sqrt(s);
    A[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let t = A[i * n + j];
      for (let k = 0; k < j; k++) t -= A[i * n + k] * A[j * n + k];
      A[i * n + j] = t / ljj;
    }
  }
  return true;
}

describe('SIPG diffusion part A(ν) − A(0): symmetric to round-off and positive definite (Arnold, Brezzi, Cockburn & Marini, SIAM J. Numer. Anal. 39(5), 2002; guards the symmetrizing term)', () => {
  const cases: Array<[string, Record<string, unknown>]> = [
    ['1D+t, p = 2, jittered', { dim: 1, order: 2, cells: 4, slabs: 2, slabThickness: 0.2, jitter: 0.2 }],
    ['2D+t, p = 2, jittered', { dim: 2, order: 2, cells: 2, slabs: 1, slabThickness: 0.3, jitter: 0.15 }],
    ['3D+t, p = 1', { dim: 3, order: 1, cells: [2, 1, 1], slabs: 1, slabThickness: 0.4, jitter: 0.1 }],
  ];
  for (const [label, o] of cases) {
    it(label, () => {
      const nu = 0.3;
      const { D, n } = diffusionPart(o, nu);
      let big = 0, asym = 0;
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < n; j++) {
          big = Math.max(big, Math.abs(D[i * n + j]));
          asym = Math.max(asym, Math.abs(D[i * n + j] - D[j * n + i]));
        }
      }
      expect(big).toBeGreaterThan(1e-3); // the diffusion part is present
      expect(asym / big).toBeLessThan(1e-12);
      const sym = new Float64Array(n * n);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) sym[i * n + j] = 0.5 * (D[i * n + j] + D[j * n + i]);
      const rows = Array.from({ length: n }, (_, i) => Array.from(sym.subarray(i * n, i * n + n)));
      const eig = new EigenvalueDecomposition(new Matrix(rows), { assumeSymmetric: true }).realEigenvalues;
      const lmin = Math.min(...eig), lmax = Math.max(...eig);
      expect(lmin).toBeGreaterThan(1e-8 * lmax);
      expect(cholesky(sym, n)).toBe(true);
    });
  }
  it('the Cholesky and eigenvalue checks above can fail: an indefinite matrix is refused', () => {
    const m = Float64Array.from([2, 3, 3, 2]); // eigenvalues 5 and −1
    expect(cholesky(m.slice(), 2)).toBe(false);
    expect(Math.min(...new EigenvalueDecomposition(new Matrix([[2, 3], [3, 2]]), { assumeSymmetric: true }).realEigenvalues)).toBeCloseTo(-1, 14);
  });
});

describe('advection–diffusion 2D+t converges at p + 1 in L² (SIPG: Arnold, Brezzi, Cockburn & Marini, SIAM J. Numer. Anal. 39(5), 2002)', () => {
  // Periodic decaying wave u = exp(−ν t |k|²) Π sin(2π(x_k − a_k t)) (derived exact solution,
  // src/dg/physics/advection-diffusion.ts); ν|k|²T ≈ 1–1.3 (T = 2 slabs of the coarse mesh), so diffusion shapes the solution.
  const cases: Array<[number, number[], number]> = [[1, [4, 8], 0.125], [2, [3, 6], 1 / 6]];
  for (const [order, sizes, thickness] of cases) {
    it(`p = ${order}, cells ${sizes.join(' → ')}`, () => {
      const base = params({
        physics: 'advection-diffusion', dim: 2, order, cells: sizes[0], slabs: 2, slabThickness: thickness,
        periodic: true, diffusivity: 0.05, velocity: [0.1, 0.05],
      });
      const study = runRefinementStudy(base, sizes);
      expect(study.rows[1].error).toBeLessThan(study.rows[0].error);
      expect(study.rows[1].observedOrder!).toBeGreaterThan(order + 0.75);
    });
  }
});
