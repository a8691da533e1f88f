/**
 * Newton's method on the generated Euler systems (src/dg/newton.ts), and the reduced order check of
 * the isentropic vortex (Shu, NASA/CR-97-206253 / ICASE 97-65, 1997: the exact solution is the
 * vortex advected by the free stream). With the exact Jacobian, Newton's iterates converge
 * quadratically near the solution (Kelley, Iterative Methods for Linear and Nonlinear Equations,
 * SIAM 1995, Theorem 5.1.2): the observed order log(r_{k+1}/r_k)/log(r_k/r_{k−1}) approaches 2,
 * where a frozen or wrong Jacobian gives 1. The DG L² error converges at order ≥ p + ½
 * (Johnson & Pitkäranta, Math. Comp. 46, 1986, for the linear case; the expected rate of smooth
 * nonlinear problems, common practice). The full study (p = 1 and 2, three meshes) is
 * bench/euler-vortex-order.ts; this file keeps the smallest meshes that show the behaviour.
 */
import { describe, it, expect } from 'vitest';
import { buildDiscretization, generateSystem, parseGeneratorParams, type GeneratorParams } from '../../src/dg/generate.js';
import { assembleDg } from '../../src/dg/assemble.js';
import { newtonSolve, type NewtonLinearization } from '../../src/dg/newton.js';
import { projectFunction } from '../../src/dg/projection.js';
import { runRefinementStudy } from '../../src/dg/refine.js';
import { solveBySlabs } from '../../src/dg/slab-solve.js';
import type { NonlinearSystemPhysics } from '../../src/dg/physics/types.js';

const vortex = (o: Record<string, unknown> = {}): GeneratorParams => parseGeneratorParams({
  physics: 'euler', state: 'vortex', dim: 2, order: 1, cells: 4, extent: [10, 10], periodic: [true, true],
  slabs: 1, slabThickness: 0.25, ...o,
}, 'test');

function projected(params: GeneratorParams) {
  const { disc } = buildDiscretization(params);
  const physics = disc.physics as NonlinearSystemPhysics;
  const U0 = projectFunction(disc.mesh, params.order, physics.nEquations, disc.ordering.inv, physics.state!);
  return { disc, U0 };
}

/** GMRES + block ILU(0) per slab (to 1e-12): on these small periodic slabs far cheaper than the banded LU. */
const slabSolve = { maxDenseUnknowns: 0, maxBandValues: 0 };

function norm(v: Float64Array): number {
  let s = 0;
  for (const x of v) s += x * x;
  return Math.sqrt(s);
}

describe('newtonSolve on the isentropic vortex (2D+t, p = 1, 4×4 cells, periodic)', () => {
  for (const flux of ['roe', 'llf']) {
    it(`${flux}: converges to ‖R‖/‖R₀‖ ≤ 1e-10 with full steps, quadratically in the last steps`, () => {
      const params = vortex({ flux, jitter: flux === 'llf' ? 0.1 : 0 });
      const { disc, U0 } = projected(params);
      const copy = Float64Array.from(U0);
      const result = newtonSolve(disc, U0, { slabSolve });
      expect(result.cause).toBe('converged');
      expect(result.converged).toBe(true);
      expect(Array.from(U0)).toEqual(Array.from(copy)); // the initial state is not modified
      expect(result.iterations).toBeGreaterThanOrEqual(2);
      expect(result.iterations).toBeLessThanOrEqual(6);
      for (const s of result.steps) expect(s.stepLength).toBe(1);
      // the final residual, recomputed independently of the loop
      const R = assembleDg(disc, result.state, { matrix: false }).residual;
      expect(norm(R) / result.initialResidualNorm).toBeLessThanOrEqual(1e-10);
      expect(norm(R)).toBeCloseTo(result.finalResidualNorm, 14);
      // observed convergence order between successive steps; quadratic gives 2, linear 1
      const r = result.residualNorms;
      const orders: number[] = [];
      for (let k = 1; k + 1 < r.length; k++) orders.push(Math.log(r[k + 1]! / r[k]!) / Math.log(r[k]! / r[k - 1]!));
      expect(Math.max(...orders)).toBeGreaterThan(1.8);
      // the solution moved away from the projection (the DG solution is not the projected exact one)
      let diff = 0;
      for (let i = 0; i < U0.length; i++) diff = Math.max(diff, Math.abs(result.state[i]! - U0[i]!));
      expect(diff).toBeGreaterThan(1e-3);
    });
  }

  it('the first linearization is the generated system (Jacobian and −residual at the projected state)', () => {
    const params = vortex();
    const system = generateSystem(params);
    const { disc, U0 } = projected(params);
    const seen: NewtonLinearization[] = [];
    const result = newtonSolve(disc, U0, { slabSolve, maxIterations: 1, onJacobian: (lin) => seen.push({ ...lin, jacobian: { ...lin.jacobian, values: Float64Array.from(lin.jacobian.values) }, rhs: Float64Array.from(lin.rhs) }) });
    expect(result.cause).toBe('iteration-limit');
    expect(result.iterations).toBe(1);
    expect(seen.map((s) => s.iteration)).toEqual([0]);
    expect(Array.from(seen[0]!.jacobian.values)).toEqual(Array.from(system.bsr.values));
    expect(Array.from(seen[0]!.rhs)).toEqual(Array.from(system.rhs));
    // one Newton step = the generated system's solution added to the state
    const dx = solveBySlabs(system.bsr, system.rhs, system.layout.slabOffsets!, slabSolve).x;
    for (let i = 0; i < dx.length; i += 11) expect(result.state[i]).toBeCloseTo(U0[i]! + dx[i]!, 10);
  });

  it('pseudo-time (M/Δτ on the Jacobian) damps the steps: the residual falls far slower than with plain Newton', () => {
    const params = vortex();
    const { disc, U0 } = projected(params);
    const plain = newtonSolve(disc, U0, { slabSolve, maxIterations: 2 });
    const ptc = newtonSolve(disc, U0, { slabSolve, pseudoCfl: 1, maxIterations: 2 });
    expect(ptc.cause).toBe('iteration-limit');
    for (const s of ptc.steps) expect(s.stepLength).toBe(1);
    const reduction = (r: { residualNorms: number[] }) => r.residualNorms[2]! / r.residualNorms[0]!;
    expect(reduction(ptc)).toBeGreaterThan(100 * reduction(plain));
    expect(reduction(ptc)).toBeLessThan(1);
  });
});

