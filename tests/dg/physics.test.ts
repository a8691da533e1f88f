import { describe, it, expect } from 'vitest';
import { PHYSICS, PHYSICS_NAMES } from '../../src/dg/physics/registry.js';
import type { LinearSystemPhysics, PhysicsContext, ScalarPhysics } from '../../src/dg/physics/types.js';
import { compileScalarField } from '../../src/dg/expressions.js';
import { UserError } from '../../src/util/errors.js';

function ctx(dim: 1 | 2 | 3): PhysicsContext {
  return { dim, extent: [1, 1, 1].slice(0, dim), periodic: [false, false, false].slice(0, dim), label: (f) => `test.${f}` };
}

function create(name: string, dim: 1 | 2 | 3, raw: Record<string, unknown> = {}) {
  const def = PHYSICS.get(name as never)!;
  const c = ctx(dim);
  return def.create(def.normalize(raw, c), c);
}

/** A seeded unit space-time normal with a non-zero space part. */
function normal(dim: number, seed: number): Float64Array {
  const n = new Float64Array(dim + 1);
  let s = 0;
  for (let k = 0; k <= dim; k++) {
    n[k] = Math.sin(1.7 * seed + 2.3 * k) + 0.1 * (k + 1);
    s += n[k] * n[k];
  }
  for (let k = 0; k <= dim; k++) n[k] /= Math.sqrt(s);
  return n;
}

describe('physics registry', () => {
  it('names every physics once, each with its fields', () => {
    expect(PHYSICS_NAMES).toEqual(['advection', 'advection-diffusion', 'acoustics', 'burgers', 'euler']);
    for (const def of PHYSICS.values()) expect(def.fields.length).toBeGreaterThan(0);
  });
});

describe('slab interfaces take the earlier slab (n_x = 0) — the property that makes the Jacobian block lower triangular', () => {
  for (const name of PHYSICS_NAMES) {
    for (const dim of [1, 2, 3] as const) {
      it(`${name} ${dim}D+t`, () => {
        const p = create(name, dim);
        const up = new Float64Array(dim + 1);
        up[dim] = 1;
        const down = new Float64Array(dim + 1);
        down[dim] = -1;
        const X = new Float64Array(dim + 1).fill(0.3);
        if (p.kind === 'scalar') {
          const out = new Float64Array(3);
          p.numericalFlux(X, 0, 0.7, -1.3, up, out);
          expect(out[0]).toBe(0.7); // H = u⁻ (earlier slab on the left)
          expect(out[2]).toBe(0); // no dependence on the later slab
          p.numericalFlux(X, 0, 0.7, -1.3, down, out);
          expect(out[0]).toBe(1.3); // H = n_t u⁺ = −u⁺ (earlier slab on the right)
          expect(out[1]).toBe(0);
        } else if (p.kind === 'nonlinear-system') {
          const m = p.nEquations;
          const UL = new Float64Array(m), UR = new Float64Array(m);
          p.state!(X, 0, UL);
          UR.set(UL); UR[0] = UL[0]! * 1.5;
          const h = new Float64Array(m), dL = new Float64Array(m * m), dR = new Float64Array(m * m);
          p.numericalFlux(X, 0, UL, UR, up, h, dL, dR, 0);
          for (let i = 0; i < m; i++) expect(h[i]).toBeCloseTo(UL[i]!, 13); // H = U⁻ (earlier slab on the left)
          expect(Math.max(...dR.map(Math.abs))).toBe(0); // no dependence on the later slab
          p.numericalFlux(X, 0, UL, UR, down, h, dL, dR, 0);
          for (let i = 0; i < m; i++) expect(h[i]).toBeCloseTo(-UR[i]!, 13); // H = n_t U⁺
          expect(Math.max(...dL.map(Math.abs))).toBe(0);
        } else {
          const m = p.nEquations;
          const ap = new Float64Array(m * m), am = new Float64Array(m * m);
          p.upwindSplit(up, ap, am);
          for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) {
            expect(ap[i * m + j]).toBe(i === j ? 1 : 0);
            expect(am[i * m + j]).toBe(0);
          }
        }
      });
    }
  }
});

