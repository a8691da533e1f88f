import { UserError } from '../../util/errors.js';
import { readNumber, readVector, show, wrap } from './fields.js';
import type { NonlinearSystemPhysics, PhysicsDefinition } from './types.js';
import { eulerSpatialFlux, eulerNumericalFlux, pressureOf, toConserved, type EulerFluxName } from './euler-flux.js';
import { sampleRiemann, solveRiemann, type Primitive } from './euler-riemann.js';
import {
  checkPrimitiveState, compilePrimitiveState, parsePrimitiveExpressions, sampledWaveSpeed, type PrimitiveExpressions,
} from './euler-state.js';

/**
 * Compressible Euler equations of an ideal gas (d + 2 equations: ρ, ρu, E) in 1D+t, 2D+t and
 * 3D+t, space-time DG with a local Lax–Friedrichs or a Roe flux (src/dg/physics/euler-flux.ts).
 * The matrix is the exact Jacobian of the nonlinear DG residual at the L² projection of a state,
 * the right-hand side minus the residual there (one Newton step), as for Burgers. States, each an
 * exact solution of the Euler equations, also used for the initial and boundary data:
 *  - uniform: constant density, velocity and pressure (free stream);
 *  - vortex: the isentropic vortex advected by the free stream (Shu, NASA/CR-97-206253, 1997;
 *    2D only): δu = −ε/(2π) e^{(1−r²)/2} ȳ, δv = ε/(2π) e^{(1−r²)/2} x̄,
 *    T = 1 − (γ−1)ε²/(8γπ²) e^{1−r²}, ρ = T^{1/(γ−1)}, p = ρT, about (x̄, ȳ) = x − x_c − u∞ t taken
 *    to the nearest periodic image, vortex centred in Ω at t = 0;
 *  - shock-tube: the exact Riemann solution (src/dg/physics/euler-riemann.ts, Toro 2009 ch. 4)
 *    of left/right primitive states separated at x = diaphragm (default Sod 1978:
 *    (1, 0, 1) | (0.125, 0, 0.1)), varying along x only, evaluated exactly at every point;
 *  - primitive expressions of (x, y, z, t) for ρ, the velocity and p (euler-state.ts): any state,
 *    not necessarily a solution (no exact solution then).
 * Boundary data on space-boundary faces come from the state unless `inflow` gives primitive
 * expressions of their own (then no exact solution either); initial data are the state at t = 0.
 */

export type EulerStateName = 'uniform' | 'vortex' | 'shock-tube';
const STATES: readonly EulerStateName[] = ['uniform', 'vortex', 'shock-tube'];
const FLUXES: readonly EulerFluxName[] = ['llf', 'roe'];

function readChoice<T extends string>(raw: Record<string, unknown>, key: string, label: (f: string) => string, values: readonly T[], dflt: T): T {
  const v = raw[key];
  if (v === undefined) return dflt;
  if (typeof v !== 'string' || !values.includes(v as T)) throw new UserError(`${label(key)}: expected one of ${values.join(', ')}, got ${show(v)}`);
  return v as T;
}