describe('newtonSolve: causes and options', () => {
  const params = vortex();
  const { disc, U0 } = projected(params);
  it('a linear solve that does not converge stops with linear-solve-failed and its message', () => {
    const r = newtonSolve(disc, U0, { linearSolve: (_J, rhs) => ({ x: new Float64Array(rhs.length), converged: false, method: 'test', message: 'slab 1 of 1: stopped' }) });
    expect(r.cause).toBe('linear-solve-failed');
    expect(r.converged).toBe(false);
    expect(r.message).toBe('slab 1 of 1: stopped');
    expect(r.iterations).toBe(0);
  });
  it('a direction that does not decrease the residual stops with no-decrease after the halvings', () => {
    // the negated Newton step is an ascent direction for ‖R‖
    const r = newtonSolve(disc, U0, {
      maxBacktracks: 3,
      linearSolve: (J, rhs, off) => { const s = solveBySlabs(J, rhs, off, slabSolve); return { x: s.x.map((v) => -v), converged: true, method: 'negated' }; },
    });
    expect(r.cause).toBe('no-decrease');
    expect(r.message).toMatch(/iteration 1: no step length down to 2\^-3 decreased the residual/);
    expect(Array.from(r.state)).toEqual(Array.from(U0));
  });
  it('refuses bad options, a linear physics and a wrong initial length with one line', () => {
    const lin = parseGeneratorParams({ physics: 'advection', dim: 1, order: 2, cells: 6, slabs: 2 }, 'test');
    const { disc: d1 } = buildDiscretization(lin);
    expect(() => newtonSolve(d1, new Float64Array(d1.mesh.nElements * d1.bs))).toThrow(/^newton: physics advection is linear/);
    expect(() => newtonSolve(disc, U0, { rtol: 1 })).toThrow(/^newton: rtol must be in \[0, 1\), got 1$/);
    expect(() => newtonSolve(disc, U0, { maxIterations: 1.5 })).toThrow(/maxIterations must be an integer ≥ 0/);
    expect(() => newtonSolve(disc, U0, { pseudoCfl: 0 })).toThrow(/pseudoCfl must be a number > 0/);
    expect(() => newtonSolve(disc, U0.subarray(1))).toThrow(/initial state has length \d+, expected \d+/);
  });
});

describe('isentropic vortex refinement (reduced): the converged DG solution converges at ≥ p + ½', () => {
  it('p = 1, 4 → 8 cells (final time 0.25 fixed; slab thickness halves with h)', () => {
    const study = runRefinementStudy(vortex(), [4, 8], { slabSolve });
    expect(study.failure).toBeUndefined();
    expect(study.rows).toHaveLength(2);
    for (const row of study.rows) {
      expect(row.newton!.relativeResidual).toBeLessThanOrEqual(1e-10);
      expect(row.solver).toMatch(/^newton: /);
    }
    expect(study.rows[1]!.slabs).toBe(2);
    expect(study.rows[1]!.observedOrder!).toBeGreaterThan(1.5);
  });
});
