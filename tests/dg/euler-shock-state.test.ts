/**
 * The built-in shock-tube state, as the generator evaluates it (the physics' state function at
 * space-time points), satisfies the jump conditions of the Euler equations:
 *  - across a shock moving at speed s, the Rankine–Hugoniot relations s·[U] = [F(U)] for mass,
 *    momentum and energy (Toro, Riemann Solvers and Numerical Methods for Fluid Dynamics, 3rd ed.
 *    2009, §3.1.3, eq. 3.53 and §4.2.2; conserved variables and the project's flux
 *    eulerSpatialFlux), to round-off;
 *  - across the contact (speed u*), pressure and normal velocity are continuous and only the
 *    density jumps (Toro 2009, §4.2.1 and §3.1.3: the contact is a linearly degenerate field).
 * The shock speed is the exact Riemann solution's (src/dg/physics/euler-riemann.ts); Sod's value
 * ≈ 1.75216 is in the shared references (Toro 2009 Table 4.3 — from memory, checked in
 * euler-riemann.test.ts).
 */
import { describe, it, expect } from 'vitest';
import { parseGeneratorParams, resolveGenerator } from '../../src/dg/generate.js';
import { eulerSpatialFlux, pressureOf } from '../../src/dg/physics/euler-flux.js';
import { solveRiemann } from '../../src/dg/physics/euler-riemann.js';

const G = 1.4;

/** The conserved state of the generator's shock-tube physics at (x, [y], t). */
function stateFunction(o: Record<string, unknown>) {
  const params = parseGeneratorParams({ physics: 'euler', state: 'shock-tube', gamma: G, ...o }, 'test');
  const physics = resolveGenerator(params).physics;
  const d = params.dim;
  const X = new Float64Array(d + 1);
  return {
    d,
    at(x: number, t: number, y = 0.3): Float64Array {
      X[0] = x; if (d > 1) X[1] = y; X[d] = t;
      const U = new Float64Array(d + 2);
      physics.state!(X, 0, U);
      return U;
    },
  };
}

function flux(U: Float64Array, d: number): Float64Array {
  const g = new Float64Array(d + 2), dg = new Float64Array((d + 2) ** 2);
  eulerSpatialFlux(U, 0, d, G, g, dg);
  return g;
}

const cases: [string, Record<string, unknown>, [number, number, number], [number, number, number]][] = [
  ['Sod (default)', {}, [1, 0, 1], [0.125, 0, 0.1]],
  // Toro 2009 Table 4.1, tests 3 and 5 (test 5: two shocks)
  ['Toro test 3 (strong right shock)', { left: [1, 0, 1000], right: [1, 0, 0.01] }, [1, 0, 1000], [1, 0, 0.01]],
  ['Toro test 5 (two shocks)', { left: [5.99924, 19.5975, 460.894], right: [5.99242, -6.19633, 46.0950] }, [5.99924, 19.5975, 460.894], [5.99242, -6.19633, 46.0950]],
];

describe('the shock-tube state satisfies the Rankine–Hugoniot relations at its shocks (Toro 2009, eq. 3.53)', () => {
  for (const [name, o, l, r] of cases) {
    for (const dim of [1, 2] as const) {
      it(`${name}, ${dim}D+t: s·[U] = [F(U)] for mass, momentum and energy; p and u continuous at the contact`, () => {
        const x0 = 0.5, t = dim === 1 ? 0.04 : 0.013;
        const state = stateFunction({ dim, diaphragm: x0, extent: dim === 1 ? 1 : [1, 1], ...o });
        const sol = solveRiemann({ rho: l[0], u: l[1], p: l[2] }, { rho: r[0], u: r[1], p: r[2] }, G);
        const shocks: number[] = [];
        if (sol.rightWave === 'shock') shocks.push(sol.rightSpeeds.head);
        if (sol.leftWave === 'shock') shocks.push(sol.leftSpeeds.head);
        expect(shocks.length).toBeGreaterThan(0);
        // both sides of each shock, a relative 1e-9 of t away from its position x0 + s·t
        for (const s of shocks) {
          const xs = x0 + s * t, eps = 1e-9 * t;
          const a = state.at(xs - eps, t), b = state.at(xs + eps, t);
          const Fa = flux(a, state.d), Fb = flux(b, state.d);
          let jump = 0;
          for (let i = 0; i < state.d + 2; i++) jump = Math.max(jump, Math.abs(b[i]! - a[i]!));
          expect(jump).toBeGreaterThan(1e-3); // a real discontinuity is straddled
          for (let i = 0; i < state.d + 2; i++) {
            const scale = Math.max(Math.abs(Fa[i]!), Math.abs(Fb[i]!), Math.abs(s) * Math.max(Math.abs(a[i]!), Math.abs(b[i]!)), 1);
            expect(Math.abs(s * (b[i]! - a[i]!) - (Fb[i]! - Fa[i]!)) / scale, `equation ${i}`).toBeLessThan(1e-12);
          }
          // transverse momentum stays zero (the state varies along x only)
          if (state.d === 2) { expect(a[2]).toBe(0); expect(b[2]).toBe(0); }
        }
        // contact: pressure and velocity continuous, density jumps by ρ*L − ρ*R
        const xc = x0 + sol.uStar * t, eps = 1e-9 * t;
        const a = state.at(xc - eps, t), b = state.at(xc + eps, t);
        const pa = pressureOf(a, state.d, G), pb = pressureOf(b, state.d, G);
        expect(Math.abs(pa - pb) / pa).toBeLessThan(1e-12);
        expect(Math.abs(a[1]! / a[0]! - b[1]! / b[0]!)).toBeLessThan(1e-12 * Math.max(1, Math.abs(sol.uStar)));
        expect(a[0]).toBeCloseTo(sol.rhoStarLeft, 12);
        expect(b[0]).toBeCloseTo(sol.rhoStarRight, 12);
        expect(pa).toBeCloseTo(sol.pStar, 9);
      });
    }
  }

  it('the jump conditions fail for a wrong shock speed (the check can fail)', () => {
    const state = stateFunction({ dim: 1, diaphragm: 0.5 });
    const sol = solveRiemann({ rho: 1, u: 0, p: 1 }, { rho: 0.125, u: 0, p: 0.1 }, G);
    const s = sol.rightSpeeds.head, t = 0.04, xs = 0.5 + s * t;
    const a = state.at(xs - 1e-9, t), b = state.at(xs + 1e-9, t);
    const Fa = flux(a, 1), Fb = flux(b, 1);
    const wrong = 1.01 * s;
    expect(Math.abs(wrong * (b[0]! - a[0]!) - (Fb[0]! - Fa[0]!))).toBeGreaterThan(1e-3);
  });
});
