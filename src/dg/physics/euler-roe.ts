/**
 * The Roe flux with the Harten–Hyman entropy fix and its exact Jacobian (both states), written
 * against the allocation-free DualTape (src/dg/dual-tape.ts): operation for operation the
 * dual-number version in euler-flux.ts (eulerNumericalFluxDual(… 'roe' …): dualState, normalFlux,
 * roeDissipation), so values and derivatives are bit-identical to it — the same choices (nothing
 * frozen; |·|, max and the entropy fix's δ differentiate their active branch). See euler-flux.ts
 * for the formulas and their sources.
 */
import { DualTape } from '../dual-tape.js';

const tapes = new Map<number, DualTape>();

interface TapeState { rho: number; u: number[]; p: number; E: number; H: number; c: number }

function tapeState(t: DualTape, U: number[], d: number, gamma: number): TapeState {
  const rho = U[0]!;
  const u: number[] = [];
  for (let k = 0; k < d; k++) u.push(t.div(U[1 + k]!, rho));
  let ke = t.constant(0);
  for (let k = 0; k < d; k++) ke = t.add(ke, t.mul(u[k]!, U[1 + k]!));
  const E = U[d + 1]!;
  const p = t.mulc(t.sub(E, t.mulc(ke, 0.5)), gamma - 1);
  return { rho, u, p, E, H: t.div(t.add(E, p), rho), c: t.sqrt(t.div(t.mulc(p, gamma), rho)) };
}

function tapeNormalVelocity(t: DualTape, s: TapeState, n: ArrayLike<number>, d: number): number {
  let un = t.constant(0);
  for (let k = 0; k < d; k++) un = t.add(un, t.mulc(s.u[k]!, n[k]!));
  return un;
}

function tapeNormalFlux(t: DualTape, U: number[], s: TapeState, n: ArrayLike<number>, d: number, out: number[]): void {
  const nt = n[d]!;
  const un = tapeNormalVelocity(t, s, n, d);
  out[0] = t.add(t.mulc(U[0]!, nt), t.mul(s.rho, un));
  for (let k = 0; k < d; k++) out[1 + k] = t.add(t.add(t.mulc(U[1 + k]!, nt), t.mul(U[1 + k]!, un)), t.mulc(s.p, n[k]!));
  out[d + 1] = t.add(t.mulc(s.E, nt), t.mul(t.add(s.E, s.p), un));
}

/** |Â(n)|(U_R − U_L) into out (slots), as roeDissipation in euler-flux.ts. */
function tapeRoeDissipation(
  t: DualTape, L: number[], R: number[], sL: TapeState, sR: TapeState, n: ArrayLike<number>, d: number, gamma: number, out: number[],
): void {
  const m = d + 2;
  let nx = 0;
  for (let k = 0; k < d; k++) nx += n[k]! * n[k]!;
  nx = Math.sqrt(nx);
  const nt = n[d]!;
  if (nx === 0) {
    for (let i = 0; i < m; i++) out[i] = t.mulc(t.sub(R[i]!, L[i]!), Math.abs(nt));
    return;
  }
  const nh: number[] = [];
  for (let k = 0; k < d; k++) nh.push(n[k]! / nx);
  const rl = t.sqrt(sL.rho), rr = t.sqrt(sR.rho), rs = t.add(rl, rr);
  const rhoHat = t.mul(rl, rr);
  const uHat: number[] = [];
  for (let k = 0; k < d; k++) uHat.push(t.div(t.add(t.mul(sL.u[k]!, rl), t.mul(sR.u[k]!, rr)), rs));
  const HHat = t.div(t.add(t.mul(sL.H, rl), t.mul(sR.H, rr)), rs);
  let q2 = t.constant(0);
  for (let k = 0; k < d; k++) q2 = t.add(q2, t.mul(uHat[k]!, uHat[k]!));
  const c2 = t.mulc(t.sub(HHat, t.mulc(q2, 0.5)), gamma - 1);
  const cHat = t.sqrt(c2);
  let unHat = t.constant(0);
  for (let k = 0; k < d; k++) unHat = t.add(unHat, t.mulc(uHat[k]!, nh[k]!));
  const dp = t.sub(sR.p, sL.p), drho = t.sub(sR.rho, sL.rho);
  const du: number[] = [];
  for (let k = 0; k < d; k++) du.push(t.sub(sR.u[k]!, sL.u[k]!));
  let dun = t.constant(0);
  for (let k = 0; k < d; k++) dun = t.add(dun, t.mulc(du[k]!, nh[k]!));
  const a1 = t.div(t.sub(dp, t.mul(t.mul(rhoHat, cHat), dun)), t.mulc(c2, 2));
  const a3 = t.div(t.add(dp, t.mul(t.mul(rhoHat, cHat), dun)), t.mulc(c2, 2));
  const a2 = t.sub(drho, t.div(dp, c2));
  const lam = (mu: number): number => t.addc(t.mulc(mu, nx), nt);
  const l1 = lam(t.sub(unHat, cHat)), l2 = lam(unHat), l3 = lam(t.add(unHat, cHat));
  const fix = (lHat: number, lLeft: number, lRight: number): number => {
    const vh = t.value(lHat), vl = t.value(lLeft), vr = t.value(lRight);
    const delta = Math.max(0, vh - vl, vr - vh);
    const a = t.abs(lHat);
    if (!(t.value(a) < delta)) return a;
    const dDelta = vh - vl >= vr - vh ? t.sub(lHat, lLeft) : t.sub(lRight, lHat);
    return t.mulc(t.add(t.div(t.mul(lHat, lHat), dDelta), dDelta), 0.5);
  };
  const unL = tapeNormalVelocity(t, sL, nh, d), unR = tapeNormalVelocity(t, sR, nh, d);
  const al1 = fix(l1, lam(t.sub(unL, sL.c)), lam(t.sub(unR, sR.c)));
  const al3 = fix(l3, lam(t.add(unL, sL.c)), lam(t.add(unR, sR.c)));
  const al2 = t.abs(l2);
  const w1 = t.mul(al1, a1), w2 = t.mul(al2, a2), w3 = t.mul(al3, a3);
  out[0] = t.add(t.add(w1, w2), w3);
  const shear: number[] = [];
  for (let k = 0; k < d; k++) shear.push(t.sub(du[k]!, t.mulc(dun, nh[k]!)));
  let uShear = t.constant(0);
  for (let k = 0; k < d; k++) uShear = t.add(uShear, t.mul(uHat[k]!, shear[k]!));
  for (let k = 0; k < d; k++) {
    const cn = t.mulc(cHat, nh[k]!);
    out[1 + k] = t.add(
      t.add(t.add(t.mul(w1, t.sub(uHat[k]!, cn)), t.mul(w2, uHat[k]!)), t.mul(w3, t.add(uHat[k]!, t.mulc(cHat, nh[k]!)))),
      t.mul(t.mul(al2, rhoHat), shear[k]!),
    );
  }
  out[d + 1] = t.add(
    t.add(t.add(t.mul(w1, t.sub(HHat, t.mul(unHat, cHat))), t.mul(w2, t.mulc(q2, 0.5))), t.mul(w3, t.add(HHat, t.mul(unHat, cHat)))),
    t.mul(t.mul(al2, rhoHat), uShear),
  );
}

