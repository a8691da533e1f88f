/**
 * Euler fluxes for space-time DG: the flux Jacobian's eigenvalues (textbook fact, common
 * practice: n_t + u·n_x − c|n_x|, n_t + u·n_x (d times), n_t + u·n_x + c|n_x|), the exact Jacobians
 * of the numerical fluxes against central differences, consistency, conservation, the time-face
 * (slab) property the assembler needs, and two classic properties of Roe's flux (Toro 2009 §11.2:
 * it is the upwind flux when every wave runs one way, and resolves a stationary contact exactly).
 */
import { describe, it, expect } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { eulerFlux, eulerSpatialFlux, eulerNumericalFlux, eulerNumericalFluxDual, toConserved, pressureOf, type EulerFluxName } from '../../src/dg/physics/euler-flux.js';
import { mulberry32 } from '../../src/util/random.js';

const G = 1.4;

function randomState(r: () => number, d: number, speed = 1): Float64Array {
  const U = new Float64Array(d + 2);
  const u = Array.from({ length: d }, () => speed * (2 * r() - 1));
  toConserved(0.5 + r(), u, 0.5 + r(), G, U);
  return U;
}

function randomNormal(r: () => number, d: number, timeWeight = 1): Float64Array {
  const n = new Float64Array(d + 1);
  for (let k = 0; k < d; k++) n[k] = 2 * r() - 1;
  n[d] = timeWeight * (2 * r() - 1);
  let s = 0;
  for (const v of n) s += v * v;
  for (let k = 0; k <= d; k++) n[k]! /= Math.sqrt(s);
  return n;
}

function flux(name: EulerFluxName, UL: Float64Array, UR: Float64Array, n: Float64Array, d: number) {
  const m = d + 2;
  const h = new Float64Array(m), dL = new Float64Array(m * m), dR = new Float64Array(m * m);
  eulerNumericalFlux(name, UL, UR, n, d, G, h, dL, dR);
  return { h, dL, dR };
}

describe('Euler flux and its Jacobian', () => {
  for (const d of [1, 2, 3]) {
    it(`${d}D: eigenvalues of A(n) are n_t + u·n_x − c|n_x|, n_t + u·n_x (×${d}), n_t + u·n_x + c|n_x|`, () => {
      const r = mulberry32(d);
      for (let t = 0; t < 10; t++) {
        const U = randomState(r, d), n = randomNormal(r, d);
        const m = d + 2;
        const g = new Float64Array(m), A = new Float64Array(m * m);
        eulerFlux(U, n, d, G, g, A);
        const rows = Array.from({ length: m }, (_, i) => Array.from(A.subarray(i * m, (i + 1) * m)));
        const ev = new EigenvalueDecomposition(new Matrix(rows));
        const got = ev.realEigenvalues.slice().sort((a, b) => a - b);
        expect(Math.max(...ev.imaginaryEigenvalues.map(Math.abs))).toBeLessThan(1e-9);
        const rho = U[0]!, p = pressureOf(U, d, G), c = Math.sqrt((G * p) / rho);
        let un = 0, nx = 0;
        for (let k = 0; k < d; k++) { un += (U[1 + k]! / rho) * n[k]!; nx += n[k]! ** 2; }
        nx = Math.sqrt(nx);
        const lam = n[d]! + un;
        const want = [lam - c * nx, ...new Array<number>(d).fill(lam), lam + c * nx].sort((a, b) => a - b);
        for (let i = 0; i < m; i++) expect(Math.abs(got[i]! - want[i]!)).toBeLessThan(1e-9);
        // G·n is homogeneous of degree one: A(n) U = G(U)·n (Euler's theorem; derived)
        for (let i = 0; i < m; i++) {
          let s = 0;
          for (let j = 0; j < m; j++) s += A[i * m + j]! * U[j]!;
          expect(Math.abs(s - g[i]!)).toBeLessThan(1e-12 * Math.max(1, Math.abs(g[i]!)));
        }
      }
    });
  }
});