export const euler: PhysicsDefinition = {
  name: 'euler',
  description: 'compressible Euler (ideal gas), local Lax–Friedrichs or Roe flux, one Newton step at a uniform, vortex or shock-tube state',
  fields: ['gamma', 'flux', 'state', 'density', 'velocity', 'pressure', 'vortexStrength', 'left', 'right', 'diaphragm', 'inflow'],
  nEquations: (dim) => dim + 2,
  normalize(raw, ctx) {
    const d = ctx.dim;
    const gamma = readNumber(raw, 'gamma', ctx.label, 1.4, { min: 1, minExclusive: true, max: 5 / 3 + 1e-12 });
    const flux = readChoice(raw, 'flux', ctx.label, FLUXES, 'roe');
    const rawState = raw.state;
    const expression = rawState !== undefined && !(typeof rawState === 'string' && STATES.includes(rawState as EulerStateName));
    const state = expression ? 'expression' : readChoice(raw, 'state', ctx.label, STATES, 'uniform');
    const out: Record<string, unknown> = { gamma, flux, state };
    if (raw.inflow !== undefined) out.inflow = parsePrimitiveExpressions(raw.inflow, d, ctx.label('inflow'), ctx.extent);
    const given = (k: string) => raw[k] !== undefined;
    const refuse = (keys: string[]) => {
      for (const k of keys) if (given(k)) throw new UserError(`${ctx.label(k)}: has no effect with ${expression ? 'an expression state (give rho, u, …, p in the state)' : `state ${state}`}`);
    };
    if (expression) {
      if (typeof rawState === 'string' && !rawState.includes('=')) {
        throw new UserError(`${ctx.label('state')}: expected one of ${STATES.join(', ')} or primitive expressions 'rho = …; ${['u', 'v', 'w'].slice(0, d).map((n) => `${n} = …`).join('; ')}; p = …', got ${show(rawState)}`);
      }
      refuse(['density', 'pressure', 'velocity', 'vortexStrength', 'left', 'right', 'diaphragm']);
      out.state = parsePrimitiveExpressions(rawState, d, ctx.label('state'), ctx.extent);
    } else if (state === 'uniform' || state === 'vortex') {
      refuse(['left', 'right', 'diaphragm']);
      out.density = readNumber(raw, 'density', ctx.label, 1, { min: 0, minExclusive: true });
      out.pressure = readNumber(raw, 'pressure', ctx.label, 1, { min: 0, minExclusive: true });
      out.velocity = readVector(raw, 'velocity', ctx.label, d, [0.5, 0.25, 0.125]);
      if (state === 'vortex') {
        if (d !== 2) throw new UserError(`${ctx.label('state')}: the isentropic vortex is two-dimensional, expected dim 2, got ${d}`);
        refuse(['density', 'pressure']);
        out.density = 1; out.pressure = 1;
        out.vortexStrength = readNumber(raw, 'vortexStrength', ctx.label, 5, { min: 0 });
        if (raw.velocity === undefined) out.velocity = [1, 1];
      } else refuse(['vortexStrength']);
    } else {
      refuse(['density', 'pressure', 'velocity', 'vortexStrength']);
      const prim = (k: string, dflt: number[]) => {
        const v = raw[k] ?? dflt;
        if (!Array.isArray(v) || v.length !== 3 || !v.every((c) => typeof c === 'number' && Number.isFinite(c)) || !(v[0] > 0) || !(v[2] > 0)) {
          throw new UserError(`${ctx.label(k)}: expected three numbers density, velocity, pressure with density > 0 and pressure > 0, got ${show(v)}`);
        }
        return v as number[];
      };
      out.left = prim('left', [1, 0, 1]);
      out.right = prim('right', [0.125, 0, 0.1]);
      out.diaphragm = readNumber(raw, 'diaphragm', ctx.label, 0.5 * ctx.extent[0]!, { min: 0, max: ctx.extent[0] });
      const [l, r] = [out.left as number[], out.right as number[]];
      // refuses vacuum-generating data here, with the option named
      try { solveRiemann({ rho: l[0]!, u: l[1]!, p: l[2]! }, { rho: r[0]!, u: r[1]!, p: r[2]! }, gamma); } catch (e) {
        throw new UserError(`${ctx.label('left')}: ${(e as Error).message}`);
      }
    }
    return out;
  },
  check(fields, ctx, T) {
    // built-in states are closed-form; expressions are sampled over Ω×[0, T]
    for (const key of ['state', 'inflow']) {
      const v = fields[key];
      if (typeof v !== 'object' || v === null) continue;
      const compiled = compilePrimitiveState(v as PrimitiveExpressions, ctx.dim, ctx.label(key), ctx.extent, key === 'state' ? 'state' : 'boundary data');
      checkPrimitiveState(compiled, ctx.dim, ctx.extent, T);
    }
  },
  create(fields, ctx): NonlinearSystemPhysics {
    const d = ctx.dim;
    const m = d + 2;
    const gamma = fields.gamma as number;
    const fluxName = fields.flux as EulerFluxName;
    const stateName = typeof fields.state === 'string' ? fields.state as EulerStateName : 'expression';
    const vel = new Float64Array(3);
    const conserved = (at: PrimitiveAt) => (X: Float64Array, xo: number, out: Float64Array, element?: number): void => {
      const s = at(X, xo, vel, element);
      toConserved(s.rho, vel.subarray(0, d), s.p, gamma, out);
    };
    let primitiveAt: PrimitiveAt;
    let maxWaveSpeed: number;
    let alignVelocity: number[] | null = null;
    if (stateName === 'expression') {
      const compiled = compilePrimitiveState(fields.state as PrimitiveExpressions, d, ctx.label('state'), ctx.extent, 'state');
      primitiveAt = compiled.at;
      maxWaveSpeed = sampledWaveSpeed(compiled, d, ctx.extent, gamma);
      alignVelocity = compiled.constantVelocity;
    } else {
      primitiveAt = makeState(stateName, fields, ctx.extent, d, gamma);
      maxWaveSpeed = waveSpeedBound(stateName, fields, d, gamma);
      if (stateName === 'uniform') alignVelocity = (fields.velocity as number[]).slice(0, d);
    }
    const conservedAt = conserved(primitiveAt);
    const boundaryAt = fields.inflow !== undefined
      ? conserved(compilePrimitiveState(fields.inflow as PrimitiveExpressions, d, ctx.label('inflow'), ctx.extent, 'boundary data').at)
      : conservedAt;
    const exact = stateName !== 'expression' && fields.inflow === undefined ? conservedAt : null;
    const fk = new Float64Array(m), dfk = new Float64Array(m * m);
    // where: 0 = a quadrature point of element `index`, 1/2 = inner/outer side of face `index`
    // (the message is built only on failure: this runs at every quadrature point)
    const check = (U: Float64Array, where: 0 | 1 | 2, index: number): void => {
      const p = pressureOf(U, d, gamma);
      if (!(U[0]! > 0) || !(p > 0)) {
        const at = where === 0 ? `a quadrature point of element ${index}` : `face ${index} (${where === 1 ? 'inner' : 'outer'} side)`;
        throw new UserError(`euler: the state has density ${U[0]!.toPrecision(4)} and pressure ${p.toPrecision(4)} at ${at}; the linearization needs both > 0 (use a smoother state or a finer mesh)`);
      }
    };
    return {
      kind: 'nonlinear-system',
      name: 'euler',
      admissible: (U, mean) => U[0]! >= 0.1 * mean[0]! && pressureOf(U, d, gamma) >= 0.1 * pressureOf(mean, d, gamma),
      nEquations: m,
      maxWaveSpeed,
      alignVelocity,
      exact,
      state: conservedAt,
      // rational flux: not integrated exactly; a degree p + 2 above the 2p of a linear flux (our choice)
      extraQuadratureDegree: (p) => p + 2,
      summary: {
        flux: fluxName === 'roe' ? 'Roe with the Harten-Hyman entropy fix' : 'local Lax-Friedrichs',
        jacobian: 'exact (forward-mode differentiation of the discrete residual; nothing frozen)',
        state: stateName, gamma, maxWaveSpeed, rhs: 'minus the residual at the state (Newton step)',
        boundaryData: fields.inflow !== undefined ? 'primitive expressions (inflow)' : 'the state',
        exactSolution: exact !== null,
      },
      transportVelocity(X, xo, out) {
        primitiveAt(X, xo, vel);
        for (let k = 0; k < d; k++) out[k] = vel[k]!;
      },
      initialData(X, xo, out) {
        const t = X[xo + d]!;
        X[xo + d] = 0;
        conservedAt(X, xo, out);
        X[xo + d] = t;
      },
      boundaryData: boundaryAt,
      volumeFlux(_X, _xo, U, G, dG, element) {
        check(U, 0, element);
        for (let l = 0; l < d; l++) {
          eulerSpatialFlux(U, l, d, gamma, fk, dfk);
          G.set(fk, l * m);
          dG.set(dfk, l * m * m);
        }
        // time component: G_d = U, ∂G_d/∂U = I
        G.set(U, d * m);
        dG.fill(0, d * m * m, (d + 1) * m * m);
        for (let i = 0; i < m; i++) dG[d * m * m + i * m + i] = 1;
      },
      numericalFlux(_X, _xo, UL, UR, n, h, dL, dR, face) {
        check(UL, 1, face);
        check(UR, 2, face);
        eulerNumericalFlux(fluxName, UL, UR, n, d, gamma, h, dL, dR);
      },
    };
  },
};

