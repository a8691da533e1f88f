/**
 * The Roe flux with the Harten–Hyman entropy fix and its exact Jacobian (both states) by the chain
 * rule written out by hand: the fast twin of roeFluxTape (euler-roe.ts) and of the dual-number
 * version in euler-flux.ts (eulerNumericalFluxDual(… 'roe' …)), which stay its references. The
 * same flux and the same choices — nothing frozen (Roe averages, wave strengths, |λ̂| and the
 * entropy fix's δ are all differentiated); |·| and max take their active branch, +1 for |·| at 0,
 * ties of δ's max the left branch — with the values and derivatives of the references to round-off
 * (tested at relative 1e-12, tests/dg/euler-roe-closed.test.ts), not bit for bit.
 *
 * H = ½(G(U_L)·n + G(U_R)·n) − ½ D, D = |Â(n)|(U_R − U_L) = Σ_k |λ̂_k| α_k r̂_k (Roe 1981; the wave
 * decomposition of Toro 2009 §11.3, as euler-flux.ts), so
 *   ∂H/∂U_L = ½ A_L(n) − ½ ∂D/∂U_L,  ∂H/∂U_R = ½ A_R(n) − ½ ∂D/∂U_R,
 * with A(n) = n_t I + Σ_k n_k ∂F_k/∂U in closed form (Toro 2009 §3.2.2; the rows are those of
 * eulerSpatialFlux in euler-flux.ts summed over k). ∂D carries all 2m directions (U_L then U_R) in
 * one flat Float64Array per intermediate, each intermediate's gradient formed in one loop from the
 * gradients it is made of:
 *   per side: ∂u_k = (−u_k e_ρ + e_{m_k})/ρ,  ∂p = (γ−1)(½q² e_ρ − Σ u_k e_{m_k} + e_E),
 *             ∂H = (e_E + ∂p − H e_ρ)/ρ,  ∂c = γ/(2cρ) (∂p − (p/ρ) e_ρ);
 *   Roe averages (w_L = √ρ_L/(√ρ_L + √ρ_R)): ∂û_k|_L = w_L ∂u_{L,k} + (u_{L,k} − û_k)/(2√ρ_L(√ρ_L + √ρ_R)) e_ρ,
 *             likewise Ĥ, and ∂ρ̂ = ½√(ρ_R/ρ_L) e_ρL + ½√(ρ_L/ρ_R) e_ρR;
 *   then ĉ² = (γ−1)(Ĥ − ½|û|²), the strengths, eigenvalues, the fix ((λ̂²/δ + δ)/2 differentiates to
 *   (λ̂/δ) ∂λ̂ + ½(1 − λ̂²/δ²) ∂δ), the products |λ̂_k| α_k and the components of D by the product rule.
 */

interface Work { g: Float64Array; gn: Float64Array; D: Float64Array }
const works = new Map<number, Work>();

// intermediates with a gradient over all 2m directions, in units of N = 2m (uHat and shear take d each, D takes m)
const nSlots = (d: number): number => 2 * d + (d + 2) + 20;

/**
 * H(U_L, U_R; n) of the Roe flux and ∂H/∂U_L, ∂H/∂U_R (row-major m×m): the same values as
 * roeFluxTape / eulerNumericalFluxDual('roe', …) to round-off, allocation-free.
 */