describe('closed-form spatial flux Jacobian (fast) against the differentiated flux (slow)', () => {
  for (const d of [1, 2, 3]) {
    it(`${d}D: F_k and ∂F_k/∂U agree with eulerFlux(U, e_k) to round-off`, () => {
      const r = mulberry32(100 + d);
      const m = d + 2;
      for (let t = 0; t < 20; t++) {
        const U = randomState(r, d, 2);
        for (let k = 0; k < d; k++) {
          const n = new Float64Array(d + 1); n[k] = 1;
          const g = new Float64Array(m), A = new Float64Array(m * m), gf = new Float64Array(m), Af = new Float64Array(m * m);
          eulerFlux(U, n, d, G, g, A);
          eulerSpatialFlux(U, k, d, G, gf, Af);
          for (let i = 0; i < m; i++) expect(Math.abs(gf[i]! - g[i]!)).toBeLessThan(1e-13 * Math.max(1, Math.abs(g[i]!)));
          for (let i = 0; i < m * m; i++) expect(Math.abs(Af[i]! - A[i]!)).toBeLessThan(1e-13 * Math.max(1, Math.abs(A[i]!)));
        }
      }
    });
  }
});

describe('closed-form local Lax–Friedrichs (fast) against the differentiated flux (slow)', () => {
  for (const d of [1, 2, 3]) {
    it(`${d}D: H, ∂H/∂U_L and ∂H/∂U_R agree to round-off`, () => {
      const r = mulberry32(200 + d);
      const m = d + 2;
      for (let t = 0; t < 30; t++) {
        const UL = randomState(r, d, 1.5), UR = randomState(r, d, 1.5), n = randomNormal(r, d, t % 3 === 0 ? 0 : 0.7);
        const fast = flux('llf', UL, UR, n, d);
        const h = new Float64Array(m), dL = new Float64Array(m * m), dR = new Float64Array(m * m);
        eulerNumericalFluxDual('llf', UL, UR, n, d, G, h, dL, dR);
        for (let i = 0; i < m; i++) expect(Math.abs(fast.h[i]! - h[i]!)).toBeLessThan(1e-13 * Math.max(1, Math.abs(h[i]!)));
        for (let i = 0; i < m * m; i++) {
          expect(Math.abs(fast.dL[i]! - dL[i]!)).toBeLessThan(1e-12 * Math.max(1, Math.abs(dL[i]!)));
          expect(Math.abs(fast.dR[i]! - dR[i]!)).toBeLessThan(1e-12 * Math.max(1, Math.abs(dR[i]!)));
        }
      }
    });
  }
});

describe('allocation-free Roe (fast, euler-roe.ts) against the dual-number Roe (slow)', () => {
  // transonic pairs (u·n̂ = 0.8 c on the left, 1.2 c on the right, and the mirror) put λ̂ of an
  // acoustic field between λ(U_L) and λ(U_R), so the entropy fix and its δ branches are taken
  const transonic = (r: () => number, d: number, n: Float64Array, left: number, right: number): [Float64Array, Float64Array] => {
    let nx = 0;
    for (let k = 0; k < d; k++) nx += n[k]! ** 2;
    nx = Math.sqrt(nx);
    const side = (f: number): Float64Array => {
      const rho = 0.5 + r(), p = 0.5 + r(), c = Math.sqrt((G * p) / rho);
      const u = Array.from({ length: d }, (_, k) => (f * c * n[k]!) / nx);
      const U = new Float64Array(d + 2);
      toConserved(rho, u, p, G, U);
      return U;
    };
    return [side(left), side(right)];
  };
  // whether |λ̂| < δ for an acoustic field (Roe averages with plain numbers, as euler-flux.ts)
  const entropyFixActive = (UL: Float64Array, UR: Float64Array, n: Float64Array, d: number): boolean => {
    let nx = 0;
    for (let k = 0; k < d; k++) nx += n[k]! ** 2;
    nx = Math.sqrt(nx);
    if (nx === 0) return false;
    const prim = (U: Float64Array) => {
      const un = Array.from({ length: d }, (_, k) => U[1 + k]! / U[0]!).reduce((s, u, k) => s + (u * n[k]!) / nx, 0);
      const p = pressureOf(U, d, G);
      return { un, c: Math.sqrt((G * p) / U[0]!), H: (U[d + 1]! + p) / U[0]!, u: Array.from({ length: d }, (_, k) => U[1 + k]! / U[0]!) };
    };
    const l = prim(UL), rr = prim(UR);
    const wl = Math.sqrt(UL[0]!), wr = Math.sqrt(UR[0]!);
    const uHat = l.u.map((u, k) => (u * wl + rr.u[k]! * wr) / (wl + wr));
    const HHat = (l.H * wl + rr.H * wr) / (wl + wr);
    const cHat = Math.sqrt((G - 1) * (HHat - 0.5 * uHat.reduce((s, u) => s + u * u, 0)));
    const unHat = uHat.reduce((s, u, k) => s + (u * n[k]!) / nx, 0);
    return [-1, 1].some((sg) => {
      const lam = (un: number, c: number) => n[d]! + nx * (un + sg * c);
      const lh = lam(unHat, cHat);
      return Math.abs(lh) < Math.max(0, lh - lam(l.un, l.c), lam(rr.un, rr.c) - lh);
    });
  };
  for (const d of [1, 2, 3]) {
    it(`${d}D: H, ∂H/∂U_L and ∂H/∂U_R are bit-identical, on random, transonic and time-face samples`, () => {
      const r = mulberry32(300 + d);
      const m = d + 2;
      let fixed = 0;
      for (let t = 0; t < 60; t++) {
        const n = randomNormal(r, d, t % 5 === 0 ? 0 : 0.6);
        let UL: Float64Array, UR: Float64Array;
        if (t % 3 === 1) [UL, UR] = transonic(r, d, n, 0.8, 1.2);
        else if (t % 3 === 2) [UL, UR] = transonic(r, d, n, -1.2, -0.8);
        else { UL = randomState(r, d, 1.5); UR = randomState(r, d, 1.5); }
        if (t % 10 === 9) { n.fill(0); n[d] = t % 20 === 9 ? 1 : -1; } // time faces
        const fast = flux('roe', UL, UR, n, d);
        const h = new Float64Array(m), dL = new Float64Array(m * m), dR = new Float64Array(m * m);
        eulerNumericalFluxDual('roe', UL, UR, n, d, G, h, dL, dR);
        expect(fast.h).toEqual(h);
        expect(fast.dL).toEqual(dL);
        expect(fast.dR).toEqual(dR);
        if (entropyFixActive(UL, UR, n, d)) fixed++;
      }
      expect(fixed).toBeGreaterThan(10);
    });
  }
});

