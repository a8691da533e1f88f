/**
 * The exact solution of the Riemann problem of the 1D compressible Euler equations for an ideal
 * gas (Toro, Riemann Solvers and Numerical Methods for Fluid Dynamics, 3rd ed. 2009, ch. 4):
 * the star pressure p* is the root of f(p) = f_L(p) + f_R(p) + (u_R − u_L) (eq. 4.5), with
 *   f_K(p) = (p − p_K) √(A_K / (p + B_K)),  A_K = 2 / ((γ+1) ρ_K), B_K = (γ−1)/(γ+1) p_K   (shock, p > p_K)
 *   f_K(p) = 2 c_K / (γ−1) ((p/p_K)^((γ−1)/(2γ)) − 1)                                      (rarefaction, p ≤ p_K)
 * found by Newton's method from the two-rarefaction guess (eq. 4.46) to a relative change of
 * 1e-14; u* = ½(u_L + u_R) + ½(f_R(p*) − f_L(p*)) (eq. 4.9). The solution is then sampled at
 * ξ = (x − x₀)/t exactly (§4.5: shock speeds eq. 4.52/4.59, star densities eq. 4.50/4.53 and
 * 4.57/4.60, rarefaction fans eq. 4.56/4.63). No approximation beyond the root finding.
 */
import { UserError } from '../../util/errors.js';

export interface Primitive {
  rho: number;
  u: number;
  p: number;
}

export interface RiemannSolution {
  gamma: number;
  left: Primitive;
  right: Primitive;
  pStar: number;
  uStar: number;
  rhoStarLeft: number;
  rhoStarRight: number;
  /** 'shock' or 'rarefaction' on each side. */
  leftWave: 'shock' | 'rarefaction';
  rightWave: 'shock' | 'rarefaction';
  /** Wave speeds: a shock's speed, or a fan's head and tail speeds. */
  leftSpeeds: { head: number; tail: number };
  rightSpeeds: { head: number; tail: number };
  newtonIterations: number;
}

function soundSpeed(s: Primitive, gamma: number): number {
  return Math.sqrt((gamma * s.p) / s.rho);
}

/** f_K and its derivative (Toro eq. 4.6, 4.7 and 4.37). */
function pressureFunction(p: number, s: Primitive, gamma: number): [number, number] {
  const c = soundSpeed(s, gamma);
  if (p > s.p) {
    const A = 2 / ((gamma + 1) * s.rho);
    const B = ((gamma - 1) / (gamma + 1)) * s.p;
    const q = Math.sqrt(A / (p + B));
    return [(p - s.p) * q, q * (1 - (p - s.p) / (2 * (B + p)))];
  }
  const ratio = p / s.p;
  const f = ((2 * c) / (gamma - 1)) * (ratio ** ((gamma - 1) / (2 * gamma)) - 1);
  const df = (1 / (s.rho * c)) * ratio ** (-(gamma + 1) / (2 * gamma));
  return [f, df];
}

function checkState(s: Primitive, side: string): void {
  if (!(s.rho > 0) || !(s.p > 0) || !Number.isFinite(s.rho) || !Number.isFinite(s.p) || !Number.isFinite(s.u)) {
    throw new UserError(`${side} state: expected density > 0, pressure > 0 and a finite velocity, got ρ = ${s.rho}, u = ${s.u}, p = ${s.p}`);
  }
}