/**
 * H(U_L, U_R; n) of the Roe flux and ∂H/∂U_L, ∂H/∂U_R (row-major m×m), equal to
 * eulerNumericalFluxDual('roe', …) without allocating per call: bit-identical on space faces, and
 * on time faces (n_x = 0, n_t = ±1 on the mesh) the same values up to the sign of zeros.
 */
export function roeFluxTape(
  UL: ArrayLike<number>, UR: ArrayLike<number>, n: ArrayLike<number>, d: number, gamma: number,
  h: Float64Array, dL: Float64Array, dR: Float64Array,
): void {
  const m = d + 2;
  let nx2 = 0;
  for (let k = 0; k < d; k++) nx2 += n[k]! * n[k]!;
  if (nx2 === 0) {
    // time faces (n_x = 0): G·n = n_t U and |Â| = |n_t| I, so H = ½(n_t U_L + n_t U_R) − ½|n_t|(U_R − U_L);
    // the same operations the dual version performs, less its terms that are exactly zero here
    const nt = n[d]!, at = Math.abs(nt);
    dL.fill(0, 0, m * m); dR.fill(0, 0, m * m);
    for (let i = 0; i < m; i++) {
      h[i] = (UL[i]! * nt + UR[i]! * nt) * 0.5 - (UR[i]! - UL[i]!) * at * 0.5;
      dL[i * m + i] = nt * 0.5 - -at * 0.5;
      dR[i * m + i] = nt * 0.5 - at * 0.5;
    }
    return;
  }
  let t = tapes.get(m);
  if (!t) { t = new DualTape(2 * m); tapes.set(m, t); }
  t.reset();
  const L: number[] = [], R: number[] = [];
  for (let i = 0; i < m; i++) L.push(t.variable(UL[i]!, i));
  for (let i = 0; i < m; i++) R.push(t.variable(UR[i]!, m + i));
  const sL = tapeState(t, L, d, gamma), sR = tapeState(t, R, d, gamma);
  const gL: number[] = [], gR: number[] = [], diss: number[] = [];
  tapeNormalFlux(t, L, sL, n, d, gL);
  tapeNormalFlux(t, R, sR, n, d, gR);
  tapeRoeDissipation(t, L, R, sL, sR, n, d, gamma, diss);
  for (let i = 0; i < m; i++) {
    const H = t.sub(t.mulc(t.add(gL[i]!, gR[i]!), 0.5), t.mulc(diss[i]!, 0.5));
    h[i] = t.value(H);
    for (let j = 0; j < m; j++) { dL[i * m + j] = t.der(H, j); dR[i * m + j] = t.der(H, m + j); }
  }
}
