import { UserError } from '../../util/errors.js';
import { compileScalarField, sampleField } from '../expressions.js';
import { readExpression, readVector } from './fields.js';
import type { PhysicsDefinition, ScalarPhysics } from './types.js';

/**
 * Inviscid Burgers ∂_t u + ∇·(b u²/2) = 0 along a flux direction b (unit vector, default e_1).
 * Numerical flux: local Lax–Friedrichs (Rusanov) on the space-time normal,
 *   H(u⁻, u⁺) = ½(G(u⁻)·n + G(u⁺)·n) − ½ α (u⁺ − u⁻),  α = max(|λ(u⁻)|, |λ(u⁺)|),
 *   λ(u) = u (b·n_x) + n_t  (Rusanov 1961; e.g. Hesthaven & Warburton, Nodal DG Methods, 2008, §2.2).
 * On a slab interface b·n_x = 0, λ = n_t = ±1, α = 1 and H is the earlier slab's value.
 * The generator assembles the exact Jacobian of this discrete residual at a given state (the
 * max in α is differentiated on its active branch, the left one on a tie |λ(u⁻)| = |λ(u⁺)|) and
 * −residual as the right-hand side: one Newton step.
 */

export const DEFAULT_BURGERS_INITIAL = '0.6 - 0.4 * tanh((x - 0.3 * Lx) / (0.05 * Lx))';

export const burgers: PhysicsDefinition = {
  name: 'burgers',
  description: 'inviscid Burgers ∂t u + ∇·(b u²/2) = 0, local Lax–Friedrichs, one Newton step',
  fields: ['direction', 'initial', 'state', 'inflow'],
  nEquations: () => 1,
  normalize(raw, ctx) {
    const d = ctx.dim;
    const direction = readVector(raw, 'direction', ctx.label, d, [1, 0, 0]);
    const norm = Math.hypot(...direction);
    if (norm === 0) throw new UserError(`${ctx.label('direction')}: expected a non-zero vector`);
    const initial = readExpression(raw, 'initial', ctx.label, DEFAULT_BURGERS_INITIAL);
    const state = readExpression(raw, 'state', ctx.label, initial);
    const inflow = readExpression(raw, 'inflow', ctx.label, initial);
    compileScalarField(initial, ctx.label('initial'), ctx.extent);
    compileScalarField(state, ctx.label('state'), ctx.extent);
    compileScalarField(inflow, ctx.label('inflow'), ctx.extent);
    return { direction: direction.map((c) => c / norm), initial, state, inflow };
  },
  check(fields, ctx, finalTime) {
    sampleField(compileScalarField(fields.initial as string | number, ctx.label('initial'), ctx.extent), ctx.extent, 0);
    sampleField(compileScalarField(fields.state as string | number, ctx.label('state'), ctx.extent), ctx.extent, finalTime);
    sampleField(compileScalarField(fields.inflow as string | number, ctx.label('inflow'), ctx.extent), ctx.extent, finalTime);
  },
  create(fields, ctx): ScalarPhysics {
    const d = ctx.dim;
    const b = Float64Array.from(fields.direction as number[]);
    const initial = compileScalarField(fields.initial as string | number, ctx.label('initial'), ctx.extent);
    const state = compileScalarField(fields.state as string | number, ctx.label('state'), ctx.extent);
    const inflow = compileScalarField(fields.inflow as string | number, ctx.label('inflow'), ctx.extent);
    const at = (f: typeof state, X: Float64Array, xo: number, t: number): number =>
      f.evaluate(X[xo], d > 1 ? X[xo + 1] : 0, d > 2 ? X[xo + 2] : 0, t);
    // |b| = 1, so the wave speed is the largest |state|, sampled over the domain at t = 0.
    const maxWaveSpeed = sampleField(state, ctx.extent, 0);
    return {
      kind: 'scalar',
      name: 'burgers',
      nEquations: 1,
      maxWaveSpeed,
      alignVelocity: null,
      diffusivity: 0,
      exact: null,
      state: (X, xo, out) => { out[0] = at(state, X, xo, X[xo + d]); },
      // Volume integrand (u²/2)·∇φ: degree 3p − 1; face integrand u² φ: degree 3p (Burgers flux is quadratic).
      extraQuadratureDegree: (p) => p + 1,
      summary: { flux: 'local Lax-Friedrichs', maxWaveSpeed, rhs: 'minus the residual at the state (Newton step)' },
      transportVelocity(X, xo, out) {
        const u = at(state, X, xo, X[xo + d]);
        for (let k = 0; k < d; k++) out[k] = u * b[k];
      },
      initialData(X, xo, out) { out[0] = at(initial, X, xo, 0); },
      boundaryData(X, xo, out) { out[0] = at(inflow, X, xo, X[xo + d]); },
      flux(_X, _xo, u, g, dg) {
        const h = 0.5 * u * u;
        for (let k = 0; k < d; k++) {
          g[k] = h * b[k];
          dg[k] = u * b[k];
        }
        g[d] = u;
        dg[d] = 1;
      },
      numericalFlux(_X, _xo, uL, uR, n, out) {
        let bn = 0;
        for (let k = 0; k < d; k++) bn += b[k] * n[k];
        const nt = n[d];
        const lamL = uL * bn + nt;
        const lamR = uR * bn + nt;
        const gL = 0.5 * uL * uL * bn + uL * nt;
        const gR = 0.5 * uR * uR * bn + uR * nt;
        const aL = Math.abs(lamL);
        const aR = Math.abs(lamR);
        const jump = uR - uL;
        let alpha: number, dAlphaL = 0, dAlphaR = 0;
        if (aL >= aR) {
          alpha = aL;
          dAlphaL = (lamL >= 0 ? 1 : -1) * bn;
        } else {
          alpha = aR;
          dAlphaR = (lamR >= 0 ? 1 : -1) * bn;
        }
        out[0] = 0.5 * (gL + gR) - 0.5 * alpha * jump;
        out[1] = 0.5 * lamL + 0.5 * alpha - 0.5 * dAlphaL * jump;
        out[2] = 0.5 * lamR - 0.5 * alpha - 0.5 * dAlphaR * jump;
      },
    };
  },
};