describe('numerical fluxes: local Lax–Friedrichs and Roe with the Harten–Hyman fix', () => {
  for (const name of ['llf', 'roe'] as const) {
    for (const d of [1, 2, 3]) {
      it(`${name}, ${d}D: exact Jacobians match central differences (relative error < 1e-6)`, () => {
        const r = mulberry32(10 * d + (name === 'roe' ? 1 : 0));
        const m = d + 2;
        let worst = 0;
        for (let t = 0; t < 20; t++) {
          const UL = randomState(r, d, 1.5), UR = randomState(r, d, 1.5), n = randomNormal(r, d, 0.5);
          const { dL, dR } = flux(name, UL, UR, n, d);
          for (const [side, U, J] of [['L', UL, dL], ['R', UR, dR]] as const) {
            for (let j = 0; j < m; j++) {
              const e = 1e-6 * Math.max(1, Math.abs(U[j]!));
              const up = U.slice(), dn = U.slice();
              up[j]! += e; dn[j]! -= e;
              const hp = side === 'L' ? flux(name, up, UR, n, d).h : flux(name, UL, up, n, d).h;
              const hm = side === 'L' ? flux(name, dn, UR, n, d).h : flux(name, UL, dn, n, d).h;
              for (let i = 0; i < m; i++) {
                const fd = (hp[i]! - hm[i]!) / (2 * e);
                // skip the rare sample sitting on a switch of |·| or max (non-differentiable there)
                const err = Math.abs(fd - J[i * m + j]!) / Math.max(1, Math.abs(fd));
                worst = Math.max(worst, err);
              }
            }
          }
        }
        expect(worst).toBeLessThan(1e-6);
      });
    }

    it(`${name}: consistent (H(U, U; n) = G(U)·n), conservative (H(U_L, U_R; n) = −H(U_R, U_L; −n)) and upwind in time on slab faces`, () => {
      const r = mulberry32(name === 'roe' ? 7 : 8);
      for (const d of [1, 2]) {
        const m = d + 2;
        for (let t = 0; t < 10; t++) {
          const UL = randomState(r, d), UR = randomState(r, d), n = randomNormal(r, d);
          const g = new Float64Array(m), A = new Float64Array(m * m);
          eulerFlux(UL, n, d, G, g, A);
          const same = flux(name, UL, UL, n, d).h;
          for (let i = 0; i < m; i++) expect(Math.abs(same[i]! - g[i]!)).toBeLessThan(1e-12 * Math.max(1, Math.abs(g[i]!)));
          const a = flux(name, UL, UR, n, d).h;
          const b = flux(name, UR, UL, n.map((v) => -v), d).h;
          for (let i = 0; i < m; i++) expect(Math.abs(a[i]! + b[i]!)).toBeLessThan(1e-12 * Math.max(1, Math.abs(a[i]!)));
          // time faces: n = ±e_t → H = n_t U of the earlier side
          const up = new Float64Array(d + 1); up[d] = 1;
          const down = new Float64Array(d + 1); down[d] = -1;
          const fu = flux(name, UL, UR, up, d), fd = flux(name, UL, UR, down, d);
          for (let i = 0; i < m; i++) {
            expect(fu.h[i]).toBeCloseTo(UL[i]!, 12);
            expect(fd.h[i]).toBeCloseTo(-UR[i]!, 12);
            for (let j = 0; j < m; j++) expect(fu.dR[i * m + j]).toBe(0);
          }
        }
      }
    });
  }

  it('roe: supersonic flow to the right gives the upwind flux G(U_L)·n exactly (every eigenvalue > 0)', () => {
    const d = 2, m = 4;
    const UL = new Float64Array(m), UR = new Float64Array(m);
    toConserved(1, [3, 0.2], 1, G, UL);
    toConserved(0.9, [3.2, 0.1], 0.8, G, UR);
    const n = new Float64Array([1, 0, 0]);
    const g = new Float64Array(m), A = new Float64Array(m * m);
    eulerFlux(UL, n, d, G, g, A);
    const { h } = flux('roe', UL, UR, n, d);
    for (let i = 0; i < m; i++) expect(Math.abs(h[i]! - g[i]!)).toBeLessThan(1e-12 * Math.max(1, Math.abs(g[i]!)));
  });

  it('roe resolves a stationary contact exactly; llf smears it (no dissipation on the entropy wave for Roe)', () => {
    const d = 1, m = 3;
    const UL = new Float64Array(m), UR = new Float64Array(m);
    toConserved(1, [0], 1, G, UL);
    toConserved(0.125, [0], 1, G, UR);
    const n = new Float64Array([1, 0]);
    const g = new Float64Array(m), A = new Float64Array(m * m);
    eulerFlux(UL, n, d, G, g, A);
    const roe = flux('roe', UL, UR, n, d).h, llf = flux('llf', UL, UR, n, d).h;
    for (let i = 0; i < m; i++) expect(Math.abs(roe[i]! - g[i]!)).toBeLessThan(1e-14);
    expect(Math.abs(llf[0]! - g[0]!)).toBeGreaterThan(0.1);
  });

  it('the entropy fix: a stationary shock keeps Roe\'s exact flux, the reversed (entropy-violating) expansion shock gets dissipation (Harten & Hyman 1983)', () => {
    // Stationary normal shock at Mach 2 (normal-shock relations, e.g. Toro 2009 §3.1.3; derived):
    // ρ₂/ρ₁ = (γ+1)M²/((γ−1)M²+2), p₂/p₁ = 1 + 2γ(M²−1)/(γ+1), u₂ = u₁ρ₁/ρ₂: equal fluxes on both sides.
    const d = 1, m = 3, M = 2;
    const c1 = Math.sqrt(G), u1 = M * c1;
    const r2 = ((G + 1) * M * M) / ((G - 1) * M * M + 2), p2 = 1 + (2 * G * (M * M - 1)) / (G + 1);
    const A = new Float64Array(m), B = new Float64Array(m);
    toConserved(1, [u1], 1, G, A);
    toConserved(r2, [u1 / r2], p2, G, B);
    const n = new Float64Array([1, 0]);
    const gA = new Float64Array(m), gB = new Float64Array(m), J = new Float64Array(m * m);
    eulerFlux(A, n, d, G, gA, J);
    eulerFlux(B, n, d, G, gB, J);
    for (let i = 0; i < m; i++) expect(Math.abs(gA[i]! - gB[i]!)).toBeLessThan(1e-12 * Math.abs(gA[i]!) + 1e-12);
    // admissible shock (supersonic A on the left): Roe's linearization is exact and the fix is off (δ = 0)
    const shock = flux('roe', A, B, n, d).h;
    for (let i = 0; i < m; i++) expect(Math.abs(shock[i]! - gA[i]!)).toBeLessThan(1e-11 * Math.max(1, Math.abs(gA[i]!)));
    // reversed: λ̂₁ = 0 while λ₁ goes from u−c < 0 (B) to u−c > 0 (A); without a fix Roe would return
    // G(B) and keep the expansion shock. The fix gives |λ̂₁| = δ/2 with δ = λ₁(A) − 0 = u₁ − c₁.
    const expansion = flux('roe', B, A, n, d).h;
    const delta = u1 - c1;
    expect(Math.abs(expansion[0]! - gB[0]!)).toBeGreaterThan(0.05 * delta);
  });
});