export function solveRiemann(left: Primitive, right: Primitive, gamma: number): RiemannSolution {
  if (!(gamma > 1) || !Number.isFinite(gamma)) throw new UserError(`gamma: expected a number > 1, got ${gamma}`);
  checkState(left, 'left');
  checkState(right, 'right');
  const cL = soundSpeed(left, gamma), cR = soundSpeed(right, gamma);
  const du = right.u - left.u;
  // pressure positivity condition (Toro eq. 4.40): otherwise the solution contains vacuum
  if ((2 / (gamma - 1)) * (cL + cR) <= du) {
    throw new UserError(`the Riemann problem generates vacuum ((2/(γ−1))(c_L + c_R) = ${((2 / (gamma - 1)) * (cL + cR)).toPrecision(6)} ≤ u_R − u_L = ${du}); no star state exists`);
  }
  // two-rarefaction initial guess (Toro eq. 4.46)
  const z = (gamma - 1) / (2 * gamma);
  let p = ((cL + cR - 0.5 * (gamma - 1) * du) / (cL / left.p ** z + cR / right.p ** z)) ** (1 / z);
  if (!(p > 0)) p = 1e-8 * Math.min(left.p, right.p);
  let it = 0;
  for (; it < 100; it++) {
    const [fL, dL] = pressureFunction(p, left, gamma);
    const [fR, dR] = pressureFunction(p, right, gamma);
    let next = p - (fL + fR + du) / (dL + dR);
    if (next <= 0) next = 0.5 * p; // stay in the physical range (common practice)
    const change = Math.abs(next - p) / (0.5 * (next + p));
    p = next;
    if (change < 1e-14) { it++; break; }
  }
  const [fL, ] = pressureFunction(p, left, gamma);
  const [fR, ] = pressureFunction(p, right, gamma);
  const uStar = 0.5 * (left.u + right.u) + 0.5 * (fR - fL);
  const g1 = (gamma - 1) / (gamma + 1);
  const side = (s: Primitive, c: number, sign: -1 | 1) => {
    // sign −1: left wave, +1: right wave
    if (p > s.p) {
      const ratio = p / s.p;
      const rhoStar = s.rho * (ratio + g1) / (g1 * ratio + 1);
      const speed = s.u + sign * c * Math.sqrt(((gamma + 1) / (2 * gamma)) * ratio + (gamma - 1) / (2 * gamma));
      return { wave: 'shock' as const, rhoStar, speeds: { head: speed, tail: speed } };
    }
    const rhoStar = s.rho * (p / s.p) ** (1 / gamma);
    const cStar = c * (p / s.p) ** z;
    return { wave: 'rarefaction' as const, rhoStar, speeds: { head: s.u + sign * c, tail: uStar + sign * cStar } };
  };
  const L = side(left, cL, -1), R = side(right, cR, 1);
  return {
    gamma, left, right, pStar: p, uStar,
    rhoStarLeft: L.rhoStar, rhoStarRight: R.rhoStar,
    leftWave: L.wave, rightWave: R.wave, leftSpeeds: L.speeds, rightSpeeds: R.speeds,
    newtonIterations: it,
  };
}

/** The exact state at ξ = (x − x₀)/t (Toro §4.5, Fig. 4.14). */
export function sampleRiemann(sol: RiemannSolution, xi: number): Primitive {
  const { gamma, left, right, pStar, uStar } = sol;
  const g = gamma;
  if (xi <= uStar) {
    if (sol.leftWave === 'shock') {
      return xi <= sol.leftSpeeds.head ? { ...left } : { rho: sol.rhoStarLeft, u: uStar, p: pStar };
    }
    if (xi <= sol.leftSpeeds.head) return { ...left };
    if (xi >= sol.leftSpeeds.tail) return { rho: sol.rhoStarLeft, u: uStar, p: pStar };
    // inside the left fan (Toro eq. 4.56)
    const c = soundSpeed(left, g);
    const k = 2 / (g + 1) + ((g - 1) / ((g + 1) * c)) * (left.u - xi);
    return { rho: left.rho * k ** (2 / (g - 1)), u: (2 / (g + 1)) * (c + 0.5 * (g - 1) * left.u + xi), p: left.p * k ** ((2 * g) / (g - 1)) };
  }
  if (sol.rightWave === 'shock') {
    return xi >= sol.rightSpeeds.head ? { ...right } : { rho: sol.rhoStarRight, u: uStar, p: pStar };
  }
  if (xi >= sol.rightSpeeds.head) return { ...right };
  if (xi <= sol.rightSpeeds.tail) return { rho: sol.rhoStarRight, u: uStar, p: pStar };
  // inside the right fan (Toro eq. 4.63)
  const c = soundSpeed(right, g);
  const k = 2 / (g + 1) - ((g - 1) / ((g + 1) * c)) * (right.u - xi);
  return { rho: right.rho * k ** (2 / (g - 1)), u: (2 / (g + 1)) * (-c + 0.5 * (g - 1) * right.u + xi), p: right.p * k ** ((2 * g) / (g - 1)) };
}
