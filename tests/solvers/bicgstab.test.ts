import { describe, it, expect } from 'vitest';
import { bicgstab } from '../../src/solvers/bicgstab.js';
import { gmres } from '../../src/solvers/gmres.js';
import { csrOperator } from '../../src/solvers/operator.js';
import { convectionDiffusion, csrFromTriplets, exactInverse, ilu0Double, csrMatVec, maxAbsDiff, opts } from './helpers.js';

describe('bicgstab and fgmres on a non-symmetric convection–diffusion matrix', () => {
  // MVMMCD rule (Matrix Market NEP collection, shared/references.md): β = 0.6, γ = −0.4, σ = 0 on a
  // 20×20 grid; |β|, |γ| < 1 so the eigenvalues 4 − 2√(1−β²)cos kπh − 2√(1−γ²)cos lπh are real and positive.
  const A = convectionDiffusion(20, 0.6, -0.4, 0);
  const n = A.nRows;
  const xStar = Float64Array.from({ length: n }, (_, i) => Math.cos(0.1 * i));
  const b = csrMatVec(A, xStar);

  it('bicgstab converges with true residual ≤ rtol (unpreconditioned and with ILU(0))', () => {
    for (const M of [undefined, ilu0Double(A)]) {
      const x = new Float64Array(n);
      const r = bicgstab(csrOperator(A), b, x, opts({ M, rtol: 1e-9 }));
      expect(r.cause).toBe('relative-target');
      expect(r.trueRelativeResidual).toBeLessThanOrEqual(1e-9);
      expect(maxAbsDiff(x, xStar)).toBeLessThan(1e-6);
      expect(r.history.length).toBe(r.iterations + 1);
      if (M) expect(r.timing.preconditionerApplications).toBeGreaterThanOrEqual(2 * r.iterations - 1);
    }
  });

  it('fgmres with ILU(0) converges with true residual ≤ rtol', () => {
    const x = new Float64Array(n);
    const r = gmres(csrOperator(A), b, x, opts({ M: ilu0Double(A), flexible: true, restart: 10, rtol: 1e-9 }));
    expect(r.method).toBe('fgmres');
    expect(r.converged).toBe(true);
    expect(r.trueRelativeResidual).toBeLessThanOrEqual(1e-9);
  });

  it('exact inverse: one iteration; exact start: zero iterations; b unmodified', () => {
    const bCopy = Float64Array.from(b);
    const x = new Float64Array(n);
    const r = bicgstab(csrOperator(A), b, x, opts({ M: exactInverse(A) }));
    expect(r.iterations).toBe(1);
    expect(r.converged).toBe(true);
    const r0 = bicgstab(csrOperator(A), csrMatVec(A, xStar), Float64Array.from(xStar), opts());
    expect(r0.iterations).toBe(0);
    expect(Array.from(b)).toEqual(Array.from(bCopy));
  });

  it('reports breakdown when (r̂, A r) = 0 (skew-symmetric A, r̂ = r)', () => {
    // Derived: for A = [[0, 1], [−1, 0]], (r, A r) = 0 for every r, so α = ρ/(r̂, v) is undefined.
    const S = csrFromTriplets(2, [[0, 1, 1], [1, 0, -1]]);
    const r = bicgstab(csrOperator(S), Float64Array.from([1, 0]), new Float64Array(2), opts());
    expect(r.cause).toBe('method-breakdown');
    expect(r.failure?.message).toMatch(/bicgstab/);
    expect(r.converged).toBe(false);
  });

  it('counts iterations against maxIterations', () => {
    const r = bicgstab(csrOperator(A), b, new Float64Array(n), opts({ maxIterations: 3 }));
    expect(r.cause).toBe('iteration-budget');
    expect(r.iterations).toBe(3);
    expect(r.residualChecks.at(-1)!.iteration).toBe(3);
  });
});
