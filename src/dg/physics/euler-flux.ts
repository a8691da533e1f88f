/**
 * Compressible Euler equations of an ideal gas in d space dimensions, written for space-time DG:
 * conserved U = (ρ, ρu₁, …, ρu_d, E), p = (γ−1)(E − ½ρ|u|²), spatial fluxes
 * F_k(U) = (ρu_k, ρu_k u + p e_k, u_k (E + p)), and the space-time flux through a unit space-time
 * normal n = (n_x, n_t):  G(U)·n = n_t U + Σ_k n_k F_k(U). The eigenvalues of A(n) = ∂(G·n)/∂U are
 * n_t + u·n_x − c|n_x|, n_t + u·n_x (d times), n_t + u·n_x + c|n_x|, c = √(γp/ρ) (textbook fact,
 * common practice; e.g. Toro 2009 §3.2).
 *
 * Numerical fluxes, each with its exact Jacobian with respect to both states (forward-mode
 * differentiation, src/dg/dual.ts, of the flux as written — nothing is frozen; |·| and max
 * differentiate their active branch):
 *  - local Lax–Friedrichs (Rusanov 1961): H = ½(G_L + G_R)·n − ½ α (U_R − U_L),
 *    α = max over both states of |n_t + u·n_x| + c|n_x|;
 *  - Roe (Roe, J. Comput. Phys. 43, 1981): H = ½(G_L + G_R)·n − ½ |Â(n)| (U_R − U_L) with Roe's
 *    averages ρ̂ = √(ρ_Lρ_R), û and Ĥ weighted by √ρ, and the wave decomposition of Toro 2009
 *    §11.3 (acoustic strengths (Δp ∓ ρ̂ĉΔu_n)/(2ĉ²), entropy Δρ − Δp/ĉ², shear ρ̂Δu_t). Entropy fix
 *    of Harten & Hyman (J. Comput. Phys. 50, 1983) on the two acoustic fields: with
 *    δ = max(0, λ̂ − λ(U_L), λ(U_R) − λ̂), |λ̂| is replaced by (λ̂²/δ + δ)/2 when |λ̂| < δ
 *    (Harten's smooth form with Harten–Hyman's δ; our choice of the smooth variant is stated here).
 * Both reduce to the earlier slab's value on time faces (n_x = 0): H = n_t U_L for n_t > 0 and
 * n_t U_R for n_t < 0, as the space-time assembler requires.
 */
import { Dual } from '../dual.js';
import { roeFluxTape } from './euler-roe.js';

/** Conserved variables from primitive (ρ, u₁…u_d, p). */
export function toConserved(rho: number, u: ArrayLike<number>, p: number, gamma: number, out: Float64Array, o = 0): void {
  const d = u.length;
  let ke = 0;
  out[o] = rho;
  for (let k = 0; k < d; k++) { out[o + 1 + k] = rho * u[k]!; ke += u[k]! * u[k]!; }
  out[o + d + 1] = p / (gamma - 1) + 0.5 * rho * ke;
}

/** Pressure of a conserved state (plain numbers). */
export function pressureOf(U: ArrayLike<number>, d: number, gamma: number, o = 0): number {
  let m2 = 0;
  for (let k = 0; k < d; k++) m2 += U[o + 1 + k]! ** 2;
  return (gamma - 1) * (U[o + d + 1]! - (0.5 * m2) / U[o]!);
}

interface DualState { rho: Dual; u: Dual[]; p: Dual; E: Dual; H: Dual; c: Dual }

function dualState(U: Dual[], d: number, gamma: number): DualState {
  const rho = U[0]!;
  const u = Array.from({ length: d }, (_, k) => U[1 + k]!.div(rho));
  let ke = Dual.constant(0, rho.d.length);
  for (let k = 0; k < d; k++) ke = ke.add(u[k]!.mul(U[1 + k]!));
  const E = U[d + 1]!;
  const p = E.sub(ke.mul(0.5)).mul(gamma - 1);
  return { rho, u, p, E, H: E.add(p).div(rho), c: p.mul(gamma).div(rho).sqrt() };
}

