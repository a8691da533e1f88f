/**
 * GMRES branches the reference-value tests in gmres.test.ts do not reach: Ritz values after
 * restarts, the basis-size limit, a singular Hessenberg matrix, left preconditioning from a
 * nonzero x₀, a preconditioner that annihilates the residual, and the left-preconditioned residual
 * recorded at each restart. Each expected value is computed independently in the test (named
 * beside it) or worked out by hand. Found by mutation testing (README, "Mutation testing").
 */
import { describe, it, expect } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { gmres } from '../../src/solvers/gmres.js';
import { csrOperator } from '../../src/solvers/operator.js';
import type { LinearOperator } from '../../src/solvers/types.js';
import type { Preconditioner } from '../../src/precond/types.js';
import { csrFromTriplets, csrMatVec, ilu0Double, maxAbsDiff, noWork, opts, tridiag } from './helpers.js';

/** The 5×5 matrix of J. Burkardt's MGMRES ILU(0) example (shared/references.md), 1-based CSR. */
function burkardt5() {
  const ia = [1, 4, 5, 7, 8, 10], ja = [1, 4, 5, 2, 1, 3, 4, 2, 5], av = [1, 2, 1, 2, 3, 3, 4, 1, 5];
  const t: Array<[number, number, number]> = [];
  for (let i = 0; i < 5; i++) for (let k = ia[i] - 1; k < ia[i + 1] - 1; k++) t.push([i, ja[k] - 1, av[k]]);
  return { A: csrFromTriplets(5, t), b: Float64Array.from([14, 4, 12, 16, 27]) };
}

describe('gmres: Ritz values are those of the first cycle, also when the run restarts', () => {
  it('GMRES(5) on tridiag(−1, 2, −1), N = 20: the eigenvalues of the test\'s own 5-step Arnoldi matrix', () => {
    // Reference: Arnoldi with modified Gram–Schmidt from v₁ = b/‖b‖ (Saad 2003, Alg. 6.2), written
    // here, and the eigenvalues of its 5×5 Hessenberg matrix by ml-matrix (EISPACK hqr2 port).
    const N = 20, m = 5;
    const A = tridiag(N, -1, 2, -1);
    const b = Float64Array.from({ length: N }, (_, i) => 1 + 0.1 * i);
    const V: Float64Array[] = [];
    const H = Matrix.zeros(m, m);
    const nb = Math.hypot(...b);
    V.push(b.map((v) => v / nb));
    for (let j = 0; j < m; j++) {
      const w = csrMatVec(A, V[j]);
      for (let i = 0; i <= j; i++) {
        let h = 0;
        for (let q = 0; q < N; q++) h += w[q] * V[i][q];
        H.set(i, j, h);
        for (let q = 0; q < N; q++) w[q] -= h * V[i][q];
      }
      const h = Math.hypot(...w);
      if (j + 1 < m) H.set(j + 1, j, h);
      V.push(w.map((v) => v / h));
    }
    const want = new EigenvalueDecomposition(H).realEigenvalues.slice().sort((p, q) => p - q);
    const r = gmres(csrOperator(A), b, new Float64Array(N), opts({ restart: m, rtol: 1e-10 }));
    expect(r.converged).toBe(true);
    expect(r.restarts).toBeGreaterThan(2); // the later cycles have other Hessenberg matrices
    const got = r.ritz!.re.slice().sort((p, q) => p - q);
    expect(got.length).toBe(m);
    expect(maxAbsDiff(got, want)).toBeLessThan(1e-10);
    expect(Math.max(...r.ritz!.im.map(Math.abs))).toBe(0); // a symmetric A gives a real spectrum
  });

  it('ritz: false computes none', () => {
    const A = tridiag(8, -1, 2, -1);
    const r = gmres(csrOperator(A), new Float64Array(8).fill(1), new Float64Array(8), opts({ ritz: false }));
    expect(r.converged).toBe(true);
    expect(r.ritz).toBeUndefined();
  });
});

describe('gmres: the basis-size limit is checked before allocating', () => {
  it('restart = n = 65536 needs 65537 · 65536 > 2³² − 1 entries: a one-line error, no allocation', () => {
    // (m + 1)·n = 65537 · 65536 = 4 295 032 832 > 4 294 967 295 (derived); allocating it would need 34 GB.
    const n = 65536;
    const identity: LinearOperator = { n, apply: (x, y) => { y.set(x); } };
    expect(() => gmres(identity, new Float64Array(n).fill(1), new Float64Array(n), opts({ restart: n })))
      .toThrow(/^gmres: option restart: a basis of 65537 vectors of length 65536 is too large$/);
  });
});

