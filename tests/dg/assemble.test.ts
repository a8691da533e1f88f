import { describe, it, expect } from 'vitest';
import { parseGeneratorParams, generateWithDiscretization, type GeneratorParams } from '../../src/dg/generate.js';
import { assembleDg } from '../../src/dg/assemble.js';
import { spaceTimeL2Error, projectFunction } from '../../src/dg/projection.js';
import { solveBySlabs } from '../../src/dg/slab-solve.js';
import { runRefinementStudy } from '../../src/dg/refine.js';
import { bsrSpmv } from '../../src/sparse/bsr.js';
import { FaceKind } from '../../src/mesh/space-time.js';
import { faceLocalVertices, faceOutwardNormal } from '../../src/mesh/geometry.js';
import { PHYSICS_NAMES } from '../../src/dg/physics/registry.js';
import type { Bsr } from '../../src/sparse/types.js';

const params = (o: Record<string, unknown>): GeneratorParams => parseGeneratorParams(o, 'test');

function relResidual(a: Bsr, x: Float64Array, b: Float64Array): number {
  const r = new Float64Array(b.length);
  bsrSpmv(a, x, r);
  let s = 0, t = 0;
  for (let i = 0; i < b.length; i++) { s += (r[i] - b[i]) ** 2; t += b[i] ** 2; }
  return Math.sqrt(s / t);
}

function solveAndError(p: GeneratorParams, exact?: (X: Float64Array, xo: number, out: Float64Array) => void): { error: number; norm: number } {
  const { system, disc } = generateWithDiscretization(p);
  const { x } = solveBySlabs(system.bsr, system.rhs, system.layout.slabOffsets as number[]);
  const fn = exact ?? disc.physics.exact!;
  const error = spaceTimeL2Error(disc.mesh, p.order, disc.physics.nEquations, disc.ordering.inv, x, fn);
  const zero = new Float64Array(x.length);
  const norm = spaceTimeL2Error(disc.mesh, p.order, disc.physics.nEquations, disc.ordering.inv, zero, fn);
  return { error, norm };
}

describe('polynomial reproduction: a solution linear in x and t is reproduced to round-off for p ≥ 1 (consistency of the upwind / SIPG space-time scheme, common practice)', () => {
  it('advection 1D+t and 2D+t (jittered mesh), p = 1 and 2', () => {
    for (const order of [1, 2]) {
      const r1 = solveAndError(params({ physics: 'advection', dim: 1, order, cells: 5, slabs: 3, velocity: [0.8], initial: '1 + 2*x' }));
      expect(r1.error / r1.norm).toBeLessThan(1e-11);
      const r2 = solveAndError(params({ physics: 'advection', dim: 2, order, cells: 3, slabs: 2, jitter: 0.2, velocity: [1, 0.5], initial: '1 + 2*x - 3*y' }));
      expect(r2.error / r2.norm).toBeLessThan(1e-11);
    }
  });
  it('acoustics 1D+t (travelling wave q = v = q0(x − (U + c)t)) and 2D+t', () => {
    const r1 = solveAndError(params({ physics: 'acoustics', dim: 1, order: 1, cells: 4, slabs: 2, meanFlow: [0.3], initial: '1 + 2*x' }));
    expect(r1.error / r1.norm).toBeLessThan(1e-11);
    const r2 = solveAndError(params({ physics: 'acoustics', dim: 2, order: 1, cells: 2, slabs: 2, jitter: 0.15, initial: '2 - x', travelling: false }));
    expect(r2.error / r2.norm).toBeLessThan(1e-11);
  });
  it('advection–diffusion with interior penalty (Δu = 0 for a linear u): 2D+t jittered', () => {
    const a = [1, 0.5];
    const exact = (X: Float64Array, xo: number, out: Float64Array): void => {
      out[0] = 1 + 2 * (X[xo] - a[0] * X[xo + 2]) - (X[xo + 1] - a[1] * X[xo + 2]);
    };
    const r = solveAndError(params({
      physics: 'advection-diffusion', dim: 2, order: 1, cells: 3, slabs: 2, jitter: 0.2, velocity: a, diffusivity: 0.3,
      initial: '1 + 2*x - y', inflow: '1 + 2*(x - t) - (y - 0.5*t)',
    }), exact);
    expect(r.error / r.norm).toBeLessThan(1e-10);
  });
});