/** The primitive state (ρ, p returned; velocity written to vel) at a space-time point (element: for messages). */
type PrimitiveAt = (X: Float64Array, xo: number, vel: Float64Array, element?: number) => { rho: number; p: number };

function makeState(
  name: EulerStateName, fields: Record<string, unknown>, extent: readonly number[], d: number, gamma: number,
): PrimitiveAt {
  if (name === 'uniform') {
    const rho = fields.density as number, p = fields.pressure as number;
    const u = fields.velocity as number[];
    return (_X, _xo, vel) => { for (let k = 0; k < d; k++) vel[k] = u[k]!; return { rho, p }; };
  }
  if (name === 'vortex') {
    const eps = fields.vortexStrength as number;
    const [u0, v0] = fields.velocity as number[];
    const [Lx, Ly] = [extent[0]!, extent[1]!];
    return (X, xo, vel) => {
      const t = X[xo + 2]!;
      // offset from the advected centre, to the nearest periodic image
      const xb = wrap(X[xo]! - u0! * t, Lx) - 0.5 * Lx;
      const yb = wrap(X[xo + 1]! - v0! * t, Ly) - 0.5 * Ly;
      const r2 = xb * xb + yb * yb;
      const f = (eps / (2 * Math.PI)) * Math.exp(0.5 * (1 - r2));
      vel[0] = u0! - f * yb;
      vel[1] = v0! + f * xb;
      const T = 1 - ((gamma - 1) * eps * eps) / (8 * gamma * Math.PI * Math.PI) * Math.exp(1 - r2);
      const rho = T ** (1 / (gamma - 1));
      return { rho, p: rho * T };
    };
  }
  const l = fields.left as number[], r = fields.right as number[];
  const x0 = fields.diaphragm as number;
  const L: Primitive = { rho: l[0]!, u: l[1]!, p: l[2]! }, R: Primitive = { rho: r[0]!, u: r[1]!, p: r[2]! };
  const sol = solveRiemann(L, R, gamma);
  return (X, xo, vel) => {
    const t = X[xo + d]!, x = X[xo]!;
    const s = t > 0 ? sampleRiemann(sol, (x - x0) / t) : x < x0 ? L : R;
    vel.fill(0, 0, d);
    vel[0] = s.u;
    return { rho: s.rho, p: s.p };
  };
}

