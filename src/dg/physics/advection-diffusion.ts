import { readNumber, defaultSineProduct, wrap } from './fields.js';
import { normalizeTransportFields, createTransportPhysics, checkTransportFields, translatedInitial } from './advection.js';
import { compileScalarField } from '../expressions.js';
import type { PhysicsDefinition } from './types.js';

/**
 * Advection–diffusion ∂_t u + ∇·(a u) = ν Δ_x u. Advection as in advection.ts (exact upwinding on
 * the space-time normal); diffusion by the symmetric interior penalty method in space (Arnold,
 * Brezzi, Cockburn & Marini, SINUM 39, 2002, for the method; space-time form as in Sudirham,
 * van der Vegt & van Damme, Appl. Numer. Math. 56, 2006). The penalty is set in assemble-scalar.ts.
 * Space boundaries are Dirichlet (Nitsche) with the inflow data.
 *
 * Exact solution (derived): with a constant velocity and the default initial condition
 * Π sin(2π x_k/L_k), u = exp(−ν t Σ_k (2π/L_k)²) Π sin(2π (x_k − a_k t)/L_k).
 */
export const DEFAULT_DIFFUSIVITY = 0.01;

export const advectionDiffusion: PhysicsDefinition = {
  name: 'advection-diffusion',
  description: 'advection–diffusion ∂t u + ∇·(a u) = ν Δx u, upwind + symmetric interior penalty',
  fields: ['velocity', 'diffusivity', 'initial', 'inflow'],
  nEquations: () => 1,
  normalize(raw, ctx) {
    const f = normalizeTransportFields(raw, ctx);
    const diffusivity = readNumber(raw, 'diffusivity', ctx.label, DEFAULT_DIFFUSIVITY, { min: 0 });
    const constant = f.velocity.every((v) => compileScalarField(v, ctx.label('velocity'), ctx.extent).constant);
    const exactKnown = constant && (diffusivity === 0 || f.initial === defaultSineProduct(ctx.dim));
    if (raw.inflow === undefined && !exactKnown) f.inflow = 0;
    return { velocity: f.velocity, diffusivity, initial: f.initial, inflow: f.inflow };
  },
  check: checkTransportFields,
  create(fields, ctx) {
    const nu = fields.diffusivity as number;
    const d = ctx.dim;
    return createTransportPhysics('advection-diffusion', fields, ctx, nu, (setup) => {
      if (!setup.constantVelocity) return null;
      if (nu === 0) return translatedInitial(setup, ctx);
      if (fields.initial !== defaultSineProduct(d)) return null;
      const a = setup.constantVelocity;
      let k2 = 0;
      for (let k = 0; k < d; k++) k2 += (2 * Math.PI / ctx.extent[k]) ** 2;
      return (X, xo, out) => {
        const t = X[xo + d];
        let v = Math.exp(-nu * t * k2);
        for (let k = 0; k < d; k++) {
          const s = X[xo + k] - a[k] * t;
          v *= Math.sin((2 * Math.PI * (ctx.periodic[k] ? wrap(s, ctx.extent[k]) : s)) / ctx.extent[k]);
        }
        out[0] = v;
      };
    });
  },
};