describe('characteristic split of acoustics A(n) (LeVeque 2002, §18.5: eigenvalues n_t + U·n_x ± c|n_x|, n_t + U·n_x)', () => {
  it('A⁺ + A⁻ = A(n), A⁺ positive semidefinite, A⁻ negative semidefinite', () => {
    for (const dim of [1, 2, 3] as const) {
      const p = create('acoustics', dim, { soundSpeed: 1.5, meanFlow: [0.4, -0.2, 0.1].slice(0, dim) }) as LinearSystemPhysics;
      const m = p.nEquations;
      for (let seed = 0; seed < 5; seed++) {
        const n = normal(dim, seed);
        const ap = new Float64Array(m * m), am = new Float64Array(m * m);
        p.upwindSplit(n, ap, am);
        for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) {
          let a = i === j ? n[dim] : 0;
          for (let k = 0; k < dim; k++) a += n[k] * p.spatialMatrices[k][i * m + j];
          expect(ap[i * m + j] + am[i * m + j]).toBeCloseTo(a, 13);
        }
        // xᵀA⁺x ≥ 0 and xᵀA⁻x ≤ 0 for a few vectors; trace(A⁺) = sum of positive eigenvalues.
        let nx = 0;
        let un = n[dim];
        const U = [0.4, -0.2, 0.1];
        for (let k = 0; k < dim; k++) { nx += n[k] * n[k]; un += U[k] * n[k]; }
        nx = Math.sqrt(nx);
        const eig = [un + 1.5 * nx, un - 1.5 * nx, ...new Array(dim - 1).fill(un)];
        const trPlus = eig.filter((l) => l > 0).reduce((s, l) => s + l, 0);
        let tr = 0;
        for (let i = 0; i < m; i++) tr += ap[i * m + i];
        expect(tr).toBeCloseTo(trPlus, 12);
        for (let v = 0; v < 3; v++) {
          const x = Array.from({ length: m }, (_, i) => Math.cos(3 * v + i));
          let qp = 0, qm = 0;
          for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) { qp += x[i] * ap[i * m + j] * x[j]; qm += x[i] * am[i * m + j] * x[j]; }
          expect(qp).toBeGreaterThanOrEqual(-1e-12);
          expect(qm).toBeLessThanOrEqual(1e-12);
        }
      }
    }
  });
});

describe('advection upwind flux (exact upwinding on the space-time normal)', () => {
  it('takes the upstream state by the sign of β = a·n_x + n_t', () => {
    const p = create('advection', 2, { velocity: [1, 0.5] }) as ScalarPhysics;
    const out = new Float64Array(3);
    const X = new Float64Array(3);
    const n = Float64Array.from([0.6, 0, 0.8]); // β = 0.6 + 0.8 > 0
    p.numericalFlux(X, 0, 2, 5, n, out);
    expect(out[0]).toBeCloseTo(1.4 * 2, 14);
    const m = Float64Array.from([-0.6, 0, -0.8]);
    p.numericalFlux(X, 0, 2, 5, m, out);
    expect(out[0]).toBeCloseTo(-1.4 * 5, 14);
  });
});

describe('Burgers local Lax–Friedrichs flux: partial derivatives match finite differences', () => {
  it('for states on both sides of the sonic point', () => {
    const p = create('burgers', 2, { direction: [1, 1] }) as ScalarPhysics;
    const out = new Float64Array(3), op = new Float64Array(3), om = new Float64Array(3);
    const X = new Float64Array(3);
    for (let seed = 0; seed < 8; seed++) {
      const n = normal(2, seed);
      const uL = Math.sin(seed) * 1.5, uR = Math.cos(2 * seed) * 1.2;
      p.numericalFlux(X, 0, uL, uR, n, out);
      const h = 1e-6;
      p.numericalFlux(X, 0, uL + h, uR, n, op);
      p.numericalFlux(X, 0, uL - h, uR, n, om);
      expect(out[1]).toBeCloseTo((op[0] - om[0]) / (2 * h), 6);
      p.numericalFlux(X, 0, uL, uR + h, n, op);
      p.numericalFlux(X, 0, uL, uR - h, n, om);
      expect(out[2]).toBeCloseTo((op[0] - om[0]) / (2 * h), 6);
      // Consistency H(u, u) = G(u)·n (Rusanov flux; Hesthaven & Warburton 2008, §2.2).
      p.numericalFlux(X, 0, uL, uL, n, op);
      const bn = (n[0] + n[1]) / Math.SQRT2;
      expect(op[0]).toBeCloseTo(0.5 * uL * uL * bn + uL * n[2], 13);
    }
  });
});

describe('expressions', () => {
  it('compile, detect constants and report bad input in one line naming the field', () => {
    const f = compileScalarField('2*pi*x + t', 'opt', [1]);
    expect(f.constant).toBe(false);
    expect(f.evaluate(0.5, 0, 0, 1)).toBeCloseTo(Math.PI + 1, 14);
    const c = compileScalarField('Lx / 2', 'opt', [3]);
    expect(c.constant).toBe(true);
    expect(c.value).toBe(1.5);
    expect(() => compileScalarField('x +', 'option --initial', [1])).toThrow(/^option --initial: expression 'x \+' does not parse/);
    expect(() => compileScalarField('w * x', 'option --initial', [1])).toThrow(/unknown name 'w'/);
    const nan = compileScalarField('log(x - 2)', 'option --initial', [1]);
    expect(() => nan.evaluate(0, 0, 0, 0)).toThrow(UserError);
    expect(() => nan.evaluate(0, 0, 0, 0)).toThrow(/evaluates to a non-real value/);
    const inf = compileScalarField('1/x', 'f', [1]);
    expect(() => inf.evaluate(0, 0, 0, 0)).toThrow(/evaluates to Infinity/);
    for (const bad of ['x +', 'w * x']) {
      try { compileScalarField(bad, 'f', [1]); } catch (e) { expect((e as Error).message).not.toContain('\n'); }
    }
  });
});