/** G(U)·n with n = (n_x (d comps), n_t). */
function normalFlux(U: Dual[], s: DualState, n: ArrayLike<number>, d: number): Dual[] {
  const nt = n[d]!;
  let un = Dual.constant(0, U[0]!.d.length);
  for (let k = 0; k < d; k++) un = un.add(s.u[k]!.mul(n[k]!));
  const out: Dual[] = [];
  out.push(U[0]!.mul(nt).add(s.rho.mul(un)));
  for (let k = 0; k < d; k++) out.push(U[1 + k]!.mul(nt).add(U[1 + k]!.mul(un)).add(s.p.mul(n[k]!)));
  out.push(s.E.mul(nt).add(s.E.add(s.p).mul(un)));
  return out;
}

function inputs(UL: ArrayLike<number>, UR: ArrayLike<number> | null, m: number): [Dual[], Dual[] | null] {
  const nDir = UR === null ? m : 2 * m;
  const L = Array.from({ length: m }, (_, i) => Dual.variable(UL[i]!, i, nDir));
  const R = UR === null ? null : Array.from({ length: m }, (_, i) => Dual.variable(UR[i]!, m + i, nDir));
  return [L, R];
}

/**
 * The space-time flux G(U)·n and its Jacobian A(n) = ∂(G·n)/∂U (row-major m×m, m = d + 2) at a
 * conserved state. With n = e_k (k < d) this is the spatial flux F_k and ∂F_k/∂U.
 */
export function eulerFlux(U: ArrayLike<number>, n: ArrayLike<number>, d: number, gamma: number, g: Float64Array, dg: Float64Array): void {
  const m = d + 2;
  const [L] = inputs(U, null, m);
  const f = normalFlux(L, dualState(L, d, gamma), n, d);
  for (let i = 0; i < m; i++) {
    g[i] = f[i]!.v;
    for (let j = 0; j < m; j++) dg[i * m + j] = f[i]!.d[j]!;
  }
}

/**
 * The spatial flux F_k(U) and ∂F_k/∂U in closed form (row-major m×m), the fast twin of
 * eulerFlux(U, e_k): with u = m/ρ, q² = |u|², H = (E + p)/ρ (e.g. Toro 2009 §3.2.2),
 *   row ρ:    ∂m_k/∂U = e_{m_k}
 *   row m_i:  ∂ρ: −u_k u_i + δ_ik (γ−1)q²/2,  ∂m_j: δ_kj u_i + δ_ij u_k − δ_ik (γ−1) u_j,  ∂E: δ_ik (γ−1)
 *   row E:    ∂ρ: u_k ((γ−1)q²/2 − H),         ∂m_j: δ_kj H − (γ−1) u_k u_j,              ∂E: γ u_k
 */
export function eulerSpatialFlux(U: ArrayLike<number>, k: number, d: number, gamma: number, g: Float64Array, dg: Float64Array): void {
  const m = d + 2;
  const rho = U[0]!, E = U[d + 1]!;
  let q2 = 0;
  for (let j = 0; j < d; j++) { const uj = U[1 + j]! / rho; q2 += uj * uj; }
  const p = (gamma - 1) * (E - 0.5 * rho * q2);
  const uk = U[1 + k]! / rho;
  const H = (E + p) / rho;
  const g1 = gamma - 1;
  dg.fill(0, 0, m * m);
  g[0] = U[1 + k]!;
  dg[1 + k] = 1;
  for (let i = 0; i < d; i++) {
    const ui = U[1 + i]! / rho;
    const row = (1 + i) * m;
    g[1 + i] = U[1 + k]! * ui + (i === k ? p : 0);
    dg[row] = -uk * ui + (i === k ? 0.5 * g1 * q2 : 0);
    for (let j = 0; j < d; j++) {
      const uj = U[1 + j]! / rho;
      dg[row + 1 + j] = (k === j ? ui : 0) + (i === j ? uk : 0) - (i === k ? g1 * uj : 0);
    }
    dg[row + d + 1] = i === k ? g1 : 0;
  }
  const row = (d + 1) * m;
  g[d + 1] = uk * (E + p);
  dg[row] = uk * (0.5 * g1 * q2 - H);
  for (let j = 0; j < d; j++) {
    const uj = U[1 + j]! / rho;
    dg[row + 1 + j] = (k === j ? H : 0) - g1 * uk * uj;
  }
  dg[row + d + 1] = gamma * uk;
}

