/**
 * Value checks of the scalar space-time DG assembly (src/dg/assemble-scalar.ts), written so that a
 * wrong term in either the matrix or the residual fails a check computed without src/dg:
 *
 * 1. Linear consistency: for a linear law the residual is affine in the state, R(U) = A U + R(0),
 *    with A the assembled matrix (derived from the header's definition of R). Ties every
 *    state-dependent residual term to the matrix term of the same integral.
 * 2. Fast against general path: with a constant velocity and no state the assembly uses cached
 *    reference matrices; the same physics with that shortcut switched off (alignVelocity null)
 *    goes through the quadrature loops and must give the same matrix and right-hand side.
 * 3. Strong form: for a state u that is one polynomial of degree ≤ p on the whole mesh, with
 *    initial and inflow data equal to u, every face sees [u] = 0 and {∇u} = ∇u, so integrating by
 *    parts on each element K gives, for every v of degree ≤ p on K (derived),
 *      R(u; v|_K) = ∫_K (∂_t u + ∇·(a u) − ν Δ_x u) v,
 *    integrated with the tests' own rule (tests/dg/own-simplex-rule.ts).
 * 4. SIPG bilinear form: the diffusion part A(ν) − A(0) equals the symmetric interior penalty form
 *      B(u, v) = Σ_K ν∫_K ∇u·∇v − Σ_F ∫_F ν({∇u}·n_x [v] + {∇v}·n_x [u]) − σ_F |n_x|² [u][v]
 *    (Arnold, Brezzi, Cockburn & Marini, SIAM J. Numer. Anal. 39(5), 2002, eq. (3.12) in the form
 *    of the primal SIPG method; Dirichlet faces by Nitsche with {·} the one-sided value), with the
 *    penalty σ_F = ν (p+1)(p+D)/D · max_{K∋F} |∂K|/|K| stated in the header of assemble-scalar.ts,
 *    evaluated here on piecewise polynomials with random element weights, face by face, with the
 *    tests' own geometry and quadrature.
 * 5. Conservation (common practice; LeVeque, Finite Volume Methods for Hyperbolic Problems, 2002,
 *    §4.1 for the telescoping of numerical fluxes): with v = 1 on every element the face fluxes of
 *    interior, periodic and slab-interface faces cancel, so on a periodic domain
 *      Σ_K R(u; 1) = ∫_Ω u_h(x, T) dx − ∫_Ω u_0 dx
 *    (outflow on t = T, the initial data on t = 0) whatever the jumps of u_h; for the Jacobian,
 *    Σ_K (A δ)(1) = ∫_Ω δ_h(x, T) dx.
 */
import { describe, it, expect } from 'vitest';
import { parseGeneratorParams, generateWithDiscretization } from '../../src/dg/generate.js';
import { assembleDg, type Discretization } from '../../src/dg/assemble.js';
import { projectFunction } from '../../src/dg/projection.js';
import { bsrSpmv } from '../../src/sparse/bsr.js';
import { FaceKind } from '../../src/mesh/space-time.js';
import type { ScalarPhysics } from '../../src/dg/physics/types.js';
import type { Bsr } from '../../src/sparse/types.js';
import { elementVertices, faceNormal, simplexIntegral, simplexMeasure } from './own-simplex-rule.js';

const params = (o: Record<string, unknown>) => parseGeneratorParams(o, 'test');

/** Deterministic pseudo-random numbers in [−1, 1] (common practice: sin hash). */
const rnd = (i: number, s = 0): number => Math.sin(12.9898 * i + 78.233 * (s + 1)) * 0.999;

function spmv(a: Bsr, x: Float64Array): Float64Array {
  const y = new Float64Array(x.length);
  bsrSpmv(a, x, y);
  return y;
}

function maxAbs(v: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < v.length; i++) m = Math.max(m, Math.abs(v[i]));
  return m;
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/** Coefficients of the piecewise polynomial equal to w(e)·P(X) on element e. */
function piecewise(disc: Discretization, order: number, P: (X: number[]) => number, w: (e: number) => number): Float64Array {
  const D = disc.mesh.dim + 1;
  return projectFunction(disc.mesh, order, 1, disc.ordering.inv, (X, xo, out, e) => {
    out[0] = w(e!) * P(Array.from(X.subarray(xo, xo + D)));
  });
}