export function roeFluxClosed(
  UL: ArrayLike<number>, UR: ArrayLike<number>, n: ArrayLike<number>, d: number, gamma: number,
  h: Float64Array, dL: Float64Array, dR: Float64Array,
): void {
  const m = d + 2;
  let nx2 = 0;
  for (let k = 0; k < d; k++) nx2 += n[k]! * n[k]!;
  const nt = n[d]!;
  if (nx2 === 0) {
    // time faces (n_x = 0): H = ½(n_t U_L + n_t U_R) − ½|n_t|(U_R − U_L), as roeFluxTape
    const at = Math.abs(nt);
    dL.fill(0, 0, m * m); dR.fill(0, 0, m * m);
    for (let i = 0; i < m; i++) {
      h[i] = (UL[i]! * nt + UR[i]! * nt) * 0.5 - (UR[i]! - UL[i]!) * at * 0.5;
      dL[i * m + i] = nt * 0.5 - -at * 0.5;
      dR[i * m + i] = nt * 0.5 - at * 0.5;
    }
    return;
  }
  const N = 2 * m;
  let w = works.get(m);
  if (!w) { w = { g: new Float64Array(nSlots(d) * N), gn: new Float64Array(N), D: new Float64Array(m) }; works.set(m, w); }
  const g = w.g;
  const g1 = gamma - 1;
  const nx = Math.sqrt(nx2);
  const E = d + 1;

  // ---- per side: primitives, the normal flux and A(n) (½ of it into dL, dR). The values follow
  // roeFluxTape's floating-point operations one for one (so H is bit-identical to it); only the
  // derivatives are formed differently
  const rhoL = UL[0]!, rhoR = UR[0]!;
  let q2L = 0, q2R = 0, keL = 0, keR = 0, unL = 0, unR = 0, vnL = 0, vnR = 0; // un: u·n̂ (unit space normal), vn: u·n_x
  for (let k = 0; k < d; k++) {
    const uLk = UL[1 + k]! / rhoL, uRk = UR[1 + k]! / rhoR, nk = n[k]! / nx;
    q2L += uLk * uLk; q2R += uRk * uRk;
    keL += uLk * UL[1 + k]!; keR += uRk * UR[1 + k]!;
    vnL += uLk * n[k]!; vnR += uRk * n[k]!;
    unL += uLk * nk; unR += uRk * nk;
  }
  const pL = (UL[E]! - keL * 0.5) * g1, pR = (UR[E]! - keR * 0.5) * g1;
  const HL = (UL[E]! + pL) / rhoL, HR = (UR[E]! + pR) / rhoR;
  const cL = Math.sqrt((pL * gamma) / rhoL), cR = Math.sqrt((pR * gamma) / rhoR);
  // G·n: row ρ: n_t ρ + ρ(u·n_x); row m_i: n_t m_i + m_i (u·n_x) + p n_i; row E: n_t E + (E + p)(u·n_x)
  const gn = w.gn;
  gn[0] = UL[0]! * nt + rhoL * vnL; gn[m] = UR[0]! * nt + rhoR * vnR;
  for (let i = 0; i < d; i++) {
    gn[1 + i] = UL[1 + i]! * nt + UL[1 + i]! * vnL + pL * n[i]!;
    gn[m + 1 + i] = UR[1 + i]! * nt + UR[1 + i]! * vnR + pR * n[i]!;
  }
  gn[E] = UL[E]! * nt + (UL[E]! + pL) * vnL; gn[m + E] = UR[E]! * nt + (UR[E]! + pR) * vnR;
  halfNormalJacobian(UL, n, d, gamma, q2L, vnL, HL, dL);
  halfNormalJacobian(UR, n, d, gamma, q2R, vnR, HR, dR);

  // ---- Roe averages and their gradients (slot offsets in g, each N long)
  const oUH = 0, oSH = d * N, oD = 2 * d * N;
  let o = (2 * d + m) * N;
  const oHH = o; o += N; const oQ2 = o; o += N; const oC2 = o; o += N; const oCH = o; o += N;
  const oUNH = o; o += N; const oRH = o; o += N; const oDP = o; o += N; const oDUN = o; o += N;
  const oA1 = o; o += N; const oA2 = o; o += N; const oA3 = o; o += N;
  const oAL1 = o; o += N; const oAL2 = o; o += N; const oAL3 = o; o += N;
  const oW1 = o; o += N; const oW2 = o; o += N; const oW3 = o; o += N; const oS = o; o += N; const oUS = o; o += N;
  const oT = o; // scratch (lLeft / lRight gradients)
  g.fill(0, 0, o + N);

  const rl = Math.sqrt(rhoL), rr = Math.sqrt(rhoR), rs = rl + rr;
  const rhoHat = rl * rr;
  const wL = rl / rs, wR = rr / rs;
  const eL = 1 / (2 * rl * rs), eR = 1 / (2 * rr * rs); // ∂w-terms on e_ρ: (x_L − x̂)·eL
  let q2 = 0, unHat = 0;
  for (let k = 0; k < d; k++) {
    const uLk = UL[1 + k]! / rhoL, uRk = UR[1 + k]! / rhoR;
    const uh = (uLk * rl + uRk * rr) / rs;
    const ok = oUH + k * N;
    g[ok] = wL * (-uLk / rhoL) + (uLk - uh) * eL;
    g[ok + 1 + k] = wL / rhoL;
    g[ok + m] = wR * (-uRk / rhoR) + (uRk - uh) * eR;
    g[ok + m + 1 + k] = wR / rhoR;
    q2 += uh * uh;
    unHat += uh * (n[k]! / nx);
  }
  const HHat = (HL * rl + HR * rr) / rs;
  // ∂p per side: g1 (½q² e_ρ − Σ u_k e_{m_k} + e_E); ∂H = (e_E + ∂p − H e_ρ)/ρ
  g[oHH] = wL * ((g1 * 0.5 * q2L - HL) / rhoL) + (HL - HHat) * eL;
  g[oHH + m] = wR * ((g1 * 0.5 * q2R - HR) / rhoR) + (HR - HHat) * eR;
  for (let k = 0; k < d; k++) {
    g[oHH + 1 + k] = wL * ((-g1 * UL[1 + k]!) / (rhoL * rhoL));
    g[oHH + m + 1 + k] = wR * ((-g1 * UR[1 + k]!) / (rhoR * rhoR));
  }
  g[oHH + E] = wL * (gamma / rhoL);
  g[oHH + m + E] = wR * (gamma / rhoR);
  const c2 = g1 * (HHat - 0.5 * q2);
  const cHat = Math.sqrt(c2);
  g[oRH] = rr / (2 * rl); g[oRH + m] = rl / (2 * rr);
  for (let k = 0; k < d; k++) {
    const ok = oUH + k * N, uh = uHatOf(UL, UR, k, rhoL, rhoR, rl, rr, rs);
    const nk = n[k]! / nx;
    for (let j = 0; j < N; j++) { g[oQ2 + j] += 2 * uh * g[ok + j]!; g[oUNH + j] += nk * g[ok + j]!; }
  }
  const f2c = 1 / (2 * cHat);
  for (let j = 0; j < N; j++) {
    const gc2 = g1 * (g[oHH + j]! - 0.5 * g[oQ2 + j]!);
    g[oC2 + j] = gc2;
    g[oCH + j] = gc2 * f2c;
  }

  // ---- jumps: Δp, Δρ, Δu_n (unit normal), per side gradients of p, u·n̂ and c
  const dp = pR - pL, drho = rhoR - rhoL;
  let dun = 0;
  for (let k = 0; k < d; k++) dun += (UR[1 + k]! / rhoR - UL[1 + k]! / rhoL) * (n[k]! / nx);
  const fcL = gamma / (2 * cL * rhoL), fcR = gamma / (2 * cR * rhoR);
  g[oDP] = -g1 * 0.5 * q2L; g[oDP + m] = g1 * 0.5 * q2R;
  g[oDUN] = unL / rhoL; g[oDUN + m] = -unR / rhoR;
  for (let k = 0; k < d; k++) {
    g[oDP + 1 + k] = g1 * (UL[1 + k]! / rhoL); g[oDP + m + 1 + k] = -g1 * (UR[1 + k]! / rhoR);
    const nk = n[k]! / nx;
    g[oDUN + 1 + k] = -nk / rhoL; g[oDUN + m + 1 + k] = nk / rhoR;
  }
  g[oDP + E] = -g1; g[oDP + m + E] = g1;

  // ---- strengths: a1,3 = (Δp ∓ ρ̂ĉΔu_n)/(2ĉ²), a2 = Δρ − Δp/ĉ²
  const rc = rhoHat * cHat, X = rc * dun;
  const a1 = (dp - X) / (2 * c2), a3 = (dp + X) / (2 * c2), a2 = drho - dp / c2;
  const i2c2 = 1 / (2 * c2), ic2 = 1 / c2, r1 = a1 / c2, r3 = a3 / c2, rp = dp / c2;
  for (let j = 0; j < N; j++) {
    const gX = dun * (cHat * g[oRH + j]! + rhoHat * g[oCH + j]!) + rc * g[oDUN + j]!;
    const gdp = g[oDP + j]!, gc2 = g[oC2 + j]!;
    g[oA1 + j] = (gdp - gX) * i2c2 - r1 * gc2;
    g[oA3 + j] = (gdp + gX) * i2c2 - r3 * gc2;
    g[oA2 + j] = -(gdp - rp * gc2) * ic2;
  }
  g[oA2] -= 1; g[oA2 + m] += 1;

  // ---- eigenvalues λ = n_t + |n_x| μ and the entropy fix on the acoustic fields
  const l1 = (unHat - cHat) * nx + nt, l2 = unHat * nx + nt, l3 = (unHat + cHat) * nx + nt;
  const al1 = acousticSpeed(g, N, m, d, n, nx, nt, -1, l1, oAL1, oUNH, oCH, oT, UL, UR, rhoL, rhoR, unL, unR, cL, cR, pL, pR, q2L, q2R, fcL, fcR, g1);
  const al3 = acousticSpeed(g, N, m, d, n, nx, nt, 1, l3, oAL3, oUNH, oCH, oT, UL, UR, rhoL, rhoR, unL, unR, cL, cR, pL, pR, q2L, q2R, fcL, fcR, g1);
  const s2 = l2 >= 0 ? nx : -nx;
  const al2 = Math.abs(l2);
  for (let j = 0; j < N; j++) g[oAL2 + j] = s2 * g[oUNH + j]!;

  // ---- w_k = |λ̂_k| a_k, S = |λ̂_2| ρ̂, shear, D
  const w1 = al1 * a1, w2 = al2 * a2, w3 = al3 * a3, S = al2 * rhoHat, W = w1 + w2 + w3;
  for (let j = 0; j < N; j++) {
    const gw1 = a1 * g[oAL1 + j]! + al1 * g[oA1 + j]!;
    const gw2 = a2 * g[oAL2 + j]! + al2 * g[oA2 + j]!;
    const gw3 = a3 * g[oAL3 + j]! + al3 * g[oA3 + j]!;
    g[oW1 + j] = gw1; g[oW2 + j] = gw2; g[oW3 + j] = gw3;
    g[oS + j] = rhoHat * g[oAL2 + j]! + al2 * g[oRH + j]!;
    g[oD + j] = gw1 + gw2 + gw3;
  }
  let uShear = 0;
  for (let k = 0; k < d; k++) {
    const uLk = UL[1 + k]! / rhoL, uRk = UR[1 + k]! / rhoR;
    const nk = n[k]! / nx;
    const sh = uRk - uLk - dun * nk;
    const uh = uHatOf(UL, UR, k, rhoL, rhoR, rl, rr, rs);
    uShear += uh * sh;
    const os = oSH + k * N, ou = oUH + k * N;
    // ∂shear_k = ∂u_{R,k} − ∂u_{L,k} − n̂_k ∂Δu_n
    for (let j = 0; j < N; j++) g[os + j] = -nk * g[oDUN + j]!;
    g[os] += uLk / rhoL; g[os + 1 + k] -= 1 / rhoL;
    g[os + m] -= uRk / rhoR; g[os + m + 1 + k] += 1 / rhoR;
    for (let j = 0; j < N; j++) g[oUS + j] += sh * g[ou + j]! + uh * g[os + j]!;
  }
  const uc = unHat * cHat;
  const Dv = w.D;
  const dW31 = w3 - w1;
  for (let k = 0; k < d; k++) {
    const nk = n[k]! / nx;
    const uh = uHatOf(UL, UR, k, rhoL, rhoR, rl, rr, rs);
    const sh = UR[1 + k]! / rhoR - UL[1 + k]! / rhoL - dun * nk;
    const cn = cHat * nk;
    const od = oD + (1 + k) * N, ou = oUH + k * N, os = oSH + k * N;
    const cw1 = uh - cn, cw3 = uh + cn, ccH = nk * dW31;
    for (let j = 0; j < N; j++) {
      g[od + j] = cw1 * g[oW1 + j]! + uh * g[oW2 + j]! + cw3 * g[oW3 + j]! + W * g[ou + j]! + ccH * g[oCH + j]!
        + sh * g[oS + j]! + S * g[os + j]!;
    }
    Dv[1 + k] = w1 * cw1 + w2 * uh + w3 * cw3 + S * sh;
  }
  {
    const od = oD + E * N;
    const cw1 = HHat - uc, cw2 = 0.5 * q2, cw3 = HHat + uc, cHH = w1 + w3, hw2 = 0.5 * w2;
    for (let j = 0; j < N; j++) {
      g[od + j] = cw1 * g[oW1 + j]! + cw2 * g[oW2 + j]! + cw3 * g[oW3 + j]! + cHH * g[oHH + j]!
        + dW31 * (cHat * g[oUNH + j]! + unHat * g[oCH + j]!) + hw2 * g[oQ2 + j]! + uShear * g[oS + j]! + S * g[oUS + j]!;
    }
    Dv[E] = w1 * cw1 + w2 * cw2 + w3 * cw3 + S * uShear;
  }
  Dv[0] = w1 + w2 + w3;
  for (let i = 0; i < m; i++) {
    h[i] = (gn[i]! + gn[m + i]!) * 0.5 - Dv[i]! * 0.5;
    const od = oD + i * N, row = i * m;
    for (let j = 0; j < m; j++) { dL[row + j]! -= 0.5 * g[od + j]!; dR[row + j]! -= 0.5 * g[od + m + j]!; }
  }
}