describe('observed space-time L2 order ≥ p + 1/2 for smooth solutions (Johnson & Pitkäranta, Math. Comp. 46, 1986; p + 1 typical, Cockburn, Dong & Guzmán, SINUM 46, 2008)', () => {
  const cases: [string, Record<string, unknown>, number[]][] = [
    ['advection 1D+t p=1', { physics: 'advection', dim: 1, order: 1 }, [8, 16, 32]],
    ['advection 1D+t p=2', { physics: 'advection', dim: 1, order: 2 }, [4, 8, 16]],
    ['advection 2D+t p=1', { physics: 'advection', dim: 2, order: 1, ordering: 'downstream' }, [4, 8]],
    ['advection 2D+t p=2', { physics: 'advection', dim: 2, order: 2, ordering: 'downstream' }, [3, 6]],
    ['acoustics 1D+t p=1', { physics: 'acoustics', dim: 1, order: 1, meanFlow: [0.2] }, [8, 16, 32]],
    ['acoustics 1D+t p=2 at rest', { physics: 'acoustics', dim: 1, order: 2, travelling: false, periodic: true }, [4, 8, 16]],
    ['acoustics 2D+t p=1 plane wave with mean flow', { physics: 'acoustics', dim: 2, order: 1, meanFlow: [0.3, 0.2], jitter: 0.1 }, [2, 4]],
  ];
  for (const [label, o, sizes] of cases) {
    it(label, () => {
      const base = params({ cells: sizes[0], slabs: 2, ...o });
      const study = runRefinementStudy(base, sizes);
      const p = o.order as number;
      for (const row of study.rows.slice(1)) expect(row.observedOrder!).toBeGreaterThanOrEqual(p + 0.5);
      expect(study.rows[study.rows.length - 1].error).toBeLessThan(study.rows[0].error);
    });
  }
});

describe('discrete conservation for periodic advection (common practice): ∫Ω u_h(T) = ∫Ω u_0 with the same face quadrature', () => {
  for (const [label, extra] of [
    ['1D+t constant velocity', { dim: 1, velocity: [0.7] }],
    ['2D+t velocity field', { dim: 2, velocity: ['1 + 0.3*sin(2*pi*y)', '0.4'], jitter: 0.1 }],
  ] as const) {
    it(label, () => {
      const p = params({ physics: 'advection', order: 2, cells: 4, slabs: 3, periodic: true, initial: '1 + 0.5*sin(2*pi*x)', ...extra });
      const { system, disc } = generateWithDiscretization(p);
      const { x } = solveBySlabs(system.bsr, system.rhs, system.layout.slabOffsets as number[]);
      const { mesh, tables, ordering } = disc;
      const D = mesh.dim + 1;
      const nb = tables.nb;
      const n = new Float64Array(D);
      const X = new Float64Array(D);
      const data = new Float64Array(1);
      let initial = 0, final = 0;
      const coordsOf = (e: number, tab: { points: Float64Array }, q: number): void => {
        // Physical point of reference point q of element e (vertex 0 + J ξ).
        const v = Array.from({ length: D + 1 }, (_, i) => mesh.elements[e * (D + 1) + i]);
        for (let i = 0; i < D; i++) {
          let s = mesh.coords[v[0] * D + i];
          for (let j = 0; j < D; j++) s += (mesh.coords[v[j + 1] * D + i] - mesh.coords[v[0] * D + i]) * tab.points[q * D + j];
          X[i] = s;
        }
      };
      for (let f = 0; f < mesh.nFaces; f++) {
        const kind = mesh.faceKind[f];
        if (kind !== FaceKind.initial && kind !== FaceKind.final) continue;
        const e = mesh.faceLeft[f];
        const area = faceOutwardNormal(mesh, e, mesh.faceLeftLocal[f], n);
        const tab = tables.face(faceLocalVertices(D, mesh.faceLeftLocal[f]));
        const o = ordering.inv[e] * nb;
        for (let q = 0; q < tab.nq; q++) {
          const w = tab.weights[q] * area * tables.faceFactorial;
          if (kind === FaceKind.final) {
            let u = 0;
            for (let b = 0; b < nb; b++) u += tab.phi[q * nb + b] * x[o + b];
            final += w * u;
          } else {
            coordsOf(e, tab, q);
            disc.physics.initialData(X, 0, data);
            initial += w * data[0];
          }
        }
      }
      const measure = p.extent.reduce((s, l) => s * l, 1);
      expect(initial).toBeCloseTo(measure, 6); // ∫ (1 + 0.5 sin 2πx) = |Ω|
      expect(Math.abs(final - initial)).toBeLessThan(1e-12 * Math.abs(initial));
    });
  }
});

describe('block lower triangular by slabs: no stored block above the slab diagonal, every physics, every dimension', () => {
  for (const physics of PHYSICS_NAMES) {
    for (const dim of [1, 2, 3] as const) {
      it(`${physics} ${dim}D+t generates (finite values and rhs) and is lower triangular by slabs`, () => {
        // euler: the shock-tube state (a uniform one has a zero residual), the fast LLF flux in 3D+t
        const extra = physics === 'euler' ? { state: 'shock-tube', flux: dim === 3 ? 'llf' : 'roe' } : {};
        const p = params({ physics, dim, order: 1, cells: dim === 3 ? 2 : 3, slabs: 3, jitter: 0.1, periodic: dim === 2 ? [true, false] : false, ...extra });
        const { system } = generateWithDiscretization(p);
        const { bsr, rhs, layout } = system;
        const so = layout.slabOffsets as number[];
        expect(so[0]).toBe(0);
        expect(so[so.length - 1]).toBe(bsr.nBlockRows);
        let below = 0;
        for (let s = 0; s + 1 < so.length; s++) {
          for (let I = so[s]; I < so[s + 1]; I++) {
            for (let k = bsr.rowPtr[I]; k < bsr.rowPtr[I + 1]; k++) {
              expect(bsr.colInd[k]).toBeLessThan(so[s + 1]);
              if (bsr.colInd[k] < so[s]) below++;
            }
          }
        }
        expect(below).toBeGreaterThan(0); // the slabs are coupled (the check above can fail)
        expect(bsr.values.every(Number.isFinite)).toBe(true);
        expect(rhs.every(Number.isFinite)).toBe(true);
        expect(rhs.some((v) => v !== 0)).toBe(true);
      });
    }
  }
});

