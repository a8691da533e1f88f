/**
 * Independent checks of the Burgers DG residual R(U) (reference-value tier). The Jacobian test in
 * assemble.test.ts compares the matrix with finite differences of the same residual, and the
 * right-hand side with the same residual again, so a wrong flux in the residual itself passes
 * there. These checks compare the residual with values computed without src/dg:
 *
 * 1. Free-stream preservation: a constant state with matching initial and inflow data has zero
 *    residual (common practice; Shu, ICASE 97-65, 1997, uses the same check for Euler). With every
 *    face state equal, the Rusanov flux is G(c)·n (consistency) and
 *    R(c; v) = −∫_K G(c)·∇v + ∫_∂K G(c)·n v = 0 by the divergence theorem (derived).
 * 2. Strong form on every element: for a state u in the DG space with initial = inflow = u, every
 *    face sees u⁻ = u⁺ and the residual against any v of degree ≤ p on K is
 *      R(u; v|_K) = ∫_K (∂_t u + ∇·(b u²/2)) v = ∫_K (∂_t u + u b·∇u) v   (divergence theorem, derived),
 *    integrated here with the test's own Duffy-collapsed Gauss–Legendre rule (Stroud, Approximate
 *    Calculation of Multiple Integrals, 1971, conical product; Gauss–Legendre nodes by Newton's
 *    method on the three-term recurrence), not the generator's quadrature or basis.
 *
 * Guards against: the volume flux u²/2 changed to u² with its derivative changed to match
 * (src/dg/physics/burgers.ts, `flux`). Both checks fail for that bug: (1) leaves
 * −(c²/2)∫_K b·∇v ≠ 0 for v = x, and (2) differs by ∫_K (u²/2) b·∇v.
 */
import { describe, it, expect } from 'vitest';
import { parseGeneratorParams, generateWithDiscretization } from '../../src/dg/generate.js';
import { assembleDg } from '../../src/dg/assemble.js';
import { projectFunction } from '../../src/dg/projection.js';
import { gaussLegendre01 } from './own-simplex-rule.js';

const params = (o: Record<string, unknown>) => parseGeneratorParams(o, 'test');

/**
 * ∫ over the simplex with vertices V[0..D] (each a D-vector) of f, by the collapsed (Duffy) map
 * ξ_1 = a_1, ξ_2 = (1 − a_1) a_2, …, Jacobian Π_k (1 − a_k)^{D−k}, with n Gauss points per axis.
 */
function simplexIntegral(V: number[][], f: (X: number[]) => number, n = 8): number {
  const D = V.length - 1;
  const { x: gx, w: gw } = gaussLegendre01(n);
  const E = Array.from({ length: D }, (_, j) => V[j + 1].map((c, i) => c - V[0][i]));
  // |det E|
  const M = E.map((row) => row.slice());
  let det = 1;
  for (let c = 0; c < D; c++) {
    let piv = c;
    for (let r = c + 1; r < D; r++) if (Math.abs(M[r][c]) > Math.abs(M[piv][c])) piv = r;
    if (piv !== c) { [M[piv], M[c]] = [M[c], M[piv]]; det = -det; }
    det *= M[c][c];
    for (let r = c + 1; r < D; r++) { const m = M[r][c] / M[c][c]; for (let k = c; k < D; k++) M[r][k] -= m * M[c][k]; }
  }
  let total = 0;
  const idx = new Array(D).fill(0);
  for (;;) {
    let rest = 1, jac = 1, wt = 1;
    const xi: number[] = [];
    for (let k = 0; k < D; k++) {
      const a = gx[idx[k]];
      xi.push(rest * a);
      wt *= gw[idx[k]];
      rest *= 1 - a;
    }
    for (let k = 0; k < D - 1; k++) jac *= (1 - gx[idx[k]]) ** (D - 1 - k);
    const X = V[0].slice();
    for (let j = 0; j < D; j++) for (let i = 0; i < D; i++) X[i] += E[j][i] * xi[j];
    total += wt * jac * f(X);
    let k = 0;
    while (k < D && ++idx[k] === n) { idx[k] = 0; k++; }
    if (k === D) break;
  }
  return total * Math.abs(det);
}

describe('the test\'s own simplex rule integrates known values (Dirichlet integral, DLMF §5.14: ∫ x^a y^b = a! b!/(2 + a + b)! on the unit triangle)', () => {
  it('triangle x²y → 1/60, tetrahedron xyz → 1/720, and a sheared triangle by its area', () => {
    expect(simplexIntegral([[0, 0], [1, 0], [0, 1]], ([x, y]) => x * x * y)).toBeCloseTo(1 / 60, 15);
    expect(simplexIntegral([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]], ([x, y, z]) => x * y * z)).toBeCloseTo(1 / 720, 15);
    expect(simplexIntegral([[0.2, 0.1], [1.3, 0.4], [0.5, 2.1]], () => 1)).toBeCloseTo(0.5 * Math.abs(1.1 * 2.0 - 0.3 * 0.3), 14);
  });
});

function vertices(mesh: { dim: number; coords: Float64Array; elements: Int32Array }, e: number): number[][] {
  const D = mesh.dim + 1;
  return Array.from({ length: D + 1 }, (_, j) => {
    const v = mesh.elements[e * (D + 1) + j];
    return Array.from(mesh.coords.subarray(v * D, v * D + D));
  });
}