/** The same physics with the constant-velocity shortcut off: every term through the quadrature loops. */
function generalPath(disc: Discretization): Discretization {
  return { ...disc, physics: { ...(disc.physics as ScalarPhysics), alignVelocity: null } };
}

describe('linear laws: R(U) = A U + R(0) (every state term of the residual matches its matrix term)', () => {
  const cases: Array<[string, Record<string, unknown>]> = [
    ['advection–diffusion 1D+t, p = 2, jittered, Dirichlet both sides',
      { physics: 'advection-diffusion', dim: 1, order: 2, cells: 4, slabs: 2, jitter: 0.2, velocity: [0.7], diffusivity: 0.05, initial: 'sin(3*x)', inflow: '1 + x*t' }],
    ['advection–diffusion 2D+t, p = 1, periodic in x, Dirichlet in y',
      { physics: 'advection-diffusion', dim: 2, order: 1, cells: 3, slabs: 2, jitter: 0.1, periodic: [true, false], velocity: [0.4, -0.3], diffusivity: 0.1, initial: 'x*y', inflow: '1 - y + t' }],
    ['advection–diffusion 3D+t, p = 1, expression velocity',
      { physics: 'advection-diffusion', dim: 3, order: 1, cells: 2, slabs: 1, jitter: 0.1, velocity: ['0.5 + 0.2*y', '-0.3', '0.1*x'], diffusivity: 0.2, initial: 'x + z', inflow: 'y*t' }],
    ['advection 2D+t, p = 2, expression velocity',
      { physics: 'advection', dim: 2, order: 2, cells: 2, slabs: 2, jitter: 0.15, velocity: ['1 + 0.5*y', '0.3*x - 0.2'], initial: '1 + x', inflow: 't - y' }],
    ['advection 1D+t, p = 2, constant velocity (the shortcut of the matrix-only assembly)',
      { physics: 'advection', dim: 1, order: 2, cells: 4, slabs: 2, jitter: 0.2, velocity: [-0.6], initial: '1 + x*x', inflow: '2 - t' }],
  ];
  for (const [label, o] of cases) {
    it(label, () => {
      const { disc } = generateWithDiscretization(params(o));
      const n = disc.mesh.nElements * disc.bs;
      const U = Float64Array.from({ length: n }, (_, i) => rnd(i));
      const r0 = assembleDg(disc, null, { matrix: false }).residual;
      const zero = assembleDg(disc, new Float64Array(n));
      const at = assembleDg(disc, U);
      const AU = spmv(at.bsr!, U);
      const scale = maxAbs(at.bsr!.values);
      expect(maxAbs(r0)).toBeGreaterThan(1e-3 * scale); // the data terms are there
      let nullVsZero = 0, affine = 0, size = 0;
      for (let i = 0; i < n; i++) {
        nullVsZero = Math.max(nullVsZero, Math.abs(zero.residual[i] - r0[i]));
        affine = Math.max(affine, Math.abs(at.residual[i] - r0[i] - AU[i]));
        size = Math.max(size, Math.abs(AU[i]));
      }
      expect(size).toBeGreaterThan(1e-2 * scale);
      expect(nullVsZero).toBeLessThanOrEqual(1e-14 * scale);
      expect(affine).toBeLessThanOrEqual(1e-12 * scale);
      // a linear law's matrix does not depend on the state it is assembled at
      const a0 = zero.bsr!.values, a1 = at.bsr!.values;
      let change = 0;
      for (let q = 0; q < a0.length; q++) change = Math.max(change, Math.abs(a1[q] - a0[q]));
      expect(change).toBeLessThanOrEqual(1e-13 * scale);
    });
  }
});