export type EulerFluxName = 'llf' | 'roe';

/**
 * H(U_L, U_R; n) and its Jacobians ∂H/∂U_L, ∂H/∂U_R (row-major m×m) for the chosen flux.
 * n = (n_x, n_t) is the unit space-time normal pointing from L to R.
 */
export function eulerNumericalFlux(
  name: EulerFluxName, UL: ArrayLike<number>, UR: ArrayLike<number>, n: ArrayLike<number>, d: number, gamma: number,
  h: Float64Array, dL: Float64Array, dR: Float64Array,
): void {
  if (name === 'llf') llfClosedForm(UL, UR, n, d, gamma, h, dL, dR);
  else roeFluxTape(UL, UR, n, d, gamma, h, dL, dR); // bit-identical to the dual-number version, allocation-free
}

const llfWork = { AL: new Float64Array(25), AR: new Float64Array(25), F: new Float64Array(5), dF: new Float64Array(25), gL: new Float64Array(5), gR: new Float64Array(5), sL: new Float64Array(5), sR: new Float64Array(5) };

/** A(n) = n_t I + Σ n_k ∂F_k/∂U and G·n at U (closed form, eulerSpatialFlux). */
function normalJacobian(U: ArrayLike<number>, n: ArrayLike<number>, d: number, gamma: number, g: Float64Array, A: Float64Array): void {
  const m = d + 2;
  const { F, dF } = llfWork;
  for (let i = 0; i < m; i++) g[i] = n[d]! * U[i]!;
  A.fill(0, 0, m * m);
  for (let i = 0; i < m; i++) A[i * m + i] = n[d]!;
  for (let k = 0; k < d; k++) {
    if (n[k] === 0) continue;
    eulerSpatialFlux(U, k, d, gamma, F, dF);
    for (let i = 0; i < m; i++) g[i]! += n[k]! * F[i]!;
    for (let q = 0; q < m * m; q++) A[q]! += n[k]! * dF[q]!;
  }
}

/** s = |n_t + u·n_x| + c|n_x| and ∂s/∂U (written to ds). */
function llfSpeed(U: ArrayLike<number>, n: ArrayLike<number>, d: number, gamma: number, nx: number, ds: Float64Array): number {
  const rho = U[0]!, E = U[d + 1]!;
  let un = 0, q2 = 0;
  for (let k = 0; k < d; k++) { const uk = U[1 + k]! / rho; un += uk * n[k]!; q2 += uk * uk; }
  const p = (gamma - 1) * (E - 0.5 * rho * q2);
  const c = Math.sqrt((gamma * p) / rho);
  const lam = n[d]! + un;
  const sg = lam >= 0 ? 1 : -1;
  // ∂(u·n)/∂U = (−u·n/ρ, n_k/ρ, 0); ∂p/∂U = (γ−1)(q²/2, −u_k, 1); ∂c/∂U = γ/(2cρ) (∂p − (p/ρ) e_ρ)
  const f = nx * (gamma / (2 * c * rho));
  ds[0] = sg * (-un / rho) + f * ((gamma - 1) * 0.5 * q2 - p / rho);
  for (let k = 0; k < d; k++) ds[1 + k] = sg * (n[k]! / rho) + f * (gamma - 1) * -(U[1 + k]! / rho);
  ds[d + 1] = f * (gamma - 1);
  return Math.abs(lam) + c * nx;
}

/**
 * Local Lax–Friedrichs with its exact Jacobian in closed form (the fast twin of the dual-number
 * version): ∂H/∂U_L = ½A_L + ½αI − ½(U_R − U_L) ⊗ ∂α/∂U_L, ∂H/∂U_R = ½A_R − ½αI − ½(U_R − U_L) ⊗ ∂α/∂U_R,
 * ∂α/∂U on the active side of the max only (ties take the left side, as the dual version does).
 */