describe('gmres: a singular operator ends as method-breakdown at the step where H is singular', () => {
  it('A = diag(1, 0), b = e₂: A v₁ = 0 at step 1', () => {
    // v₁ = e₂ and A v₁ = 0, so the first Hessenberg column is zero (no rotation can make its
    // diagonal nonzero) and the least-squares problem is singular (derived). x stays x₀ = 0.
    const A = csrFromTriplets(2, [[0, 0, 1], [1, 1, 0]]);
    const x = new Float64Array(2);
    const r = gmres(csrOperator(A), Float64Array.of(0, 1), x, opts());
    expect(r.cause).toBe('method-breakdown');
    expect(r.failure?.message).toBe('gmres: the Hessenberg matrix is singular at step 1 (operator singular on the Krylov space)');
    expect(Array.from(x)).toEqual([0, 0]);
    expect(r.trueRelativeResidual).toBe(1);
    // Work by hand (README "Work model", the same items as work-counts.test.ts's diag(1, 2) case, n = 2,
    // nnz 2, SpMV 4 fl / 68 B): start 14 fl / 196 B; v₁ scaled 2 / 32; step 1: SpMV, ‖w‖ (4, 16),
    // dot (4, 32), axpyNorm2 (8, 48), no scale (breakdown), one rotation with d = 0: 3 + 2 flops (no
    // divisions) → 25 fl / 164 B; back substitution stops at once: 0; true residual 10 fl / 132 B.
    expect(r.work.solve).toEqual({ matvecs: 3, preconditionerApplies: 0, innerIterations: 0, flops: 51, bytes: 524 });
  });
});

describe('gmres: a singular Hessenberg matrix found at the second step of a cycle', () => {
  it('A = [[0, 1], [0, 0]] (nilpotent), b = e₂: K₂ = span(e₂, e₁), A e₁ = 0, singular at step 2', () => {
    // Derived: v₁ = e₂, A v₁ = e₁ = v₂ (h₁₁ = 0, h₂₁ = 1), A v₂ = 0 (h₁₂ = h₂₂ = 0, breakdown); after the
    // rotations R = [[1, 0], [0, 0]]: the second diagonal entry is zero. All exact in floating point.
    const A = csrFromTriplets(2, [[0, 1, 1]]);
    const x = new Float64Array(2);
    const r = gmres(csrOperator(A), Float64Array.of(0, 1), x, opts());
    expect(r.cause).toBe('method-breakdown');
    expect(r.iterations).toBe(2);
    expect(r.failure?.message).toBe('gmres: the Hessenberg matrix is singular at step 2 (operator singular on the Krylov space)');
    expect(Array.from(x)).toEqual([0, 0]);
    // Work by hand (README "Work model"; n = 2, nnz 1: SpMV 2 fl, 12 + 12 + 32 = 56 B):
    // start: scan 16 B, ‖b‖ (4 fl, 16 B), residual SpMV + subtraction (2 fl, 48 B) + norm (4, 16), copy 32 B
    //        → 12 fl, 184 B; v₁ scaled 2 fl, 32 B;
    // step 1: SpMV, ‖w‖ (4, 16), dot (4, 32), axpyNorm2 (8, 48), scale (2, 32), rotation 3 + 2 + 2 → 27 fl, 184 B;
    // step 2: SpMV, ‖w‖, dot, axpyDot (8, 64), axpyNorm2, no scale, rotations 6 + 3 + 0 + 2 → 37 fl, 216 B;
    // back substitution stops at its first row (k − i − 1 = 0 products): 0; true residual 8 fl, 120 B.
    expect(r.work.solve).toEqual({ matvecs: 4, preconditionerApplies: 0, innerIterations: 0, flops: 86, bytes: 736 });
  });
});

describe('gmres: the rotation buffers are counted as allocated', () => {
  it('restart m: cs, sn, y (m each), g and the Gram–Schmidt scratch (m + 1 each): (5m + 2) doubles', () => {
    const A = tridiag(12, -1, 2, -1);
    const r = gmres(csrOperator(A), new Float64Array(12).fill(1), new Float64Array(12), opts({ restart: 7 }));
    expect(r.memory.buffers.krylov.rotations).toBe((5 * 7 + 2) * 8);
  });
});