describe('constant velocity: the cached-reference-matrix shortcut equals the quadrature loops (fast against general)', () => {
  const cases: Array<[string, Record<string, unknown>]> = [
    ['advection 1D+t, p = 2, inflow from the left', { physics: 'advection', dim: 1, order: 2, cells: 5, slabs: 2, jitter: 0.2, velocity: [0.8], initial: '1 + 2*x', inflow: '3 + t*t' }],
    ['advection 1D+t, p = 1, inflow from the right', { physics: 'advection', dim: 1, order: 1, cells: 4, slabs: 3, velocity: [-0.5], initial: 'x*x', inflow: '1 - t' }],
    ['advection 2D+t, p = 2, periodic in y', { physics: 'advection', dim: 2, order: 2, cells: 3, slabs: 2, jitter: 0.1, periodic: [false, true], velocity: [0.5, -0.4], initial: 'sin(x + 2*y)', inflow: 'x + y*t' }],
    ['advection 3D+t, p = 1', { physics: 'advection', dim: 3, order: 1, cells: 2, slabs: 2, jitter: 0.1, velocity: [0.3, -0.2, 0.6], initial: '1 + x*y*z', inflow: 'x - z + t' }],
    ['advection–diffusion with ν = 0, 2D+t, p = 1', { physics: 'advection-diffusion', dim: 2, order: 1, cells: 3, slabs: 2, jitter: 0.15, velocity: [-0.7, 0.2], diffusivity: 0, initial: '2 - x*y', inflow: 'y' }],
  ];
  for (const [label, o] of cases) {
    it(label, () => {
      const { system, disc } = generateWithDiscretization(params(o));
      expect(disc.physics.alignVelocity).not.toBeNull(); // the generated system took the shortcut
      const slow = assembleDg(generalPath(disc), null);
      const fast = assembleDg(disc, null);
      const scale = maxAbs(fast.bsr!.values);
      expect(maxAbs(fast.residual)).toBeGreaterThan(1e-3 * scale);
      let matrixDiff = 0, rhsDiff = 0, notGenerated = 0;
      for (let q = 0; q < fast.bsr!.values.length; q++) {
        matrixDiff = Math.max(matrixDiff, Math.abs(fast.bsr!.values[q] - slow.bsr!.values[q]));
        if (fast.bsr!.values[q] !== system.bsr.values[q]) notGenerated++; // the generated matrix is this assembly
      }
      for (let i = 0; i < fast.residual.length; i++) {
        rhsDiff = Math.max(rhsDiff, Math.abs(fast.residual[i] - slow.residual[i]));
        if (system.rhs[i] !== -fast.residual[i]) notGenerated++;
      }
      expect(matrixDiff).toBeLessThanOrEqual(1e-13 * scale);
      expect(rhsDiff).toBeLessThanOrEqual(1e-13 * scale);
      expect(notGenerated).toBe(0);
    });
  }
});