function uHatOf(UL: ArrayLike<number>, UR: ArrayLike<number>, k: number, rhoL: number, rhoR: number, rl: number, rr: number, rs: number): number {
  return ((UL[1 + k]! / rhoL) * rl + (UR[1 + k]! / rhoR) * rr) / rs;
}

/**
 * |λ̂| of an acoustic field (sg = −1: û·n̂ − ĉ, +1: û·n̂ + ĉ) with the Harten–Hyman fix, its gradient
 * written to g[oAL…]; δ = max(0, λ̂ − λ(U_L), λ(U_R) − λ̂), λ(U) = n_t + |n_x|(u·n̂ ± c).
 */
function acousticSpeed(
  g: Float64Array, N: number, m: number, d: number, n: ArrayLike<number>, nx: number, nt: number, sg: number, lh: number,
  oAL: number, oUNH: number, oCH: number, oT: number,
  UL: ArrayLike<number>, UR: ArrayLike<number>, rhoL: number, rhoR: number, unL: number, unR: number, cL: number, cR: number,
  pL: number, pR: number, q2L: number, q2R: number, fcL: number, fcR: number, g1: number,
): number {
  const vl = (unL + sg * cL) * nx + nt, vr = (unR + sg * cR) * nx + nt;
  const delta = Math.max(0, lh - vl, vr - lh);
  const a = Math.abs(lh);
  const sn = sg * nx;
  if (!(a < delta)) {
    const s = lh >= 0 ? nx : -nx, sc = lh >= 0 ? sn : -sn;
    for (let j = 0; j < N; j++) g[oAL + j] = s * g[oUNH + j]! + sc * g[oCH + j]!;
    return a;
  }
  // ∂λ̂ into oAL, then the active δ branch's ∂λ(U_side) (one side only) into oT
  for (let j = 0; j < N; j++) g[oAL + j] = nx * g[oUNH + j]! + sn * g[oCH + j]!;
  const leftBranch = lh - vl >= vr - lh;
  const U = leftBranch ? UL : UR, rho = leftBranch ? rhoL : rhoR, un = leftBranch ? unL : unR;
  const p = leftBranch ? pL : pR, q2s = leftBranch ? q2L : q2R, fc = leftBranch ? fcL : fcR;
  const off = leftBranch ? 0 : m, E = d + 1;
  // ∂λ(U) = |n_x| (∂(u·n̂) ± ∂c), ∂c = fc (∂p − (p/ρ) e_ρ)
  g[oT + off] = nx * (-un / rho) + sn * fc * (g1 * 0.5 * q2s - p / rho);
  for (let k = 0; k < d; k++) g[oT + off + 1 + k] = nx * ((n[k]! / nx) / rho) + sn * fc * (-g1 * (U[1 + k]! / rho));
  g[oT + off + E] = sn * fc * g1;
  const dD = leftBranch ? lh - vl : vr - lh;
  const q = lh / dD;
  const cl = q, cd = 0.5 * (1 - q * q);
  if (leftBranch) {
    for (let j = 0; j < N; j++) { const gl = g[oAL + j]!; g[oAL + j] = cl * gl + cd * (gl - g[oT + j]!); }
  } else {
    for (let j = 0; j < N; j++) { const gl = g[oAL + j]!; g[oAL + j] = cl * gl + cd * (g[oT + j]! - gl); }
  }
  for (let j = 0; j < m; j++) g[oT + off + j] = 0; // leave the scratch zero for the other field
  return 0.5 * ((lh * lh) / dD + dD);
}

