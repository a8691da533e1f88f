import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { UserError } from '../../util/errors.js';
import { compileScalarField, sampleField } from '../expressions.js';
import { readBoolean, readExpression, readNumber, readVector, wrap } from './fields.js';
import type { LinearSystemPhysics, PhysicsDefinition } from './types.js';

/**
 * Linear acoustics (linearized Euler for pressure and velocity) about a uniform mean flow U,
 * in symmetric form with the scaled pressure q = p/(ρ₀c):
 *   ∂_t q + U·∇q + c ∇·v = 0,   ∂_t v + U·∇v + c ∇q = 0,
 * d + 1 equations, unknown order (q, v_1, …, v_d). A_k = U_k I + c (e_0 e_kᵀ + e_k e_0ᵀ) is
 * symmetric, so A(n) = n_t I + Σ n_k A_k has real eigenvalues n_t + U·n_x ± c|n_x| and
 * n_t + U·n_x (d − 1 times) (e.g. LeVeque, Finite Volume Methods for Hyperbolic Problems, 2002,
 * §18.5). Upwind (characteristic) flux Ĝ·n = A⁺ u⁻ + A⁻ u⁺, A^± = R Λ^± R⁻¹ (ibid. §4.12 / §18.4),
 * computed from the eigen-decomposition (ml-matrix). Boundary faces use the exact solution as the
 * exterior state when one is known, else a quiet exterior (0): characteristic (non-reflecting)
 * conditions.
 *
 * Exact solutions (derived from the Riemann invariants w± = q ± v_1 travelling at U_1 ± c),
 * valid when the initial pressure q₀ depends on x only (any d; mean flow components along y, z
 * then drop out): travelling: q = v_1 = q₀(x − (U_1 + c)t); at rest:
 * q = ½(q₀(x − (U_1+c)t) + q₀(x − (U_1−c)t)), v_1 = ½(q₀(x − (U_1+c)t) − q₀(x − (U_1−c)t)).
 */

export const DEFAULT_ACOUSTIC_INITIAL = 'sin(2*pi*x/Lx)';