describe('strong form: R(u; v|_K) = ∫_K (u_t + ∇·(a u) − ν Δu) v for a global polynomial u (own quadrature)', () => {
  type Case = [string, Record<string, unknown>, string, (X: number[]) => number, (X: number[]) => number];
  // Each case: the parameters, u as an expression, the strong-form integrand u_t + ∇·(a u) − νΔu by hand, and the test functions below.
  const cases: Case[] = [
    [
      '1D+t, p = 2, ν = 0.05, a = 0.7, jittered', { dim: 1, order: 2, cells: 3, slabs: 2, jitter: 0.2, velocity: [0.7], diffusivity: 0.05 },
      '0.5 + 0.3*x - 0.2*t + 0.4*x*x - 0.1*x*t',
      ([x, t]) => 0.5 + 0.3 * x - 0.2 * t + 0.4 * x * x - 0.1 * x * t,
      // u_t = −0.2 − 0.1x; a u_x = 0.7 (0.3 + 0.8x − 0.1t); ν u_xx = 0.05 · 0.8
      ([x, t]) => -0.2 - 0.1 * x + 0.7 * (0.3 + 0.8 * x - 0.1 * t) - 0.05 * 0.8,
    ],
    [
      '1D+t, p = 2, ν = 0.3, a = −0.4 (inflow on the right)', { dim: 1, order: 2, cells: 3, slabs: 1, jitter: 0.1, velocity: [-0.4], diffusivity: 0.3 },
      '1 - x*x + 0.5*t*t',
      ([x, t]) => 1 - x * x + 0.5 * t * t,
      // u_t = t; a u_x = −0.4 (−2x); ν u_xx = 0.3 · (−2)
      ([x, t]) => t + 0.8 * x + 0.6,
    ],
    [
      '2D+t, p = 2, ν = 0.1, expression velocity a = (1 + 0.5y, 0.3x), jittered', { dim: 2, order: 2, cells: 2, slabs: 1, jitter: 0.15, velocity: ['1 + 0.5*y', '0.3*x'], diffusivity: 0.1 },
      '0.5 + 0.2*x*y - 0.3*y + 0.25*t*x + 0.4*y*y',
      ([x, y, t]) => 0.5 + 0.2 * x * y - 0.3 * y + 0.25 * t * x + 0.4 * y * y,
      // ∇·a = 0, so ∇·(a u) = a·∇u; u_x = 0.2y + 0.25t, u_y = 0.2x − 0.3 + 0.8y, u_t = 0.25x, Δu = 0.8
      ([x, y, t]) => 0.25 * x + (1 + 0.5 * y) * (0.2 * y + 0.25 * t) + 0.3 * x * (0.2 * x - 0.3 + 0.8 * y) - 0.1 * 0.8,
    ],
    [
      '2D+t, p = 1, ν = 0.2, expression velocity with ∇·a ≠ 0', { dim: 2, order: 1, cells: 3, slabs: 2, jitter: 0.1, velocity: ['0.5 + x', '-0.2*y'], diffusivity: 0.2 },
      '1 + x - 2*y + 0.5*t',
      ([x, y, t]) => 1 + x - 2 * y + 0.5 * t,
      // ∇·(a u) = a·∇u + u ∇·a = (0.5 + x) − 0.2y·(−2) + 0.8 u; Δu = 0
      ([x, y, t]) => 0.5 + (0.5 + x) + 0.4 * y + 0.8 * (1 + x - 2 * y + 0.5 * t),
    ],
  ];
  const tests: Array<(X: number[]) => number> = [() => 1, (X) => X[0], (X) => X[X.length - 1], (X) => X[0] * X[X.length - 1] - 0.5 * X[0] * X[0]];
  for (const [label, o, expr, u, strong] of cases) {
    it(label, () => {
      const p = params({ physics: 'advection-diffusion', initial: expr, inflow: expr, ...o });
      const { disc } = generateWithDiscretization(p);
      const { mesh } = disc;
      const order = p.order;
      const U = piecewise(disc, order, u, () => 1);
      const { residual } = assembleDg(disc, U, { matrix: false });
      const nb = disc.bs;
      let worst = 0, size = 0, checked = 0;
      for (const v of tests.slice(0, order === 1 ? 3 : 4)) {
        const W = piecewise(disc, order, v, () => 1);
        for (let e = 0; e < mesh.nElements; e++) {
          const o0 = disc.ordering.inv[e] * nb;
          let got = 0;
          for (let a = 0; a < nb; a++) got += W[o0 + a] * residual[o0 + a];
          const want = simplexIntegral(elementVertices(mesh, e), (X) => strong(X) * v(X), 6);
          worst = Math.max(worst, Math.abs(got - want));
          size = Math.max(size, Math.abs(want));
          checked++;
        }
      }
      expect(checked).toBeGreaterThan(3 * mesh.nElements - 1);
      expect(size).toBeGreaterThan(1e-4);
      expect(worst / size).toBeLessThan(1e-11);
    });
  }
});

/**
 * The SIPG form B(u, v) of the header (item 4) for u = cu(e)·P, v = cv(e)·Q on element e, computed
 * face by face from the mesh's vertices with the tests' own geometry and quadrature.
 */