describe('downstream order without periodic wrap: one forward block Gauss–Seidel sweep solves exactly (Natvig & Lie, ECMOR XI 2008)', () => {
  it('2D+t and 3D+t advection, jittered: strictly upper blocks are all zero and the sweep leaves round-off residual', () => {
    for (const dim of [2, 3] as const) {
      const p = params({ physics: 'advection', dim, order: 1, cells: dim === 2 ? 5 : 2, slabs: 2, jitter: 0.15, ordering: 'downstream' });
      const { system, disc } = generateWithDiscretization(p);
      expect(disc.ordering.cyclesCut).toBe(0);
      const { bsr } = system;
      const bb = bsr.bs * bsr.bs;
      for (let I = 0; I < bsr.nBlockRows; I++) {
        for (let k = bsr.rowPtr[I]; k < bsr.rowPtr[I + 1]; k++) {
          if (bsr.colInd[k] > I) for (let q = 0; q < bb; q++) expect(bsr.values[k * bb + q]).toBe(0);
        }
      }
      const out = solveBySlabs(bsr, system.rhs, system.layout.slabOffsets as number[]);
      expect(out.method).toBe('block-forward-substitution');
      expect(relResidual(bsr, out.x, system.rhs)).toBeLessThan(1e-12);
    }
  });
  it('the natural order of the same 2D+t case is not triangular (so the check above can fail)', () => {
    const p = params({ physics: 'advection', dim: 2, order: 1, cells: 5, slabs: 2, jitter: 0.15, ordering: 'natural' });
    const { system } = generateWithDiscretization(p);
    const out = solveBySlabs(system.bsr, system.rhs, system.layout.slabOffsets as number[]);
    expect(out.method).not.toBe('block-forward-substitution');
  });
  it('orderings permute the same system: random and downstream give the same DG solution as natural', () => {
    const sols: number[] = [];
    for (const ordering of ['natural', 'downstream', 'random']) {
      const p = params({ physics: 'advection', dim: 2, order: 1, cells: 3, slabs: 2, ordering, seed: 7 });
      const { system, disc } = generateWithDiscretization(p);
      const { x } = solveBySlabs(system.bsr, system.rhs, system.layout.slabOffsets as number[]);
      sols.push(spaceTimeL2Error(disc.mesh, 1, 1, disc.ordering.inv, x, disc.physics.exact!));
    }
    expect(sols[1]).toBeCloseTo(sols[0], 12);
    expect(sols[2]).toBeCloseTo(sols[0], 12);
  });
});

describe('Burgers: the assembled matrix is the exact Jacobian of the DG residual (central finite differences, relative error < 1e-6)', () => {
  for (const dim of [1, 2] as const) {
    it(`${dim}D+t, p = 2, jittered mesh, steep front state`, () => {
      const p = params({
        physics: 'burgers', dim, order: 2, cells: dim === 1 ? 6 : 3, slabs: 2, jitter: 0.1,
        direction: dim === 1 ? [1] : [1, 0.4], initial: '0.6 - 0.4*tanh((x - 0.4)/0.1)', state: '0.6 - 0.4*tanh((x - 0.4 - 0.5*t)/0.1) + 0.1*y',
      });
      const { system, disc } = generateWithDiscretization(p);
      const U = projectFunction(disc.mesh, p.order, 1, disc.ordering.inv, disc.physics.state!);
      const n = U.length;
      const delta = new Float64Array(n);
      for (let i = 0; i < n; i++) delta[i] = Math.sin(12.9898 * i + 78.233) * 0.5;
      const Jd = new Float64Array(n);
      bsrSpmv(system.bsr, delta, Jd);
      const eps = 1e-6;
      const up = U.map((u, i) => u + eps * delta[i]);
      const dn = U.map((u, i) => u - eps * delta[i]);
      const Rp = assembleDg(disc, up, { matrix: false }).residual;
      const Rm = assembleDg(disc, dn, { matrix: false }).residual;
      let num = 0, den = 0;
      for (let i = 0; i < n; i++) {
        const fd = (Rp[i] - Rm[i]) / (2 * eps);
        num += (fd - Jd[i]) ** 2;
        den += Jd[i] ** 2;
      }
      expect(Math.sqrt(num / den)).toBeLessThan(1e-6);
      // rhs = −R(U): the residual at the state.
      const R0 = assembleDg(disc, U, { matrix: false }).residual;
      for (let i = 0; i < n; i += 17) expect(system.rhs[i]).toBeCloseTo(-R0[i], 13);
    });
  }
});