/** ½ A(n) at U, A(n) = n_t I + Σ_k n_k ∂F_k/∂U (row-major m×m), into out. */
function halfNormalJacobian(
  U: ArrayLike<number>, n: ArrayLike<number>, d: number, gamma: number, q2: number, vn: number, H: number, out: Float64Array,
): void {
  const m = d + 2, g1 = gamma - 1, E = d + 1, nt = n[d]!;
  const rho = U[0]!;
  out.fill(0, 0, m * m);
  // row ρ: n_t e_ρ + n_x on the momenta
  out[0] = 0.5 * nt;
  for (let j = 0; j < d; j++) out[1 + j] = 0.5 * n[j]!;
  for (let i = 0; i < d; i++) {
    const row = (1 + i) * m, ui = U[1 + i]! / rho, ni = n[i]!;
    // ∂ρ: −u_i (u·n_x) + n_i (γ−1)q²/2; ∂m_j: δ_ij (n_t + u·n_x) + u_i n_j − (γ−1) n_i u_j; ∂E: (γ−1) n_i
    out[row] = 0.5 * (-ui * vn + ni * g1 * 0.5 * q2);
    for (let j = 0; j < d; j++) {
      const uj = U[1 + j]! / rho;
      out[row + 1 + j] = 0.5 * ((i === j ? nt + vn : 0) + ui * n[j]! - g1 * ni * uj);
    }
    out[row + E] = 0.5 * g1 * ni;
  }
  const row = E * m;
  // ∂ρ: (u·n_x)((γ−1)q²/2 − H); ∂m_j: H n_j − (γ−1)(u·n_x) u_j; ∂E: n_t + γ (u·n_x)
  out[row] = 0.5 * vn * (g1 * 0.5 * q2 - H);
  for (let j = 0; j < d; j++) out[row + 1 + j] = 0.5 * (H * n[j]! - g1 * vn * (U[1 + j]! / rho));
  out[row + E] = 0.5 * (nt + gamma * vn);
}