function sipgForm(
  disc: Discretization, nu: number, P: (X: number[]) => number, gradP: (X: number[]) => number[],
  Q: (X: number[]) => number, gradQ: (X: number[]) => number[], cu: (e: number) => number, cv: (e: number) => number,
): { value: number; scale: number } {
  const { mesh } = disc;
  const d = mesh.dim, D = d + 1;
  const p = disc.tables.order;
  const nq = 5;
  const faceVerts = (e: number, local: number): { F: number[][]; opposite: number[] } => {
    const V = elementVertices(mesh, e);
    return { F: V.filter((_, j) => j !== local), opposite: V[local] };
  };
  const ratio = (e: number): number => {
    const V = elementVertices(mesh, e);
    let s = 0;
    for (let j = 0; j <= D; j++) s += simplexMeasure(V.filter((_, i) => i !== j));
    return s / simplexMeasure(V);
  };
  const dotx = (a: number[], b: number[]): number => { let s = 0; for (let k = 0; k < d; k++) s += a[k] * b[k]; return s; };
  let value = 0, scale = 0;
  const add = (x: number): void => { value += x; scale += Math.abs(x); };
  for (let e = 0; e < mesh.nElements; e++) {
    add(nu * cu(e) * cv(e) * simplexIntegral(elementVertices(mesh, e), (X) => dotx(gradP(X), gradQ(X)), nq));
  }
  for (let f = 0; f < mesh.nFaces; f++) {
    const kind = mesh.faceKind[f];
    if (kind !== FaceKind.interior && kind !== FaceKind.periodic && kind !== FaceKind.spaceBoundary) continue;
    const L = mesh.faceLeft[f], R = mesh.faceRight[f];
    const { F, opposite } = faceVerts(L, mesh.faceLeftLocal[f]);
    const n = faceNormal(F, opposite);
    let n2 = 0;
    for (let k = 0; k < d; k++) n2 += n[k] * n[k];
    const shift = Array.from(mesh.faceShift.subarray(f * D, f * D + D));
    const sigma = nu * ((p + 1) * (p + D)) / D * Math.max(ratio(L), R >= 0 ? ratio(R) : 0);
    add(simplexIntegral(F, (X) => {
      const Xr = X.map((c, i) => c + shift[i]);
      const uL = cu(L) * P(X), vL = cv(L) * Q(X);
      const gu = gradP(X).map((g) => cu(L) * g), gv = gradQ(X).map((g) => cv(L) * g);
      if (R < 0) {
        // Nitsche: the one-sided value and gradient, [u] = u⁻
        return -nu * dotx(gu, n) * vL - nu * dotx(gv, n) * uL + sigma * n2 * uL * vL;
      }
      const uR = cu(R) * P(Xr), vR = cv(R) * Q(Xr);
      const guR = gradP(Xr).map((g) => cu(R) * g), gvR = gradQ(Xr).map((g) => cv(R) * g);
      const avgU = 0.5 * (dotx(gu, n) + dotx(guR, n)), avgV = 0.5 * (dotx(gv, n) + dotx(gvR, n));
      const ju = uL - uR, jv = vL - vR;
      return -nu * avgU * jv - nu * avgV * ju + sigma * n2 * ju * jv;
    }, nq));
  }
  return { value, scale };
}