function llfClosedForm(
  UL: ArrayLike<number>, UR: ArrayLike<number>, n: ArrayLike<number>, d: number, gamma: number,
  h: Float64Array, dL: Float64Array, dR: Float64Array,
): void {
  const m = d + 2;
  const { AL, AR, gL, gR, sL, sR } = llfWork;
  normalJacobian(UL, n, d, gamma, gL, AL);
  normalJacobian(UR, n, d, gamma, gR, AR);
  let nx = 0;
  for (let k = 0; k < d; k++) nx += n[k]! * n[k]!;
  nx = Math.sqrt(nx);
  const aL = llfSpeed(UL, n, d, gamma, nx, sL), aR = llfSpeed(UR, n, d, gamma, nx, sR);
  const leftActive = aL >= aR;
  const alpha = leftActive ? aL : aR;
  const ds = leftActive ? sL : sR;
  for (let i = 0; i < m; i++) {
    const jump = UR[i]! - UL[i]!;
    h[i] = 0.5 * (gL[i]! + gR[i]!) - 0.5 * alpha * jump;
    for (let j = 0; j < m; j++) {
      const q = i * m + j;
      const corr = 0.5 * jump * ds[j]!;
      dL[q] = 0.5 * AL[q]! + (i === j ? 0.5 * alpha : 0) - (leftActive ? corr : 0);
      dR[q] = 0.5 * AR[q]! - (i === j ? 0.5 * alpha : 0) - (leftActive ? 0 : corr);
    }
  }
}

/**
 * eulerNumericalFlux by forward-mode differentiation of the flux as written (both fluxes): the slow
 * twin of the closed-form LLF and of the allocation-free Roe (euler-roe.ts), kept as their reference.
 */
export function eulerNumericalFluxDual(
  name: EulerFluxName, UL: ArrayLike<number>, UR: ArrayLike<number>, n: ArrayLike<number>, d: number, gamma: number,
  h: Float64Array, dL: Float64Array, dR: Float64Array,
): void {
  const m = d + 2;
  const [L, R] = inputs(UL, UR, m) as [Dual[], Dual[]];
  const sL = dualState(L, d, gamma), sR = dualState(R, d, gamma);
  const gL = normalFlux(L, sL, n, d), gR = normalFlux(R, sR, n, d);
  const diss = name === 'llf' ? llfDissipation(L, R, sL, sR, n, d) : roeDissipation(L, R, sL, sR, n, d, gamma);
  for (let i = 0; i < m; i++) {
    const H = gL[i]!.add(gR[i]!).mul(0.5).sub(diss[i]!.mul(0.5));
    h[i] = H.v;
    for (let j = 0; j < m; j++) { dL[i * m + j] = H.d[j]!; dR[i * m + j] = H.d[m + j]!; }
  }
}

function normalVelocity(s: DualState, n: ArrayLike<number>, d: number): Dual {
  let un = Dual.constant(0, s.rho.d.length);
  for (let k = 0; k < d; k++) un = un.add(s.u[k]!.mul(n[k]!));
  return un;
}

function nxNorm(n: ArrayLike<number>, d: number): number {
  let s = 0;
  for (let k = 0; k < d; k++) s += n[k]! * n[k]!;
  return Math.sqrt(s);
}

/** α (U_R − U_L) with α the largest |eigenvalue| of A(n) at either state. */
function llfDissipation(L: Dual[], R: Dual[], sL: DualState, sR: DualState, n: ArrayLike<number>, d: number): Dual[] {
  const nx = nxNorm(n, d), nt = n[d]!;
  const speed = (s: DualState) => normalVelocity(s, n, d).add(nt).abs().add(s.c.mul(nx));
  const alpha = speed(sL).max(speed(sR));
  return L.map((l, i) => R[i]!.sub(l).mul(alpha));
}