export const acoustics: PhysicsDefinition = {
  name: 'acoustics',
  description: 'linear acoustics about a uniform mean flow (d+1 equations), characteristic upwind flux',
  fields: ['soundSpeed', 'meanFlow', 'initial', 'travelling', 'inflow'],
  nEquations: (dim) => dim + 1,
  normalize(raw, ctx) {
    const soundSpeed = readNumber(raw, 'soundSpeed', ctx.label, 1, { min: 0, minExclusive: true });
    const meanFlow = readVector(raw, 'meanFlow', ctx.label, ctx.dim, [0, 0, 0]);
    const initial = readExpression(raw, 'initial', ctx.label, DEFAULT_ACOUSTIC_INITIAL);
    const travelling = readBoolean(raw, 'travelling', ctx.label, true);
    const f = compileScalarField(initial, ctx.label('initial'), ctx.extent);
    const exactKnown = !f.variables.has('y') && !f.variables.has('z') && !f.variables.has('t');
    const inflow = raw.inflow === undefined ? (exactKnown ? 'exact' : 'quiet') : raw.inflow;
    if (inflow !== 'exact' && inflow !== 'quiet') {
      throw new UserError(`${ctx.label('inflow')}: expected 'exact' or 'quiet' for acoustics, got ${JSON.stringify(inflow)}`);
    }
    if (inflow === 'exact' && !exactKnown) {
      throw new UserError(`${ctx.label('inflow')}: 'exact' needs an initial pressure that depends on x only`);
    }
    return { soundSpeed, meanFlow, initial, travelling, inflow };
  },
  check(fields, ctx) {
    sampleField(compileScalarField(fields.initial as string | number, ctx.label('initial'), ctx.extent), ctx.extent, 0);
  },
  create(fields, ctx): LinearSystemPhysics {
    const d = ctx.dim;
    const m = d + 1;
    const c = fields.soundSpeed as number;
    const U = fields.meanFlow as number[];
    const travelling = fields.travelling as boolean;
    const q0 = compileScalarField(fields.initial as string | number, ctx.label('initial'), ctx.extent);
    const exactKnown = !q0.variables.has('y') && !q0.variables.has('z') && !q0.variables.has('t');
    const spatialMatrices: Float64Array[] = [];
    for (let k = 0; k < d; k++) {
      const a = new Float64Array(m * m);
      for (let i = 0; i < m; i++) a[i * m + i] = U[k];
      a[0 * m + (k + 1)] = c;
      a[(k + 1) * m + 0] = c;
      spatialMatrices.push(a);
    }
    const speedU = Math.hypot(...U);
    const scale = speedU + c + 1;
    const profile = (s: number, X: Float64Array, xo: number): number =>
      q0.evaluate(ctx.periodic[0] ? wrap(s, ctx.extent[0]) : s, d > 1 ? X[xo + 1] : 0, d > 2 ? X[xo + 2] : 0, 0);
    const exact = exactKnown
      ? (X: Float64Array, xo: number, out: Float64Array): void => {
        const x = X[xo];
        const t = X[xo + d];
        const wPlus = profile(x - (U[0] + c) * t, X, xo);
        if (travelling) {
          out[0] = wPlus;
          out[1] = wPlus;
        } else {
          const wMinus = profile(x - (U[0] - c) * t, X, xo);
          out[0] = 0.5 * (wPlus + wMinus);
          out[1] = 0.5 * (wPlus - wMinus);
        }
        for (let k = 2; k < m; k++) out[k] = 0;
      }
      : null;
    const quiet = (_X: Float64Array, _xo: number, out: Float64Array): void => { out.fill(0, 0, m); };
    const aN = new Matrix(m, m);
    return {
      kind: 'system',
      name: 'acoustics',
      nEquations: m,
      maxWaveSpeed: speedU + c,
      alignVelocity: U.slice(),
      exact,
      state: null,
      extraQuadratureDegree: () => 1,
      summary: {
        variables: ['p/(rho0 c)', ...['vx', 'vy', 'vz'].slice(0, d)],
        exactSolution: exact !== null,
        maxWaveSpeed: speedU + c,
      },
      spatialMatrices,
      transportVelocity(_X, _xo, out) { for (let k = 0; k < d; k++) out[k] = U[k]; },
      initialData(X, xo, out) {
        const q = q0.evaluate(X[xo], d > 1 ? X[xo + 1] : 0, d > 2 ? X[xo + 2] : 0, 0);
        out[0] = q;
        for (let k = 1; k < m; k++) out[k] = 0;
        if (travelling) out[1] = q;
      },
      boundaryData: fields.inflow === 'exact' && exact ? exact : quiet,
      upwindSplit(n, aPlus, aMinus) {
        let nx2 = 0;
        for (let k = 0; k < d; k++) nx2 += n[k] * n[k];
        aPlus.fill(0, 0, m * m);
        aMinus.fill(0, 0, m * m);
        if (nx2 === 0) {
          // Slab interface / initial / final face: A(n) = n_t I exactly.
          const nt = n[d];
          for (let i = 0; i < m; i++) {
            if (nt > 0) aPlus[i * m + i] = nt;
            else aMinus[i * m + i] = nt;
          }
          return;
        }
        for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) {
          let v = i === j ? n[d] : 0;
          for (let k = 0; k < d; k++) v += n[k] * spatialMatrices[k][i * m + j];
          aN.set(i, j, v);
        }
        const evd = new EigenvalueDecomposition(aN, { assumeSymmetric: true });
        const lambda = evd.realEigenvalues;
        const R = evd.eigenvectorMatrix;
        // A symmetric: R orthogonal, A^± = R Λ^± Rᵀ.
        for (let e = 0; e < m; e++) {
          let l = lambda[e];
          if (Math.abs(l) <= 1e-13 * scale) l = 0;
          if (l === 0) continue;
          const target = l > 0 ? aPlus : aMinus;
          for (let i = 0; i < m; i++) {
            const ri = R.get(i, e) * l;
            for (let j = 0; j < m; j++) target[i * m + j] += ri * R.get(j, e);
          }
        }
      },
    };
  },
};
