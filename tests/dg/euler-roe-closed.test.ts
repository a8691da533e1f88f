/**
 * The Roe flux's hand-written chain rule (fast, euler-roe-closed.ts, what eulerNumericalFlux('roe')
 * runs) against its references: the dual-number Roe (slow, eulerNumericalFluxDual) and the
 * allocation-free arena version (roeFluxTape, bit-identical to the dual one). H must be
 * bit-identical to the arena version (the right-hand sides of the committed demo matrices depend
 * on it); ∂H/∂U_L and ∂H/∂U_R equal to round-off: |fast − slow| ≤ 1e-12 · max |entry| of the two
 * reference Jacobians (entries of ∂H/∂U_L = ½A_L − ½∂D/∂U_L cancel to round-off in supersonic
 * flow, so the scale is the Jacobians', not each entry's). Samples: random states, transonic pairs
 * that switch the Harten–Hyman entropy fix on (each acoustic field, each branch of δ's max), wide
 * density and pressure ratios, reversed normals (sides swapped), 1D/2D/3D, and time faces.
 * The central-difference checks of the same flux are in euler-flux.test.ts.
 */
import { describe, it, expect } from 'vitest';
import { eulerFlux, eulerNumericalFlux, eulerNumericalFluxDual, pressureOf, toConserved } from '../../src/dg/physics/euler-flux.js';
import { roeFluxClosed } from '../../src/dg/physics/euler-roe-closed.js';
import { roeFluxTape } from '../../src/dg/physics/euler-roe.js';
import { mulberry32 } from '../../src/util/random.js';

const G = 1.4;

interface Out { h: Float64Array; dL: Float64Array; dR: Float64Array }
const out = (m: number): Out => ({ h: new Float64Array(m), dL: new Float64Array(m * m), dR: new Float64Array(m * m) });

function randomNormal(r: () => number, d: number, timeWeight: number): Float64Array {
  const n = new Float64Array(d + 1);
  for (let k = 0; k < d; k++) n[k] = 2 * r() - 1;
  n[d] = timeWeight * (2 * r() - 1);
  let s = 0;
  for (const v of n) s += v * v;
  for (let k = 0; k <= d; k++) n[k]! /= Math.sqrt(s);
  return n;
}

/** A state with density and pressure in [lo, hi] (log-uniform) and velocity f·c along n̂ plus a random part of size `jitter`·c. */
function state(r: () => number, d: number, n: Float64Array, f: number, jitter: number, lo = 0.5, hi = 1.5): Float64Array {
  let nx = 0;
  for (let k = 0; k < d; k++) nx += n[k]! ** 2;
  nx = Math.sqrt(nx);
  const logU = (): number => lo * Math.exp(Math.log(hi / lo) * r());
  const rho = logU(), p = logU(), c = Math.sqrt((G * p) / rho);
  const u = Array.from({ length: d }, (_, k) => c * ((nx > 0 ? (f * n[k]!) / nx : 0) + jitter * (2 * r() - 1)));
  const U = new Float64Array(d + 2);
  toConserved(rho, u, p, G, U);
  return U;
}

/** Which acoustic fields have the entropy fix on, and on which branch of δ = max(0, λ̂ − λ_L, λ_R − λ̂) (plain numbers). */
type FixCase = '1L' | '1R' | '3L' | '3R'; // acoustic field (1: û·n̂ − ĉ, 3: û·n̂ + ĉ), branch of δ's max
function fixBranches(UL: Float64Array, UR: Float64Array, n: Float64Array, d: number): FixCase[] {
  let nx = 0;
  for (let k = 0; k < d; k++) nx += n[k]! ** 2;
  nx = Math.sqrt(nx);
  if (nx === 0) return [];
  const prim = (U: Float64Array) => {
    const u = Array.from({ length: d }, (_, k) => U[1 + k]! / U[0]!);
    const p = pressureOf(U, d, G);
    return { u, un: u.reduce((s, v, k) => s + (v * n[k]!) / nx, 0), c: Math.sqrt((G * p) / U[0]!), H: (U[d + 1]! + p) / U[0]! };
  };
  const l = prim(UL), rr = prim(UR);
  const wl = Math.sqrt(UL[0]!), wr = Math.sqrt(UR[0]!);
  const uHat = l.u.map((u, k) => (u * wl + rr.u[k]! * wr) / (wl + wr));
  const HHat = (l.H * wl + rr.H * wr) / (wl + wr);
  const cHat = Math.sqrt((G - 1) * (HHat - 0.5 * uHat.reduce((s, u) => s + u * u, 0)));
  const unHat = uHat.reduce((s, u, k) => s + (u * n[k]!) / nx, 0);
  const got: FixCase[] = [];
  for (const sg of [-1, 1]) {
    const lam = (un: number, c: number) => n[d]! + nx * (un + sg * c);
    const lh = lam(unHat, cHat), dl = lh - lam(l.un, l.c), dr = lam(rr.un, rr.c) - lh;
    if (Math.abs(lh) < Math.max(0, dl, dr)) got.push(`${sg < 0 ? 1 : 3}${dl >= dr ? 'L' : 'R'}` as FixCase);
  }
  return got;
}