describe('gmres, left preconditioning: reference norm and recorded residuals', () => {
  it('relativeTo rhs from a nonzero x₀: the reference is still ‖M⁻¹b‖ = 12.0830 (Burkardt\'s ILU(0) example)', () => {
    // Source: J. Burkardt, MGMRES test output (shared/references.md): ‖M⁻¹b‖ = 12.0830 for this
    // matrix with ILU(0); the reference norm does not depend on x₀ (relativeTo 'rhs').
    const { A, b } = burkardt5();
    const x = Float64Array.of(1, 1, 1, 1, 1);
    const r = gmres(csrOperator(A), b, x, opts({ side: 'left', M: ilu0Double(A) }));
    expect(Math.abs(r.referenceNorm - 12.083)).toBeLessThan(0.5e-4);
    expect(r.cause).toBe('relative-target');
    expect(maxAbsDiff(x, [1, 2, 3, 4, 5])).toBeLessThan(1e-12);
  });

  it('relativeTo start-residual: the reference is ‖M⁻¹r₀‖, computed here from r₀ = b − A x₀', () => {
    const { A, b } = burkardt5();
    const M = ilu0Double(A);
    const x0 = Float64Array.of(1, 0, 2, 0, 1);
    const Ax = csrMatVec(A, x0);
    const r0 = b.map((v, i) => v - Ax[i]);
    const z = new Float64Array(5);
    M.apply(r0, z);
    const r = gmres(csrOperator(A), b, x0.slice(), opts({ side: 'left', M, relativeTo: 'start-residual' }));
    expect(r.referenceNorm).toBeCloseTo(Math.hypot(...z), 12);
    expect(r.history[0]).toBe(1);
    expect(r.converged).toBe(true);
  });

  it('each restart records ‖M⁻¹(b − A x)‖ / ‖M⁻¹b‖ as the watched value, recomputed here from the final x', () => {
    const A = tridiag(30, -1, 2.5, -1.3);
    const M = ilu0Double(tridiag(30, -1, 2.5, 0)); // lower bidiagonal part: an inexact preconditioner
    const b = Float64Array.from({ length: 30 }, (_, i) => Math.cos(i));
    const x = new Float64Array(30);
    const r = gmres(csrOperator(A), b, x, opts({ side: 'left', M, restart: 3, maxIterations: 9 }));
    expect(r.cause).toBe('iteration-budget');
    expect(r.residualChecks.length).toBe(3);
    const Mb = new Float64Array(30), z = new Float64Array(30);
    M.apply(b, Mb);
    const Ax = csrMatVec(A, x);
    M.apply(b.map((v, i) => v - Ax[i]), z);
    const last = r.residualChecks.at(-1)!;
    expect(last.iteration).toBe(9);
    expect(last.watchedValue).toBeCloseTo(Math.hypot(...z) / Math.hypot(...Mb), 12);
    expect(last.trueValue).toBeCloseTo(Math.hypot(...b.map((v, i) => v - Ax[i])) / Math.hypot(...b), 12);
    // left GMRES minimizes the preconditioned residual: its recursive estimate equals the recomputation
    expect(Math.abs(last.estimate - last.watchedValue!)).toBeLessThan(1e-10);
  });

  it('a preconditioner that maps the residual to zero is a breakdown, not convergence', () => {
    const A = tridiag(6, -1, 2, -1);
    const zero: Preconditioner = {
      name: 'zero', n: 6, variable: false, setup: () => ({ ok: true }), memory: () => ({}), work: noWork,
      apply(_r, z) { z.fill(0); },
    };
    const r = gmres(csrOperator(A), new Float64Array(6).fill(1), new Float64Array(6), opts({ side: 'left', M: zero }));
    expect(r.cause).toBe('method-breakdown');
    expect(r.converged).toBe(false);
    expect(r.failure?.message).toBe('the preconditioner maps the residual to zero');
    expect(r.iterations).toBe(0);
    expect(r.history).toEqual([Infinity]); // no relative residual exists with a zero reference
  });
});

describe('gmres: options that shape the run', () => {
  const A = tridiag(20, -1, 2, -1);
  const b = Float64Array.from({ length: 20 }, (_, i) => Math.sin(i + 1));

  it('side left without a preconditioner is plain GMRES: the plain residual is watched', () => {
    const x1 = new Float64Array(20), x2 = new Float64Array(20);
    const r1 = gmres(csrOperator(A), b, x1, opts({ side: 'left' }));
    const r2 = gmres(csrOperator(A), b, x2, opts());
    expect(r1.watched).toBe('plain');
    expect(r1.history).toEqual(r2.history);
    expect(Array.from(x1)).toEqual(Array.from(x2));
  });

  it('a restart above n is cut to n: the basis holds n + 1 vectors', () => {
    const r = gmres(csrOperator(A), b, new Float64Array(20), opts({ restart: 50 }));
    expect(r.converged).toBe(true);
    expect(r.memory.buffers.krylov.basis).toBe(21 * 20 * 8);
  });

  it('maxIterations 0 returns x₀ untouched with the iteration-budget cause', () => {
    const x = Float64Array.from({ length: 20 }, () => 0.5);
    const r = gmres(csrOperator(A), b, x, opts({ maxIterations: 0 }));
    expect(r.cause).toBe('iteration-budget');
    expect(r.iterations).toBe(0);
    expect(r.history.length).toBe(1);
    expect(Array.from(x).every((v) => v === 0.5)).toBe(true);
  });
});