/** |Â(n)| (U_R − U_L) by Roe's wave decomposition, with the entropy fix on the acoustic fields. */
function roeDissipation(L: Dual[], R: Dual[], sL: DualState, sR: DualState, n: ArrayLike<number>, d: number, gamma: number): Dual[] {
  const nx = nxNorm(n, d), nt = n[d]!;
  const dU = L.map((l, i) => R[i]!.sub(l));
  if (nx === 0) return dU.map((x) => x.mul(Math.abs(nt)));
  const nh = Array.from({ length: d }, (_, k) => n[k]! / nx);
  const rl = sL.rho.sqrt(), rr = sR.rho.sqrt(), rs = rl.add(rr);
  const rhoHat = rl.mul(rr);
  const uHat = sL.u.map((ul, k) => ul.mul(rl).add(sR.u[k]!.mul(rr)).div(rs));
  const HHat = sL.H.mul(rl).add(sR.H.mul(rr)).div(rs);
  let q2 = Dual.constant(0, rl.d.length);
  for (let k = 0; k < d; k++) q2 = q2.add(uHat[k]!.mul(uHat[k]!));
  const c2 = HHat.sub(q2.mul(0.5)).mul(gamma - 1);
  const cHat = c2.sqrt();
  let unHat = Dual.constant(0, rl.d.length);
  for (let k = 0; k < d; k++) unHat = unHat.add(uHat[k]!.mul(nh[k]!));
  // primitive jumps
  const dp = sR.p.sub(sL.p), drho = sR.rho.sub(sL.rho);
  const du = sL.u.map((ul, k) => sR.u[k]!.sub(ul));
  let dun = Dual.constant(0, rl.d.length);
  for (let k = 0; k < d; k++) dun = dun.add(du[k]!.mul(nh[k]!));
  // wave strengths (Toro 2009 §11.3, in the rotated frame)
  const a1 = dp.sub(rhoHat.mul(cHat).mul(dun)).div(c2.mul(2));
  const a3 = dp.add(rhoHat.mul(cHat).mul(dun)).div(c2.mul(2));
  const a2 = drho.sub(dp.div(c2));
  // eigenvalues of A(n) = n_t I + |n_x| A(ñ)
  const lam = (mu: Dual) => mu.mul(nx).add(nt);
  const l1 = lam(unHat.sub(cHat)), l2 = lam(unHat), l3 = lam(unHat.add(cHat));
  const fix = (lHat: Dual, lLeft: Dual, lRight: Dual): Dual => {
    const delta = Math.max(0, lHat.v - lLeft.v, lRight.v - lHat.v);
    const a = lHat.abs();
    if (!(a.v < delta)) return a;
    // the active branch of δ is differentiated too
    const dDelta = lHat.v - lLeft.v >= lRight.v - lHat.v ? lHat.sub(lLeft) : lRight.sub(lHat);
    return lHat.mul(lHat).div(dDelta).add(dDelta).mul(0.5);
  };
  const unL = normalVelocity(sL, nh, d), unR = normalVelocity(sR, nh, d);
  const al1 = fix(l1, lam(unL.sub(sL.c)), lam(unR.sub(sR.c)));
  const al3 = fix(l3, lam(unL.add(sL.c)), lam(unR.add(sR.c)));
  const al2 = l2.abs();
  // |Â|ΔU = Σ |λ_k| α_k r_k, shear with the entropy wave's |λ|
  const out: Dual[] = [];
  const w1 = al1.mul(a1), w2 = al2.mul(a2), w3 = al3.mul(a3);
  out.push(w1.add(w2).add(w3));
  const shear = du.map((x, k) => x.sub(dun.mul(nh[k]!)));
  let uShear = Dual.constant(0, rl.d.length);
  for (let k = 0; k < d; k++) uShear = uShear.add(uHat[k]!.mul(shear[k]!));
  for (let k = 0; k < d; k++) {
    out.push(w1.mul(uHat[k]!.sub(cHat.mul(nh[k]!))).add(w2.mul(uHat[k]!)).add(w3.mul(uHat[k]!.add(cHat.mul(nh[k]!))))
      .add(al2.mul(rhoHat).mul(shear[k]!)));
  }
  out.push(w1.mul(HHat.sub(unHat.mul(cHat))).add(w2.mul(q2.mul(0.5))).add(w3.mul(HHat.add(unHat.mul(cHat))))
    .add(al2.mul(rhoHat).mul(uShear)));
  return out;
}