function maxAbs(...xs: Float64Array[]): number {
  let s = 0;
  for (const x of xs) for (const v of x) s = Math.max(s, Math.abs(v));
  return s;
}

describe('Roe flux by the chain rule (fast) against the differentiated flux (slow)', () => {
  for (const d of [1, 2, 3]) {
    it(`${d}D: H bit-identical to the arena version, ∂H/∂U_L and ∂H/∂U_R equal to the dual-number ones to 1e-12, entropy fix on and off`, () => {
      const r = mulberry32(700 + d);
      const m = d + 2;
      const branches: Record<FixCase, number> = { '1L': 0, '1R': 0, '3L': 0, '3R': 0 };
      let worst = 0;
      for (let t = 0; t < 600; t++) {
        const kind = t % 6;
        let n = randomNormal(r, d, kind === 5 ? 0 : 0.6);
        let UL: Float64Array, UR: Float64Array;
        if (kind === 0) { UL = state(r, d, n, 0, 1.5); UR = state(r, d, n, 0, 1.5); }
        else if (kind === 1) { UL = state(r, d, n, 0.8, 0.1); UR = state(r, d, n, 1.2, 0.1); } // transonic, field 1
        else if (kind === 2) { UL = state(r, d, n, -1.2, 0.1); UR = state(r, d, n, -0.8, 0.1); } // transonic, field 3
        else if (kind === 3) { UL = state(r, d, n, 0, 3, 0.1, 10); UR = state(r, d, n, 0, 3, 0.1, 10); } // wide ratios, supersonic too
        else { UL = state(r, d, n, 2 * r() - 1, 0.3); UR = state(r, d, n, 2 * r() - 1, 0.3); }
        if (t % 4 === 3) { [UL, UR] = [UR, UL]; n = n.map((v) => -v); } // the same face seen from the other side
        if (t % 50 === 49) { n.fill(0); n[d] = t % 100 === 49 ? 1 : -1; } // time faces
        for (const b of fixBranches(UL, UR, n, d)) branches[b]++;
        const fast = out(m), tape = out(m), dual = out(m);
        roeFluxClosed(UL, UR, n, d, G, fast.h, fast.dL, fast.dR);
        roeFluxTape(UL, UR, n, d, G, tape.h, tape.dL, tape.dR);
        eulerNumericalFluxDual('roe', UL, UR, n, d, G, dual.h, dual.dL, dual.dR);
        expect(fast.h).toEqual(tape.h);
        const scale = maxAbs(dual.dL, dual.dR);
        expect(scale).toBeGreaterThan(0);
        for (let i = 0; i < m * m; i++) {
          const e = Math.max(Math.abs(fast.dL[i]! - dual.dL[i]!), Math.abs(fast.dR[i]! - dual.dR[i]!)) / scale;
          worst = Math.max(worst, e);
          expect(e).toBeLessThanOrEqual(1e-12);
        }
        for (let i = 0; i < m; i++) expect(Math.abs(fast.h[i]! - dual.h[i]!)).toBeLessThanOrEqual(1e-15 * maxAbs(dual.h));
      }
      // the fix on both acoustic fields, each with both branches of its δ, was exercised
      for (const c of ['1L', '1R', '3L', '3R'] as const) expect(branches[c]).toBeGreaterThan(10);
      expect(worst).toBeLessThan(1e-12);
    });
  }

  it('is what eulerNumericalFlux runs for roe', () => {
    const r = mulberry32(711);
    for (const d of [1, 2, 3]) {
      const m = d + 2, n = randomNormal(r, d, 0.5);
      const UL = state(r, d, n, 0.8, 0.2), UR = state(r, d, n, 1.2, 0.2);
      const a = out(m), b = out(m);
      eulerNumericalFlux('roe', UL, UR, n, d, G, a.h, a.dL, a.dR);
      roeFluxClosed(UL, UR, n, d, G, b.h, b.dL, b.dR);
      expect(a).toEqual(b);
    }
  });

  it('consistency, differentiated: at U_L = U_R the dissipation is zero along the diagonal, so ∂H/∂U_L + ∂H/∂U_R = A(n)', () => {
    // H(U, U; n) = G(U)·n for every U (Roe 1981, property of the flux); its derivative along U_L = U_R
    const r = mulberry32(712);
    for (const d of [1, 2, 3]) {
      const m = d + 2;
      for (let t = 0; t < 40; t++) {
        const n = randomNormal(r, d, 0.6);
        const U = state(r, d, n, 2 * r() - 1, 0.5);
        const f = out(m), g = new Float64Array(m), A = new Float64Array(m * m);
        roeFluxClosed(U, U, n, d, G, f.h, f.dL, f.dR);
        eulerFlux(U, n, d, G, g, A);
        const scale = maxAbs(A);
        for (let i = 0; i < m; i++) expect(Math.abs(f.h[i]! - g[i]!)).toBeLessThanOrEqual(1e-14 * maxAbs(g));
        for (let i = 0; i < m * m; i++) expect(Math.abs(f.dL[i]! + f.dR[i]! - A[i]!)).toBeLessThanOrEqual(1e-13 * scale);
      }
    }
  });
});