describe('gmres work counts with classical Gram–Schmidt twice (cgs2)', () => {
  it('A = diag(1, 2), b = (1, 1): every count by hand, from the MGS count of tests/solvers/work-counts.test.ts', () => {
    // work-counts.test.ts derives 108 flops and 912 bytes for this solve with MGS (README "Work model";
    // n = 2, 8-byte doubles). Its orthogonalization part: j = 0 dot (4 fl, 32 B) + axpyNorm2 (8, 48);
    // j = 1 dot (4, 32) + axpyDot (8, 64) + axpyNorm2 (8, 48): 32 flops, 224 bytes.
    // cgs2 instead, per step j: 2(j+1) dots (4 fl, 32 B each), 2(j+1) axpys (4 fl, 48 B each),
    // 2(j+1) additions into H, one norm (4 fl, 16 B): j = 0 → 22 fl, 176 B; j = 1 → 40 fl, 336 B.
    // Total: 108 − 32 + 62 = 138 flops; 912 − 224 + 512 = 1200 bytes.
    const A = csrOperator(csrFromTriplets(2, [[0, 0, 1], [1, 1, 2]]));
    const r = gmres(A, Float64Array.of(1, 1), new Float64Array(2), opts({ restart: 30, ritz: false, orthogonalization: 'cgs2' }));
    expect(r.iterations).toBe(2);
    expect(r.cause).toBe('relative-target');
    expect(r.work.solve).toEqual({ matvecs: 4, preconditionerApplies: 0, innerIterations: 0, flops: 138, bytes: 1200 });
  });
});

describe('gmres: more reported facts', () => {
  it('the method is named gmres, and a monitor stop at iteration 0 carries its message', () => {
    const A = tridiag(6, -1, 2, -1);
    const r = gmres(csrOperator(A), new Float64Array(6).fill(1), new Float64Array(6), opts({ onIteration: () => true }));
    expect(r.method).toBe('gmres');
    expect(r.cause).toBe('iteration-budget');
    expect(r.iterations).toBe(0);
    expect(r.failure?.message).toBe('stopped by the onIteration monitor');
  });

  it('happy breakdown is relative to ‖A v‖: A = 10⁸·diag(1, 1, 2, 2, 3, 3) still stops at step 3', () => {
    // As gmres.test.ts's diag(1, 1, 2, 2, 3, 3) case (minimal polynomial of degree 3, derived), scaled:
    // round-off in h_{4,3} scales with ‖A v‖, so the test h ≤ 1e-14·‖A v‖ must scale with it.
    const D = csrFromTriplets(6, [0, 1, 2, 3, 4, 5].map((i) => [i, i, 1e8 * (Math.floor(i / 2) + 1)] as [number, number, number]));
    const x = new Float64Array(6);
    const r = gmres(csrOperator(D), new Float64Array(6).fill(1e8), x, opts({ rtol: 1e-13 }));
    expect(r.iterations).toBe(3);
    expect(r.cause).toBe('relative-target');
    expect(maxAbsDiff(x, [1, 1, 0.5, 0.5, 1 / 3, 1 / 3])).toBeLessThan(1e-13);
  });

  it('right preconditioning with M = I: the counts of the unpreconditioned diag(1, 2) solve plus the update through M', () => {
    // work-counts.test.ts: 108 flops, 912 bytes without M. With a right preconditioner the update
    // is w ← 0 (16 B), w += Σ y_l v_l (2 axpys, as before x +=), z = M w, x += z (one axpy: 4 fl, 48 B):
    // +4 flops, +64 bytes. M's own work (applies included) comes from M.work(), zero for this double;
    // the solver meters 3 applications (2 steps + the update).
    const I: Preconditioner = {
      name: 'identity', n: 2, variable: false, setup: () => ({ ok: true }), memory: () => ({}), work: noWork,
      apply(r, z) { z.set(r); },
    };
    const A = csrOperator(csrFromTriplets(2, [[0, 0, 1], [1, 1, 2]]));
    const x = new Float64Array(2);
    const r = gmres(A, Float64Array.of(1, 1), x, opts({ restart: 30, ritz: false, M: I }));
    expect(r.iterations).toBe(2);
    expect(maxAbsDiff(x, [1, 0.5])).toBeLessThan(1e-15);
    expect(r.work.solve).toEqual({ matvecs: 4, preconditionerApplies: 0, innerIterations: 0, flops: 112, bytes: 976 });
    expect(r.timing.preconditionerApplications).toBe(3);
  });
});
