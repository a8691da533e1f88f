/**
 * The pseudo-time option (pseudo-transient continuation, Kelley & Keyes, SIAM J. Numer. Anal.
 * 35(2), 1998): the matrix gains exactly M/Δτ on its diagonal blocks — the element mass matrix of
 * the reference-orthonormal basis is |det J_K|·I (derived) — the right-hand side is unchanged,
 * and a smaller pseudo-CFL makes the system easier for block Jacobi (more diagonally dominant).
 */
import { describe, it, expect } from 'vitest';
import { generateWithDiscretization, parseGeneratorParams } from '../../src/dg/generate.js';
import { createElementAffine, elementAffine, faceOutwardNormalFromAffine } from '../../src/mesh/geometry.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { DEFAULT_RECIPE } from '../../src/solvers/recipe.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';

const base = { physics: 'euler', dim: 2, order: 1, cells: 3, slabs: 2, state: 'vortex', extent: [10, 10], periodic: [true, true], jitter: 0.1 };

describe('pseudo-time term M/Δτ', () => {
  it('adds |det J_K|·λ/(CFL·h_K) to every diagonal entry of the diagonal blocks and nothing else', () => {
    const cfl = 3;
    const a = generateWithDiscretization(parseGeneratorParams(base, 't'));
    const b = generateWithDiscretization(parseGeneratorParams({ ...base, pseudoCfl: cfl }, 't'));
    const A = a.system.bsr, B = b.system.bsr, disc = b.disc;
    expect(Array.from(B.colInd)).toEqual(Array.from(A.colInd));
    expect(Array.from(b.system.rhs)).toEqual(Array.from(a.system.rhs));
    const bs = A.bs, bb = bs * bs, D = 3;
    const aff = createElementAffine(D), nrm = new Float64Array(D);
    const lambda = disc.physics.maxWaveSpeed;
    const diagOf = new Map<number, number>();
    for (let e = 0; e < disc.mesh.nElements; e++) diagOf.set(disc.pattern.diagonal[e]!, e);
    for (let k = 0; k < A.colInd.length; k++) {
      const e = diagOf.get(k);
      let want = 0;
      if (e !== undefined) {
        elementAffine(disc.mesh, e, aff);
        let surface = 0;
        for (let f = 0; f <= D; f++) surface += faceOutwardNormalFromAffine(aff, f, nrm);
        const h = (D * (aff.absDet / 6)) / surface;
        want = aff.absDet * lambda / (cfl * h);
      }
      for (let q = 0; q < bb; q++) {
        const diff = B.values[k * bb + q]! - A.values[k * bb + q]!;
        const onDiag = Math.floor(q / bs) === q % bs;
        expect(Math.abs(diff - (onDiag ? want : 0))).toBeLessThanOrEqual(1e-12 * Math.max(1, want));
      }
    }
    expect(b.system.layout.provenance?.pseudoTime).toMatchObject({ cfl });
  });

  it('block Jacobi needs fewer iterations as the pseudo-CFL shrinks (1 → 100 → no term)', () => {
    const its = [1, 100, undefined].map((c) => {
      const { system } = generateWithDiscretization(parseGeneratorParams(c === undefined ? base : { ...base, pseudoCfl: c }, 't'));
      const csr = bsrToCsr(system.bsr);
      const r = solveSystem({ csr, bsr: system.bsr, slabOffsets: Int32Array.from(system.layout.slabOffsets!) }, system.rhs,
        { ...DEFAULT_RECIPE, preconditioner: 'block-jacobi', restart: 100, maxIterations: 2000 }).result;
      expect(r.converged).toBe(true);
      return r.iterations;
    });
    expect(its[0]!).toBeLessThan(its[1]!);
    expect(its[1]!).toBeLessThanOrEqual(its[2]!);
  });

  it('refuses a non-positive pseudo-CFL', () => {
    expect(() => parseGeneratorParams({ ...base, pseudoCfl: 0 }, 't')).toThrow(/t\.pseudoCfl: expected a number > 0/);
  });
});