describe('the diffusion part A(ν) − A(0) is the SIPG form with the documented penalty (own geometry and quadrature)', () => {
  const cases: Array<[string, Record<string, unknown>]> = [
    ['1D+t, p = 1, jittered, Dirichlet both sides', { dim: 1, order: 1, cells: 4, slabs: 2, jitter: 0.2, velocity: [0.6] }],
    ['1D+t, p = 2, periodic', { dim: 1, order: 2, cells: 3, slabs: 1, jitter: 0.1, periodic: true, velocity: [-0.3] }],
    ['2D+t, p = 1, jittered, periodic in x', { dim: 2, order: 1, cells: 2, slabs: 2, jitter: 0.1, periodic: [true, false], velocity: [0.3, 0.5] }],
    ['3D+t, p = 1', { dim: 3, order: 1, cells: 1, slabs: 1, jitter: 0.05, extent: [1, 2, 1], velocity: [0.2, 0.1, -0.3] }],
  ];
  const nu = 0.07;
  type Poly = [(X: number[]) => number, (X: number[]) => number[]];
  // degree-1 polynomials in space-time (gradients in space only, the form has no time derivatives)
  const lin = (c: number[]): Poly => [(X) => X.reduce((s, x, k) => s + c[k + 1] * x, c[0]), (X) => c.slice(1, X.length)];
  const quad: Poly = [(X) => X[0] * X[0] - X[0] * X[X.length - 1], (X) => X.map((_, k) => (k === 0 ? 2 * X[0] - X[X.length - 1] : 0)).slice(0, X.length - 1)];
  for (const [label, o] of cases) {
    it(label, () => {
      const base = { physics: 'advection-diffusion', initial: '1', inflow: '0', ...o };
      const withNu = generateWithDiscretization(params({ ...base, diffusivity: nu }));
      const without = generateWithDiscretization(params({ ...base, diffusivity: 0 })).system.bsr;
      const disc = withNu.disc;
      const A = withNu.system.bsr;
      const order = disc.tables.order;
      const D = disc.mesh.dim + 1;
      const polys: Poly[] = [lin([1, 0, 0, 0, 0]), lin([0.3, 1, -0.5, 0.7, 0.2]), lin([-0.2, 0.4, 1, -1, 0.6])];
      if (order >= 2) polys.push(quad);
      let checked = 0;
      for (let i = 0; i < polys.length; i++) {
        for (let j = 0; j < polys.length; j++) {
          const cu = (e: number): number => rnd(e, i + 3);
          const cv = (e: number): number => rnd(e, j + 11);
          const [P, gP] = polys[i], [Q, gQ] = polys[j];
          const Wu = piecewise(disc, order, P, cu), Wv = piecewise(disc, order, Q, cv);
          const got = dot(Wv, spmv(A, Wu)) - dot(Wv, spmv(without, Wu));
          const want = sipgForm(disc, nu, (X) => P(X.slice(0, D)), (X) => gP(X.slice(0, D)), (X) => Q(X.slice(0, D)), (X) => gQ(X.slice(0, D)), cu, cv);
          expect(Math.abs(got - want.value)).toBeLessThanOrEqual(1e-12 * want.scale);
          checked++;
        }
      }
      expect(checked).toBe(polys.length ** 2);
    });
  }
});

describe('conservation: Σ_K R(u; 1) = ∫ u_h(T) − ∫ u_0 on a periodic domain (the face fluxes telescope)', () => {
  // Burgers with a state of degree ≤ p that is not periodic: u_h jumps across the periodic faces,
  // the fluxes there are Rusanov's with a jump and must still cancel. The final-time integral uses
  // the state's own expression (its projection is exact), the initial one the initial expression,
  // both over the mesh's own t = T and t = 0 faces (jitter moves vertices in space, so these tile a
  // sheared copy of the period, and the integrands are not periodic).
  const cases: Array<[string, Record<string, unknown>, (X: number[]) => number, (X: number[]) => number]> = [
    ['Burgers 1D+t, p = 2, 2 slabs, jittered', { physics: 'burgers', dim: 1, order: 2, cells: 5, slabs: 2, jitter: 0.2, periodic: true, state: '0.5 + 0.3*x - 0.2*t + 0.4*x*x', initial: '0.4 + x - x*x' },
      ([x, t]) => 0.5 + 0.3 * x - 0.2 * t + 0.4 * x * x, ([x]) => 0.4 + x - x * x],
    ['Burgers 2D+t, p = 1, oblique direction', { physics: 'burgers', dim: 2, order: 1, cells: 3, slabs: 2, jitter: 0.1, periodic: true, direction: [0.6, 0.8], state: '0.6 + 0.5*x - 0.3*y + 0.2*t', initial: '1 + x*y' },
      ([x, y, t]) => 0.6 + 0.5 * x - 0.3 * y + 0.2 * t, ([x, y]) => 1 + x * y],
    ['advection–diffusion 2D+t, p = 1 (the diffusion terms cancel too)', { physics: 'advection-diffusion', dim: 2, order: 1, cells: 3, slabs: 1, jitter: 0.1, periodic: true, velocity: [0.4, 0.3], diffusivity: 0.1, initial: '1 + x*y', inflow: 0 },
      ([x, y, t]) => 0.2 + x - 2 * y + 0.3 * t, ([x, y]) => 1 + x * y],
  ];
  for (const [label, o, u, u0] of cases) {
    it(label, () => {
      const { disc } = generateWithDiscretization(params(o));
      const { mesh } = disc;
      const d = mesh.dim, T = mesh.finalTime;
      const order = disc.tables.order;
      const U = piecewise(disc, order, u, () => 1);
      const ones = piecewise(disc, order, () => 1, () => 1);
      const { residual, bsr } = assembleDg(disc, U);
      // ∫ f over the t = 0 or t = T faces of the mesh (the jittered mesh's own faces), own rule
      const overTimeFaces = (kind: number, f: (X: number[]) => number): number => {
        let s = 0;
        for (let face = 0; face < mesh.nFaces; face++) {
          if (mesh.faceKind[face] !== kind) continue;
          const V = elementVertices(mesh, mesh.faceLeft[face]);
          const F = V.filter((_, j) => j !== mesh.faceLeftLocal[face]);
          for (const X of F) expect(X[d]).toBe(kind === FaceKind.final ? T : 0);
          s += simplexIntegral(F, f, 5);
        }
        return s;
      };
      const atT = (f: (X: number[]) => number): number => overTimeFaces(FaceKind.final, f);
      let sumR = 0;
      for (let i = 0; i < residual.length; i++) sumR += ones[i] * residual[i];
      const want = atT(u) - overTimeFaces(FaceKind.initial, u0);
      expect(Math.abs(want)).toBeGreaterThan(0.01);
      expect(sumR).toBeCloseTo(want, 12);
      // the test's own face integral gives the area of the unit domain (its faces tile it)
      expect(overTimeFaces(FaceKind.initial, () => 1)).toBeCloseTo(1, 14);
      // the Jacobian: Σ_K (A δ)(1) = ∫ δ_h(T) for a δ of degree ≤ p that is not periodic
      const delta = (X: number[]): number => 0.3 - X[0] + 0.7 * X[d] + (d === 2 ? 0.5 * X[1] : 0);
      const Ad = spmv(bsr!, piecewise(disc, order, delta, () => 1));
      expect(dot(ones, Ad)).toBeCloseTo(atT(delta), 12);
    });
  }
});