describe('Burgers: a constant state has zero residual (free-stream preservation; guards the u²/2 volume flux)', () => {
  const cases: Array<[string, Record<string, unknown>]> = [
    ['1D+t periodic, p = 2', { dim: 1, order: 2, cells: 5, slabs: 2, periodic: true }],
    ['1D+t jittered, p = 3', { dim: 1, order: 3, cells: 5, slabs: 2, jitter: 0.2 }],
    ['2D+t periodic, oblique direction, p = 2', { dim: 2, order: 2, cells: 3, slabs: 2, periodic: true, direction: [1, 0.4] }],
    ['2D+t jittered, oblique direction, p = 2', { dim: 2, order: 2, cells: 3, slabs: 2, jitter: 0.2, direction: [0.6, -0.8] }],
    ['3D+t jittered, p = 1', { dim: 3, order: 1, cells: 2, slabs: 1, jitter: 0.15, direction: [0.3, 0.5, 0.8] }],
  ];
  for (const [label, o] of cases) {
    it(label, () => {
      const c = 0.7;
      const p = params({ physics: 'burgers', initial: c, state: c, inflow: c, ...o });
      const { system, disc } = generateWithDiscretization(p);
      const U = projectFunction(disc.mesh, p.order, 1, disc.ordering.inv, disc.physics.state!);
      const { residual } = assembleDg(disc, U, { matrix: false });
      // Scale of the individual terms: c²/2 · |∂K| · ‖φ‖∞ per entry is O(c² h^{d}); compare with
      // the largest entry of the matrix times c, which has the same units.
      let scale = 0;
      for (const v of system.bsr.values) scale = Math.max(scale, Math.abs(v));
      scale *= c;
      let worst = 0;
      for (const r of residual) worst = Math.max(worst, Math.abs(r));
      expect(worst / scale).toBeLessThan(1e-13);
      // The generated right-hand side is −R(U): zero too.
      let rhs = 0;
      for (const r of system.rhs) rhs = Math.max(rhs, Math.abs(r));
      expect(rhs / scale).toBeLessThan(1e-13);
    });
  }
});

describe('Burgers: the residual of a smooth state equals ∫_K (u_t + u b·∇u) v on every element (own quadrature; guards the u²/2 volume flux)', () => {
  const cases: Array<[string, Record<string, unknown>, string, (X: number[]) => number, (X: number[]) => number[], Array<(X: number[]) => number>]> = [
    [
      '1D+t, p = 1, linear state, jittered', { dim: 1, order: 1, cells: 3, slabs: 2, jitter: 0.2 },
      '0.5 + 0.3*x - 0.2*t', ([x, t]) => 0.5 + 0.3 * x - 0.2 * t, () => [0.3, -0.2],
      [() => 1, ([x]) => x, ([, t]) => t],
    ],
    [
      '1D+t, p = 2, quadratic state', { dim: 1, order: 2, cells: 3, slabs: 2, jitter: 0.1 },
      '0.6 + 0.4*x*x - 0.3*x*t + 0.1*t', ([x, t]) => 0.6 + 0.4 * x * x - 0.3 * x * t + 0.1 * t,
      ([x, t]) => [0.8 * x - 0.3 * t, -0.3 * x + 0.1],
      [([x]) => x, ([x, t]) => x * t, ([x]) => x * x],
    ],
    [
      '2D+t, p = 2, quadratic state, oblique direction', { dim: 2, order: 2, cells: 2, slabs: 1, jitter: 0.15, direction: [0.8, 0.6] },
      '0.5 + 0.2*x*y - 0.3*y + 0.25*t*x', ([x, y, t]) => 0.5 + 0.2 * x * y - 0.3 * y + 0.25 * t * x,
      ([x, y, t]) => [0.2 * y + 0.25 * t, 0.2 * x - 0.3, 0.25 * x],
      [([x]) => x, ([, y]) => y * y, ([x, , t]) => x * t],
    ],
  ];
  for (const [label, o, expr, u, grad, tests] of cases) {
    it(label, () => {
      const p = params({ physics: 'burgers', initial: expr, state: expr, inflow: expr, ...o });
      const { disc } = generateWithDiscretization(p);
      const { mesh, ordering } = disc;
      const d = mesh.dim;
      const b = p.direction as number[];
      const U = projectFunction(mesh, p.order, 1, ordering.inv, disc.physics.state!);
      const { residual } = assembleDg(disc, U, { matrix: false });
      const nb = disc.bs;
      // Strong-form integrand: u_t + u (b·∇_x u) for the flux b u²/2.
      const strong = (X: number[]): number => {
        const g = grad(X);
        let bg = 0;
        for (let k = 0; k < d; k++) bg += b[k] * g[k];
        return g[d] + u(X) * bg;
      };
      let checked = 0, worst = 0, size = 0;
      for (const v of tests) {
        // Coefficients of v (degree ≤ p, so the projection is exact) give Σ_a w_a R_a = R(u; v|_K).
        const W = projectFunction(mesh, p.order, 1, ordering.inv, (X, xo, out) => { out[0] = v(Array.from(X.subarray(xo, xo + d + 1))); });
        for (let e = 0; e < mesh.nElements; e++) {
          const o0 = ordering.inv[e] * nb;
          let got = 0;
          for (let a = 0; a < nb; a++) got += W[o0 + a] * residual[o0 + a];
          const want = simplexIntegral(vertices(mesh, e), (X) => strong(X) * v(X));
          worst = Math.max(worst, Math.abs(got - want));
          size = Math.max(size, Math.abs(want));
          checked++;
        }
      }
      expect(checked).toBe(tests.length * mesh.nElements);
      expect(size).toBeGreaterThan(1e-4); // the reference is not trivially zero
      expect(worst / size).toBeLessThan(1e-11);
    });
  }
});
