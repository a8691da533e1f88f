/**
 * Burgers point functions against hand-computed values (reference-value tier). physics.test.ts checks
 * the numerical flux's derivatives against finite differences of the same function and its
 * consistency H(u, u) = G(u)·n; a wrong wave-speed choice on a jump (uL ≠ uR) passes both, because
 * H and its derivatives stay consistent with each other. These values are computed by hand from the
 * formulas of the local Lax–Friedrichs (Rusanov) flux for G(u) = (b u²/2, u):
 *   H = ½(G(uL)·n + G(uR)·n) − ½ α (uR − uL),  α = max(|λL|, |λR|),  λ = u (b·n_x) + n_t
 * (Rusanov 1961; Hesthaven & Warburton, Nodal Discontinuous Galerkin Methods, 2008, §2.2, eq. 2.21
 * for the flux; the derivatives are the calculus of that formula on the active branch of the max).
 */
import { describe, it, expect } from 'vitest';
import { PHYSICS } from '../../src/dg/physics/registry.js';
import type { PhysicsContext, ScalarPhysics } from '../../src/dg/physics/types.js';

function burgers(dim: 1 | 2 | 3, raw: Record<string, unknown> = {}): ScalarPhysics {
  const def = PHYSICS.get('burgers')!;
  const ctx: PhysicsContext = {
    dim, extent: [1, 1, 1].slice(0, dim), periodic: [false, false, false].slice(0, dim), label: (f) => `test.${f}`,
  };
  return def.create(def.normalize(raw, ctx), ctx) as ScalarPhysics;
}

describe('Burgers local Lax–Friedrichs flux on a jump: hand-computed values (1D+t, n = (0.6, 0.8))', () => {
  // b = e1, so b·n_x = 0.6 and n_t = 0.8. Each row: uL, uR, then H, ∂H/∂uL, ∂H/∂uR worked out by hand:
  //  (2, −1): λL = 2.0, λR = 0.2, α = |λL| = 2, gL = 0.5·4·0.6 + 2·0.8 = 2.8, gR = 0.3 − 0.8 = −0.5,
  //           H = 1.15 − ½·2·(−3) = 4.15; ∂L = ½λL + ½α − ½(+0.6)(−3) = 2.9; ∂R = ½λR − ½α = −0.9.
  //  (−1, 2): the mirror, α = |λR| = 2 (right branch, λR > 0): H = 1.15 − 3 = −1.85; ∂L = 0.1 + 1 = 1.1;
  //           ∂R = 1 − 1 − ½(0.6)(3) = −0.9.
  //  (0.5, −4): λL = 1.1, λR = −1.6, α = |λR| = 1.6 (right branch, λR < 0, dα/duR = −0.6),
  //           gL = 0.475, gR = 4.8 − 3.2 = 1.6, H = 1.0375 + 0.8·4.5 = 4.6375; ∂L = 0.55 + 0.8 = 1.35;
  //           ∂R = −0.8 − 0.8 − ½(−0.6)(−4.5) = −2.95.
  //  (−4, 0.5): λL = −1.6, λR = 1.1, α = |λL| = 1.6 (left branch, λL < 0, dα/duL = −0.6),
  //           H = 1.0375 − 0.8·4.5 = −2.5625; ∂L = −0.8 + 0.8 − ½(−0.6)(4.5) = 1.35; ∂R = 0.55 − 0.8 = −0.25.
  const rows: Array<[number, number, number, number, number]> = [
    [2, -1, 4.15, 2.9, -0.9],
    [-1, 2, -1.85, 1.1, -0.9],
    [0.5, -4, 4.6375, 1.35, -2.95],
    [-4, 0.5, -2.5625, 1.35, -0.25],
  ];
  const p = burgers(1);
  const n = Float64Array.of(0.6, 0.8);
  const X = new Float64Array(2);
  for (const [uL, uR, H, dL, dR] of rows) {
    it(`uL = ${uL}, uR = ${uR}: H = ${H}, ∂H/∂uL = ${dL}, ∂H/∂uR = ${dR}`, () => {
      const out = new Float64Array(3);
      p.numericalFlux(X, 0, uL, uR, n, out);
      expect(out[0]).toBeCloseTo(H, 13);
      expect(out[1]).toBeCloseTo(dL, 13);
      expect(out[2]).toBeCloseTo(dR, 13);
    });
  }
});

