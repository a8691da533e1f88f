/**
 * Asymptotic convergence factors of preconditioned stationary iterations x ← x + M⁻¹(b − A x),
 * measured with our own small loop (independent of the solvers area): with b = 0 the iterate is
 * the error, and ‖e_{k+1}‖/‖e_k‖ tends to the spectral radius of I − M⁻¹A (power iteration).
 */
import { describe, expect, it } from 'vitest';
import type { Csr } from '../../src/sparse/types.js';
import type { Preconditioner } from '../../src/precond/types.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { poisson1d, poisson2d, randomVector, recipe, csrMatVec, systemOfCsr } from './helpers.js';
import type { Recipe } from '../../src/solvers/recipe.js';

function measuredRate(A: Csr, M: Preconditioner, steps: number): number {
  const n = A.nRows;
  const x = randomVector(n, 99);
  const z = new Float64Array(n);
  let rate = 0;
  for (let k = 0; k < steps; k++) {
    const before = Math.hypot(...x);
    const r = csrMatVec(A, x);
    for (let i = 0; i < n; i++) r[i] = -r[i];
    M.apply(r, z);
    for (let i = 0; i < n; i++) x[i] += z[i];
    const after = Math.hypot(...x);
    rate = after / before;
    for (let i = 0; i < n; i++) x[i] /= after; // keep the iterate at unit size
  }
  return rate;
}

function made(A: Csr, over: Partial<Recipe>): Preconditioner {
  const M = createPreconditioner(systemOfCsr(A, 1), recipe(over));
  expect(M.setup().ok).toBe(true);
  return M;
}

describe('1D Poisson T_21, h = 1/22 (Strang, Linear Algebra and Its Applications, §7.4; Young 1971)', () => {
  const A = poisson1d(21);
  it('point Jacobi: ρ_J = cos(πh) = 0.9898214419', () => {
    expect(measuredRate(A, made(A, { preconditioner: 'jacobi' }), 1500)).toBeCloseTo(0.9898214419, 8);
  });
  it('block Gauss–Seidel with bs = 1 (forward sweep): ρ_GS = cos²(πh) = 0.9797464868', () => {
    expect(measuredRate(A, made(A, { preconditioner: 'block-gs', sweep: 'forward' }), 1500)).toBeCloseTo(0.9797464868, 8);
  });
  it('block Jacobi with bs = 1 equals point Jacobi: ρ = 0.9898214419', () => {
    expect(measuredRate(A, made(A, { preconditioner: 'block-jacobi' }), 1500)).toBeCloseTo(0.9898214419, 8);
  });
  it('two forward sweeps per application square the factor: ρ = cos⁴(πh) (derived)', () => {
    expect(measuredRate(A, made(A, { preconditioner: 'block-gs', sweeps: 2 }), 800)).toBeCloseTo(0.9797464868 ** 2, 8);
  });
  it('SOR with ω = 1.5 < ω_opt: ρ = largest λ with λ^½ = (ωμ + √(ω²μ² − 4(ω−1)))/2, μ = cos πh (Young 1971, derived from λ + ω − 1 = ωμλ^½)', () => {
    const mu = 0.9898214419, w = 1.5;
    const s = (w * mu + Math.sqrt(w * w * mu * mu - 4 * (w - 1))) / 2;
    expect(measuredRate(A, made(A, { preconditioner: 'block-gs', omega: w }), 2500)).toBeCloseTo(s * s, 7);
  });
});

describe('2D 5-point Laplacian, m = 3 (Knabner & Angermann, Numerical Methods for Elliptic and Parabolic PDEs, 2003, ch. 5)', () => {
  const A = poisson2d(3);
  it('point Jacobi: ρ_J = 1/√2', () => {
    expect(measuredRate(A, made(A, { preconditioner: 'jacobi' }), 300)).toBeCloseTo(Math.SQRT1_2, 9);
  });
  it('block Gauss–Seidel with bs = 1: ρ_GS = 1/2', () => {
    expect(measuredRate(A, made(A, { preconditioner: 'block-gs' }), 300)).toBeCloseTo(0.5, 9);
  });
});
