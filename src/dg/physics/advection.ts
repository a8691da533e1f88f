import { UserError } from '../../util/errors.js';
import { compileScalarField, sampleField, type ScalarField } from '../expressions.js';
import { readExpression, readExpressionVector, wrap, defaultSineProduct } from './fields.js';
import type { PhysicsContext, PhysicsDefinition, ScalarPhysics } from './types.js';

/**
 * Linear advection ∂_t u + ∇·(a u) = 0 with a constant velocity or one given by expressions
 * a_k(x, y, z, t). Space-time flux G(u) = (a u, u); numerical flux = exact upwinding on the
 * space-time normal, Ĝ·n = β⁺ u⁻ + β⁻ u⁺ with β = a·n_x + n_t (Reed & Hill 1973; Lesaint &
 * Raviart 1974; in space-time form e.g. Johnson & Pitkäranta, Math. Comp. 46, 1986).
 * On a slab interface n_x = 0, so β = n_t = ±1 and the flux is the earlier slab's value.
 */

export const DEFAULT_VELOCITY = [1, 0.5, 0.25];

/** Shared by advection and advection–diffusion: velocity, initial, inflow. */
export function normalizeTransportFields(raw: Record<string, unknown>, ctx: PhysicsContext): {
  velocity: (string | number)[]; initial: string | number; inflow: string | number;
} {
  const velocity = readExpressionVector(raw, 'velocity', ctx.label, ctx.dim, DEFAULT_VELOCITY);
  const initial = readExpression(raw, 'initial', ctx.label, defaultSineProduct(ctx.dim));
  const inflow = readExpression(raw, 'inflow', ctx.label, 'exact');
  const fields = velocity.map((v, i) => compileScalarField(v, ctx.label(`velocity[${i}]`), ctx.extent));
  compileScalarField(initial, ctx.label('initial'), ctx.extent);
  if (inflow !== 'exact') compileScalarField(inflow, ctx.label('inflow'), ctx.extent);
  if (fields.some((f) => !f.constant) && inflow === 'exact' && raw.inflow !== undefined) {
    throw new UserError(`${ctx.label('inflow')}: 'exact' needs a constant velocity (no exact solution is known for a velocity field); give an expression`);
  }
  return { velocity, initial, inflow };
}

export interface TransportSetup {
  velocity: ScalarField[];
  constantVelocity: number[] | null;
  initial: ScalarField;
  maxSpeed: number;
}

export function compileTransport(fields: Record<string, unknown>, ctx: PhysicsContext): TransportSetup {
  const velocity = (fields.velocity as (string | number)[]).map((v, i) => compileScalarField(v, ctx.label(`velocity[${i}]`), ctx.extent));
  const initial = compileScalarField(fields.initial as string | number, ctx.label('initial'), ctx.extent);
  const constantVelocity = velocity.every((f) => f.constant) ? velocity.map((f) => f.value) : null;
  let maxSpeed: number;
  if (constantVelocity) {
    maxSpeed = Math.hypot(...constantVelocity);
  } else {
    // Speed at t = 0 sampled on a lattice (the slab thickness from a CFL number needs a number before the mesh exists).
    maxSpeed = 0;
    const d = ctx.dim;
    const n = 9;
    const pt = [0, 0, 0];
    const counts = [n, d > 1 ? n : 1, d > 2 ? n : 1];
    for (let i = 0; i < counts[0]; i++) for (let j = 0; j < counts[1]; j++) for (let k = 0; k < counts[2]; k++) {
      pt[0] = (ctx.extent[0] * i) / (n - 1);
      pt[1] = d > 1 ? (ctx.extent[1] * j) / (n - 1) : 0;
      pt[2] = d > 2 ? (ctx.extent[2] * k) / (n - 1) : 0;
      let s2 = 0;
      for (let c = 0; c < d; c++) s2 += velocity[c].evaluate(pt[0], pt[1], pt[2], 0) ** 2;
      maxSpeed = Math.max(maxSpeed, Math.sqrt(s2));
    }
  }
  return { velocity, constantVelocity, initial, maxSpeed };
}

/**
 * Build the scalar transport physics; `diffusivity` > 0 adds the interior-penalty term, and
 * `exactFor` supplies the exact solution when one is known (null otherwise).
 */