/** max |u| + c of the state (a bound for the CFL slab thickness). */
function waveSpeedBound(name: EulerStateName, fields: Record<string, unknown>, d: number, gamma: number): number {
  const speed = (rho: number, u: number[], p: number) => Math.hypot(...u) + Math.sqrt((gamma * p) / rho);
  if (name === 'uniform') return speed(fields.density as number, (fields.velocity as number[]).slice(0, d), fields.pressure as number);
  if (name === 'vortex') {
    const eps = fields.vortexStrength as number;
    // |δu| ≤ ε/(2π)·max r e^{(1−r²)/2} = ε/(2π) (at r = 1), c ≤ √γ (T ≤ 1)
    return Math.hypot(...(fields.velocity as number[]).slice(0, 2)) + eps / (2 * Math.PI) + Math.sqrt(gamma);
  }
  const l = fields.left as number[], r = fields.right as number[];
  const sol = solveRiemann({ rho: l[0]!, u: l[1]!, p: l[2]! }, { rho: r[0]!, u: r[1]!, p: r[2]! }, gamma);
  return Math.max(
    speed(l[0]!, [l[1]!], l[2]!), speed(r[0]!, [r[1]!], r[2]!),
    speed(sol.rhoStarLeft, [sol.uStar], sol.pStar), speed(sol.rhoStarRight, [sol.uStar], sol.pStar),
  );
}