describe('Burgers volume flux G(u) = (b u²/2, u) and dG/du = (b u, 1) (the PDE, ∂t u + ∇·(b u²/2) = 0)', () => {
  it('3D+t, direction (1, 2, 2) normalized to (1, 2, 2)/3, u = 1.5', () => {
    const p = burgers(3, { direction: [1, 2, 2] });
    const g = new Float64Array(4), dg = new Float64Array(4);
    p.flux(new Float64Array(4), 0, 1.5, g, dg);
    const b = [1 / 3, 2 / 3, 2 / 3];
    for (let k = 0; k < 3; k++) {
      expect(g[k]).toBeCloseTo(0.5 * 1.5 * 1.5 * b[k], 15);
      expect(dg[k]).toBeCloseTo(1.5 * b[k], 15);
    }
    expect(g[3]).toBe(1.5);
    expect(dg[3]).toBe(1);
  });

  it('the transport velocity is u b at the linearization state; initial and inflow data are their expressions', () => {
    const p = burgers(2, { direction: [3, 4], state: '1 + x + 2*y + 3*t', initial: '2 + x', inflow: '5*t + y' });
    const X = Float64Array.of(9, 0.25, 0.5, 0.1); // the point sits at offset 1
    const v = new Float64Array(2), out = new Float64Array(1);
    p.transportVelocity(X, 1, v);
    const u = 1 + 0.25 + 1 + 0.3;
    expect(v[0]).toBeCloseTo(u * 0.6, 14);
    expect(v[1]).toBeCloseTo(u * 0.8, 14);
    p.state!(X, 1, out);
    expect(out[0]).toBeCloseTo(u, 14);
    p.initialData(X, 1, out);
    expect(out[0]).toBeCloseTo(2.25, 14); // evaluated at t = 0 whatever X's time
    p.boundaryData(X, 1, out);
    expect(out[0]).toBeCloseTo(0.5 + 0.5, 14);
  });
});

describe('Burgers parameters: the checks that run before any assembly', () => {
  function ctx(dim: 1 | 2 | 3): PhysicsContext {
    return { dim, extent: [2, 1, 1].slice(0, dim), periodic: [false, false, false].slice(0, dim), label: (f) => `test.${f}` };
  }
  const def = PHYSICS.get('burgers')!;

  it('a zero direction is rejected naming the field', () => {
    expect(() => def.normalize({ direction: [0, 0] }, ctx(2))).toThrow(/^test\.direction: expected a non-zero vector$/);
  });

  it('each expression is evaluated over the space-time box and a non-real value names its field', () => {
    // log(x − 3) is NaN on the whole domain [0, 2] (the compiler accepts it; only evaluation fails)
    for (const field of ['initial', 'state', 'inflow']) {
      const c = ctx(1);
      const fields = def.normalize({ [field]: 'log(x - 3)' }, c);
      expect(() => def.check(fields, c, 0.5)).toThrow(new RegExp(`^test\\.${field}: `));
    }
    // a state that is fine at t = 0 and NaN at the final time: sampled up to it
    const c = ctx(1);
    const fields = def.normalize({ state: 'sqrt(0.25 - t)' }, c);
    expect(() => def.check(fields, c, 0.2)).not.toThrow();
    expect(() => def.check(fields, c, 0.5)).toThrow(/^test\.state: /);
  });

  it('the wave speed is the largest |state| sampled over the domain at t = 0 (|b| = 1)', () => {
    const c = ctx(1);
    const p = def.create(def.normalize({ state: '0.3 - x + 5 * t' }, c), c) as ScalarPhysics;
    expect(p.maxWaveSpeed).toBeCloseTo(1.7, 14); // |0.3 − 2| at x = Lx = 2
  });
});
