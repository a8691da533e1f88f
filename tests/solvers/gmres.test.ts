import { describe, it, expect } from 'vitest';
import { gmres } from '../../src/solvers/gmres.js';
import { csrOperator } from '../../src/solvers/operator.js';
import type { Preconditioner } from '../../src/precond/types.js';
import {
  convectionDiffusion, csrFromTriplets, exactInverse, ilu0Double, csrMatVec, maxAbsDiff, noWork, opts, tridiag,
} from './helpers.js';

/** Half a unit in the last printed digit of a published number. */
function printedTolerance(s: string): number {
  const dec = s.includes('.') ? s.split('.')[1].length : 0;
  return 0.5 * 10 ** -dec;
}

describe('gmres: published and derived reference values', () => {
  it('reproduces the MGMRES residual history on tridiag(-1,2,-1), N = 20, b = 21·e20', () => {
    // Source: J. Burkardt, MGMRES test output (listed in shared/references.md, "Krylov and ILU worked
    // examples"): residual norms at iterations 0..13, x0 = 0, unpreconditioned.
    const published = ['21', '9.39149', '5.61249', '3.83406', '2.83164', '2.2014', '1.77482', '1.47029',
      '1.24393', '1.07026', '0.933564', '0.823688', '0.733799', '0.659153'];
    const A = tridiag(20, -1, 2, -1);
    const b = new Float64Array(20);
    b[19] = 21;
    const x = new Float64Array(20);
    const r = gmres(csrOperator(A), b, x, opts({ restart: 20 }));
    expect(r.referenceNorm).toBe(21);
    expect(r.watched).toBe('plain');
    for (let k = 0; k < published.length; k++) {
      expect(Math.abs(r.history[k] * 21 - Number(published[k]))).toBeLessThanOrEqual(printedTolerance(published[k]));
    }
  });

  it('full GMRES converges at step 20 on the N = 20 system, not before', () => {
    // Derived: the Krylov space of a 20×20 nonsingular matrix reaches dimension 20 at step 20, where
    // the GMRES minimum over it is the exact solution; before that, x* = (1..20) needs all of e20's
    // Krylov vectors (A is tridiagonal, so K_k(A, e20) only reaches the last k rows).
    const A = tridiag(20, -1, 2, -1);
    const b = new Float64Array(20);
    b[19] = 21;
    for (const restart of [20, 40]) {
      const x = new Float64Array(20);
      const r = gmres(csrOperator(A), b, x, opts({ restart, rtol: 1e-10 }));
      expect(r.cause).toBe('relative-target');
      expect(r.iterations).toBe(20);
      expect(r.restarts).toBe(0);
      expect(r.history[19]).toBeGreaterThan(1e-3);
      expect(maxAbsDiff(x, Array.from({ length: 20 }, (_, i) => i + 1))).toBeLessThan(1e-9);
      expect(r.trueRelativeResidual).toBeLessThan(1e-10);
    }
  });

  it('Ritz values of a full cycle are the eigenvalues 4 sin²(kπ/42) of tridiag(-1,2,-1), N = 20', () => {
    // Strang, Linear Algebra and Its Applications, §7.4: eigenvalues of T_n are 4 sin²(kπh/2), h = 1/(n+1).
    const A = tridiag(20, -1, 2, -1);
    const b = new Float64Array(20).fill(1);
    b[19] = 21; // has a component along every eigenvector
    const r = gmres(csrOperator(A), b, new Float64Array(20), opts({ restart: 20, rtol: 1e-14 }));
    const exact = Array.from({ length: 20 }, (_, k) => 4 * Math.sin(((k + 1) * Math.PI) / 42) ** 2);
    expect(r.ritz!.re.length).toBe(20);
    expect(maxAbsDiff(r.ritz!.re, exact)).toBeLessThan(1e-8);
    expect(Math.max(...r.ritz!.im.map(Math.abs))).toBeLessThan(1e-8);
  });

  it('reproduces the 5×5 ILU(0) + left-preconditioned GMRES example (ILU(0) test double)', () => {
    // Source: J. Burkardt, MGMRES test output (shared/references.md): ‖M⁻¹b‖ = 12.0830, then 3.67696,
    // then ~2.5e-15, 2 iterations. The ILU(0) here is a local test double (Saad 2003, Alg. 10.4);
    // tests/solvers/registry-examples.test.ts repeats this with the project's ilu0.
    const ia = [1, 4, 5, 7, 8, 10], ja = [1, 4, 5, 2, 1, 3, 4, 2, 5], av = [1, 2, 1, 2, 3, 3, 4, 1, 5];
    const t: Array<[number, number, number]> = [];
    for (let i = 0; i < 5; i++) for (let k = ia[i] - 1; k < ia[i + 1] - 1; k++) t.push([i, ja[k] - 1, av[k]]);
    const A = csrFromTriplets(5, t);
    const b = Float64Array.from([14, 4, 12, 16, 27]);
    const x = new Float64Array(5);
    const r = gmres(csrOperator(A), b, x, opts({ side: 'left', M: ilu0Double(A) }));
    expect(r.watched).toBe('left-preconditioned');
    expect(r.iterations).toBe(2);
    expect(r.cause).toBe('relative-target');
    expect(Math.abs(r.referenceNorm - 12.083)).toBeLessThan(0.5e-4);
    expect(Math.abs(r.history[1] * r.referenceNorm - 3.67696)).toBeLessThan(0.5e-5);
    expect(r.history[2] * r.referenceNorm).toBeLessThan(1e-13);
    expect(maxAbsDiff(x, [1, 2, 3, 4, 5])).toBeLessThan(1e-13);
    expect(r.trueReferenceNorm).toBeCloseTo(Math.hypot(14, 4, 12, 16, 27), 12);
  });
});