export function createTransportPhysics(
  name: 'advection' | 'advection-diffusion',
  fields: Record<string, unknown>, ctx: PhysicsContext, diffusivity: number,
  exactFor: (setup: TransportSetup) => ((X: Float64Array, xo: number, out: Float64Array) => void) | null,
): ScalarPhysics {
  const d = ctx.dim;
  const setup = compileTransport(fields, ctx);
  const { velocity, constantVelocity, initial } = setup;
  const a0 = constantVelocity ? Float64Array.from(constantVelocity) : null;
  const aScale = setup.maxSpeed + 1;
  const vx = (X: Float64Array, xo: number, k: number): number =>
    a0 ? a0[k] : velocity[k].evaluate(X[xo], d > 1 ? X[xo + 1] : 0, d > 2 ? X[xo + 2] : 0, X[xo + d]);
  const exact = exactFor(setup);
  const inflowText = fields.inflow as string | number;
  let boundaryData: (X: Float64Array, xo: number, out: Float64Array) => void;
  if (inflowText === 'exact') {
    if (!exact) throw new UserError(`${ctx.label('inflow')}: no exact solution is known for this case; give an inflow expression`);
    boundaryData = exact;
  } else {
    const inflow = compileScalarField(inflowText, ctx.label('inflow'), ctx.extent);
    boundaryData = (X, xo, out) => { out[0] = inflow.evaluate(X[xo], d > 1 ? X[xo + 1] : 0, d > 2 ? X[xo + 2] : 0, X[xo + d]); };
  }
  return {
    kind: 'scalar',
    name,
    nEquations: 1,
    maxWaveSpeed: setup.maxSpeed,
    alignVelocity: constantVelocity,
    diffusivity,
    exact,
    state: null,
    extraQuadratureDegree: () => (constantVelocity ? 1 : 3),
    summary: {
      velocityKind: constantVelocity ? 'constant' : 'expression',
      exactSolution: exact !== null,
      maxWaveSpeed: setup.maxSpeed,
    },
    transportVelocity(X, xo, out) {
      for (let k = 0; k < d; k++) out[k] = vx(X, xo, k);
    },
    initialData(X, xo, out) {
      out[0] = initial.evaluate(X[xo], d > 1 ? X[xo + 1] : 0, d > 2 ? X[xo + 2] : 0, 0);
    },
    boundaryData,
    flux(X, xo, u, g, dg) {
      for (let k = 0; k < d; k++) {
        const a = vx(X, xo, k);
        g[k] = a * u;
        dg[k] = a;
      }
      g[d] = u;
      dg[d] = 1;
    },
    numericalFlux(X, xo, uL, uR, n, out) {
      let beta = n[d];
      for (let k = 0; k < d; k++) beta += vx(X, xo, k) * n[k];
      // Faces (numerically) parallel to the space-time velocity carry no flux in either direction.
      if (Math.abs(beta) <= 1e-13 * aScale) beta = 0;
      const bp = beta > 0 ? beta : 0;
      const bm = beta < 0 ? beta : 0;
      out[0] = bp * uL + bm * uR;
      out[1] = bp;
      out[2] = bm;
    },
  };
}

/** Exact solution u0(x − a t) for a constant velocity (periodic axes wrapped into [0, L)). */
export function translatedInitial(setup: TransportSetup, ctx: PhysicsContext): ((X: Float64Array, xo: number, out: Float64Array) => void) | null {
  const a = setup.constantVelocity;
  if (!a) return null;
  const d = ctx.dim;
  const { initial } = setup;
  const shifted = [0, 0, 0];
  return (X, xo, out) => {
    const t = X[xo + d];
    for (let k = 0; k < d; k++) {
      const s = X[xo + k] - a[k] * t;
      shifted[k] = ctx.periodic[k] ? wrap(s, ctx.extent[k]) : s;
    }
    out[0] = initial.evaluate(shifted[0], shifted[1], shifted[2], 0);
  };
}

export const advection: PhysicsDefinition = {
  name: 'advection',
  description: 'linear advection ∂t u + ∇·(a u) = 0, exact upwind flux',
  fields: ['velocity', 'initial', 'inflow'],
  nEquations: () => 1,
  normalize(raw, ctx) {
    const f = normalizeTransportFields(raw, ctx);
    const constant = f.velocity.every((v) => compileScalarField(v, ctx.label('velocity'), ctx.extent).constant);
    if (raw.inflow === undefined && !constant) f.inflow = 0;
    return { ...f };
  },
  check: checkTransportFields,
  create(fields, ctx) {
    return createTransportPhysics('advection', fields, ctx, 0, (setup) => translatedInitial(setup, ctx));
  },
};

/** Sample every expression over the space-time box so NaN/complex values are caught before any work. */
export function checkTransportFields(fields: Record<string, unknown>, ctx: PhysicsContext, finalTime: number): void {
  const setup = compileTransport(fields, ctx);
  for (const f of setup.velocity) sampleField(f, ctx.extent, finalTime);
  sampleField(setup.initial, ctx.extent, 0);
  const inflow = fields.inflow;
  if (inflow !== 'exact' && inflow !== undefined) {
    sampleField(compileScalarField(inflow as string | number, ctx.label('inflow'), ctx.extent), ctx.extent, finalTime);
  }
}