describe('guards and progress', () => {
  it('a numerical flux that depends on the later slab across a slab interface is refused, in both assembly paths', () => {
    const { disc } = generateWithDiscretization(params({ physics: 'advection', dim: 1, order: 1, cells: 2, slabs: 2, velocity: [0.5] }));
    const phys = disc.physics as ScalarPhysics;
    // an (invalid) flux that couples to the right state on time faces: out[2] ≠ 0 where n_x = 0
    const leaky: ScalarPhysics = {
      ...phys,
      numericalFlux(X, xo, uL, uR, n, out) {
        phys.numericalFlux(X, xo, uL, uR, n, out);
        if (n[0] === 0 && n[1] > 0) out[2] = 0.25;
      },
    };
    const msg = /^face \d+: numerical flux depends on the later slab across a slab interface$/;
    expect(() => assembleDg({ ...disc, physics: leaky }, null)).toThrow(msg);
    expect(() => assembleDg({ ...disc, physics: { ...leaky, alignVelocity: null } }, null)).toThrow(msg);
  });

  it('progress is reported after every 4096 elements and every 4096 faces, with the running count', () => {
    // 1D+t, 2048 cells × 1 slab: 4096 triangles; p = 0 keeps it quick
    const { disc } = generateWithDiscretization(params({ physics: 'advection', dim: 1, order: 0, cells: 2048, slabs: 1, velocity: [1], cfl: 0.5 }));
    const { nElements, nFaces } = disc.mesh;
    const total = nElements + nFaces;
    const calls: Array<[number, number]> = [];
    assembleDg(disc, null, { onProgress: (done, tot) => calls.push([done, tot]) });
    const want: Array<[number, number]> = [];
    for (let e = 4096; e <= nElements; e += 4096) want.push([e, total]);
    for (let f = 4096; f <= nFaces; f += 4096) want.push([nElements + f, total]);
    want.push([1, 1]);
    expect(nElements).toBe(4096);
    expect(want.length).toBeGreaterThanOrEqual(3);
    expect(calls).toEqual(want);
    // the general path reports the same way
    const calls2: Array<[number, number]> = [];
    assembleDg(generalPath(disc), null, { onProgress: (done, tot) => calls2.push([done, tot]) });
    expect(calls2).toEqual(want);
  });
});