describe('gmres: properties', () => {
  const A = convectionDiffusion(12, 0.5, -0.3, 0);
  const n = A.nRows;
  const xStar = Float64Array.from({ length: n }, (_, i) => Math.sin(i + 1));
  const b = csrMatVec(A, xStar);

  it('an exact-inverse preconditioner converges in one iteration (right, left, flexible)', () => {
    for (const o of [opts({ side: 'right' }), opts({ side: 'left' }), opts({ flexible: true })]) {
      const x = new Float64Array(n);
      const r = gmres(csrOperator(A), b, x, { ...o, M: exactInverse(A) });
      expect(r.iterations).toBe(1);
      expect(r.converged).toBe(true);
      expect(maxAbsDiff(x, xStar)).toBeLessThan(1e-10);
    }
  });

  it('starting from the exact solution takes 0 iterations', () => {
    const x = Float64Array.from(xStar);
    const bb = csrMatVec(A, x);
    const r = gmres(csrOperator(A), bb, x, opts());
    expect(r.iterations).toBe(0);
    expect(r.cause).toBe('relative-target');
    expect(r.history).toEqual([0]);
  });

  it('b = 0 gives x = 0, converged at 0 iterations, whatever x0', () => {
    const x = Float64Array.from(xStar);
    const r = gmres(csrOperator(A), new Float64Array(n), x, opts());
    expect(r.iterations).toBe(0);
    expect(r.converged).toBe(true);
    expect(Array.from(x).every((v) => v === 0)).toBe(true);
  });

  it('never modifies b', () => {
    const bCopy = Float64Array.from(b);
    gmres(csrOperator(A), b, new Float64Array(n), opts({ M: ilu0Double(A), side: 'left' }));
    gmres(csrOperator(A), b, new Float64Array(n), opts({ M: ilu0Double(A), flexible: true }));
    expect(Array.from(b)).toEqual(Array.from(bCopy));
  });

  it('maxIterations counts inner iterations in total, whatever the restart', () => {
    const r = gmres(csrOperator(A), b, new Float64Array(n), opts({ restart: 5, maxIterations: 23 }));
    expect(r.cause).toBe('iteration-budget');
    expect(r.iterations).toBe(23);
    expect(r.history.length).toBe(24);
    expect(r.restarts).toBe(4); // cycles of 5, 5, 5, 5, 3
    expect(r.residualChecks.map((c) => c.iteration)).toEqual([5, 10, 15, 20, 23]);
    // the watched residual is the plain one (right preconditioning): estimates match recomputations
    for (const c of r.residualChecks) expect(Math.abs(c.estimate - c.trueValue)).toBeLessThan(1e-10);
    expect(r.residualMismatch).toBe(false);
  });

  it('restarted GMRES converges with a true residual at or below rtol; cgs2 agrees with mgs', () => {
    const xm = new Float64Array(n), xc = new Float64Array(n);
    const rm = gmres(csrOperator(A), b, xm, opts({ restart: 10, rtol: 1e-9 }));
    const rc = gmres(csrOperator(A), b, xc, opts({ restart: 10, rtol: 1e-9, orthogonalization: 'cgs2' }));
    expect(rm.converged && rc.converged).toBe(true);
    expect(rm.trueRelativeResidual).toBeLessThanOrEqual(1e-9);
    expect(rc.iterations).toBe(rm.iterations);
    expect(maxAbsDiff(rm.history, rc.history)).toBeLessThan(1e-8);
    expect(maxAbsDiff(xm, xStar)).toBeLessThan(1e-6);
  });

  it('happy breakdown ends the cycle as convergence, not an error', () => {
    // A = diag(1,1,2,2,3,3): the minimal polynomial has degree 3, so K_3(A, b) is invariant and
    // h_{4,3} = 0 (derived). GMRES(30) must stop at 3 with the exact solution.
    const D = csrFromTriplets(6, [0, 1, 2, 3, 4, 5].map((i) => [i, i, Math.floor(i / 2) + 1] as [number, number, number]));
    const x = new Float64Array(6);
    const r = gmres(csrOperator(D), new Float64Array(6).fill(1), x, opts({ rtol: 1e-13 }));
    expect(r.cause).toBe('relative-target');
    expect(r.iterations).toBe(3);
    expect(maxAbsDiff(x, [1, 1, 0.5, 0.5, 1 / 3, 1 / 3])).toBeLessThan(1e-14);
  });

  it('a preconditioner that changes between applications: FGMRES stays honest, GMRES is flagged', () => {
    // M alternates between two different diagonal scalings (a variable preconditioner).
    let calls = 0;
    const vary: Preconditioner = {
      name: 'alternating', n, variable: true, setup: () => ({ ok: true }), memory: () => ({}), work: noWork,
      apply(r0, z) { calls++; const s = calls % 2 ? 0.25 : 0.1; for (let i = 0; i < n; i++) z[i] = r0[i] * (s + (i % 3) * 0.05); },
    };
    const xf = new Float64Array(n);
    const rf = gmres(csrOperator(A), b, xf, opts({ M: vary, flexible: true, restart: 20, rtol: 1e-8 }));
    expect(rf.method).toBe('fgmres');
    expect(rf.converged).toBe(true);
    expect(rf.trueRelativeResidual).toBeLessThanOrEqual(1e-8);
    expect(rf.residualMismatch).toBe(false);
    calls = 0;
    const rg = gmres(csrOperator(A), b, new Float64Array(n), opts({ M: vary, restart: 20, rtol: 1e-8, maxIterations: 200 }));
    expect(rg.residualMismatch).toBe(true);
  });

  it('NaN in the matrix ends the run as non-finite; nothing throws', () => {
    const bad = convectionDiffusion(4, 0.2, 0.1, 0);
    const values = Float64Array.from(bad.values);
    values[7] = NaN;
    const r = gmres(csrOperator({ ...bad, values }), new Float64Array(16).fill(1), new Float64Array(16), opts());
    expect(r.cause).toBe('non-finite-value');
    expect(r.converged).toBe(false);
  });

  it('a preconditioner returning Inf ends the run as non-finite', () => {
    const inf: Preconditioner = {
      name: 'inf', n, variable: false, setup: () => ({ ok: true }), memory: () => ({}), work: noWork,
      apply(_r, z) { z.fill(Infinity); },
    };
    const r = gmres(csrOperator(A), b, new Float64Array(n), opts({ M: inf }));
    expect(r.cause).toBe('non-finite-value');
  });

  it('the onIteration monitor can stop a run; stopping is reported as iteration-budget with a message', () => {
    const seen: number[] = [];
    const r = gmres(csrOperator(A), b, new Float64Array(n), opts({
      onIteration: (it) => { seen.push(it); return it === 4; },
    }));
    expect(seen).toEqual([0, 1, 2, 3, 4]);
    expect(r.cause).toBe('iteration-budget');
    expect(r.failure?.message).toMatch(/onIteration/);
  });

  it('reports Krylov and work bytes by named buffer and counts preconditioner applications', () => {
    const r = gmres(csrOperator(A), b, new Float64Array(n), opts({ restart: 10, M: ilu0Double(A), flexible: true }));
    expect(r.memory.buffers.krylov.basis).toBe(11 * n * 8);
    expect(r.memory.buffers.krylov.flexibleBasis).toBe(10 * n * 8);
    expect(r.memory.krylovBytes).toBeGreaterThan(21 * n * 8);
    expect(r.memory.buffers.work.residual).toBe(n * 8);
    expect(r.timing.preconditionerApplications).toBe(r.iterations); // FGMRES: one per iteration
    // Peak RSS holds at least the buffers counted here.
    expect(Number.isFinite(r.memory.peakBytes)).toBe(true);
    expect(r.memory.peakBytes).toBeGreaterThan(r.memory.krylovBytes + r.memory.workBytes);
  });

  it('rejects wrong lengths and aliasing with one-line messages', () => {
    const op = csrOperator(A);
    expect(() => gmres(op, new Float64Array(3), new Float64Array(n), opts())).toThrow(/right-hand side has length 3, expected 144/);
    expect(() => gmres(op, b, b, opts())).toThrow(/different arrays/);
    expect(() => gmres(op, b, new Float64Array(n), opts({ restart: 0 }))).toThrow(/restart/);
    expect(() => gmres(op, b, new Float64Array(n), opts({ flexible: true, side: 'left' }))).toThrow(/right only/);
  });
});

describe('gmres: a preconditioner that throws', () => {
  it('ends the run as preconditioner-error with the message; nothing throws', () => {
    const A = tridiag(10, -1, 2, -1);
    let calls = 0;
    const M: Preconditioner = {
      name: 'fragile', n: 10, variable: false, setup: () => ({ ok: true }), memory: () => ({}), work: noWork,
      apply(r, z) { if (++calls === 3) throw new Error('inner solve exploded'); z.set(r); },
    };
    const r = gmres(csrOperator(A), new Float64Array(10).fill(1), new Float64Array(10), opts({ M }));
    expect(r.cause).toBe('preconditioner-error');
    expect(r.failure?.message).toBe('fragile.apply: inner solve exploded');
    expect(r.converged).toBe(false);
  });
});
