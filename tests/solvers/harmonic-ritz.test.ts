import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { EigenvalueDecomposition, Matrix, inverse } from 'ml-matrix';
import { harmonicRitz } from '../../src/solvers/harmonic-ritz.js';

/**
 * Harmonic Ritz values and vectors (src/solvers/harmonic-ritz.ts) against independent dense
 * solves: scipy's generalized eigensolver (LAPACK QZ) on ḠᵀḠ z = θ ḠᵀT z (fixture from
 * tests/fixtures/make_harmonic_ritz_fixture.py, committed; rerun live when scipy is present), and
 * for a GMRES Hessenberg the standard form H_m + h²_{m+1,m} H_m⁻ᵀ e_m e_mᵀ of Morgan, "GMRES with
 * deflated restarting", SIAM J. Sci. Comput. 24(1), 2002, §2, by ml-matrix's eigensolver.
 */
const here = dirname(fileURLToPath(import.meta.url));
const fixture = join(here, '..', 'fixtures', 'harmonic-ritz', 'cases.json');
const script = join(here, '..', 'fixtures', 'make_harmonic_ritz_fixture.py');

interface Case { name: string; kind: string; rows: number; cols: number; G: number[]; T: number[] | null; theta: [number, number][] }
const cases = (JSON.parse(readFileSync(fixture, 'utf8')) as { cases: Case[] }).cases;

const hasScipy = (() => {
  try { execFileSync('/usr/bin/python3', ['-c', 'import scipy.linalg'], { stdio: 'ignore' }); return true; } catch { return false; }
})();

const byModulus = (a: [number, number], b: [number, number]): number => Math.hypot(...a) - Math.hypot(...b) || a[0] - b[0] || a[1] - b[1];

function ours(c: Case, kMax = c.cols) {
  return harmonicRitz(Float64Array.from(c.G), c.rows, c.rows, c.cols, c.T ? Float64Array.from(c.T) : undefined, kMax);
}

function dense(c: Case, which: 'G' | 'T'): Matrix {
  const out = Matrix.zeros(c.rows, c.cols);
  for (let j = 0; j < c.cols; j++) {
    for (let i = 0; i < c.rows; i++) {
      out.set(i, j, which === 'G' ? c.G[j * c.rows + i] : c.T ? c.T[j * c.rows + i] : i === j ? 1 : 0);
    }
  }
  return out;
}

function expectSameValues(got: [number, number][], want: [number, number][]): void {
  expect(got.length).toBe(want.length);
  const g = [...got].sort(byModulus), w = [...want].sort(byModulus);
  for (let i = 0; i < w.length; i++) {
    const scale = Math.max(1, Math.hypot(...w[i]));
    expect(Math.abs(g[i][0] - w[i][0])).toBeLessThan(1e-9 * scale);
    expect(Math.abs(Math.abs(g[i][1]) - Math.abs(w[i][1]))).toBeLessThan(1e-9 * scale);
  }
}

describe('harmonic Ritz values against scipy (committed fixture)', () => {
  for (const c of cases) {
    it(`${c.name}: all values agree with scipy.linalg.eigvals(ḠᵀḠ, ḠᵀT)`, () => {
      const h = ours(c);
      expect(h.k).toBe(c.cols);
      expectSameValues(h.re.map((re, i) => [re, h.im[i]]), c.theta);
      // chosen by increasing modulus
      for (let i = 1; i < h.k; i++) expect(Math.hypot(h.re[i], h.im[i])).toBeGreaterThanOrEqual(Math.hypot(h.re[i - 1], h.im[i - 1]) * (1 - 1e-12));
    });
  }

  it('the k of smallest modulus are the first k of scipy\'s list, a complex pair kept whole', () => {
    for (const c of cases) {
      for (const k of [1, 2, 3]) {
        const h = ours(c, k);
        expect(h.k === k || h.k === k - 1).toBe(true);
        expectSameValues(h.re.map((re, i) => [re, h.im[i]]), c.theta.slice(0, h.k));
        if (h.k === k - 1) expect(c.theta[k - 1][1]).not.toBe(0); // only to keep a pair whole
      }
    }
  });

  it('the vectors solve Ḡᵀ Ḡ z = θ Ḡᵀ T z (real vectors, and the real/imaginary parts of a pair)', () => {
    for (const c of cases) {
      const G = dense(c, 'G'), T = dense(c, 'T');
      const A = G.transpose().mmul(G), B = G.transpose().mmul(T);
      const h = ours(c);
      const col = (j: number): Matrix => Matrix.columnVector(Array.from(h.p.subarray(j * c.cols, (j + 1) * c.cols)));
      for (let j = 0; j < h.k; j++) {
        if (h.im[j] === 0) {
          const z = col(j);
          const res = A.mmul(z).sub(B.mmul(z).mul(h.re[j])).norm();
          expect(res).toBeLessThan(1e-9 * A.norm() * z.norm());
        } else {
          const zr = col(j), zi = col(j + 1);
          // (A − θB)(zr + i zi) = 0 for θ or its conjugate (the storage convention of the pair)
          const resFor = (tr: number, ti: number): number => {
            const re = A.mmul(zr).sub(B.mmul(zr).mul(tr)).add(B.mmul(zi).mul(ti));
            const im = A.mmul(zi).sub(B.mmul(zi).mul(tr)).sub(B.mmul(zr).mul(ti));
            return Math.hypot(re.norm(), im.norm());
          };
          const res = Math.min(resFor(h.re[j], h.im[j]), resFor(h.re[j], -h.im[j]));
          expect(res).toBeLessThan(1e-9 * A.norm() * Math.hypot(zr.norm(), zi.norm()));
          j++;
        }
      }
    }
  });

  it.runIf(hasScipy)('live: scipy computes the committed values', () => {
    const live = JSON.parse(execFileSync('/usr/bin/python3', [script, 'check', fixture], { encoding: 'utf8' })) as [number, number][][];
    cases.forEach((c, i) => expectSameValues(live[i], c.theta));
  });
});

describe('harmonic Ritz values of a GMRES Hessenberg: Morgan\'s standard form', () => {
  it('equal the eigenvalues of H_m + h² H_m⁻ᵀ e_m e_mᵀ (ml-matrix dense eigensolver)', () => {
    for (const c of cases.filter((x) => x.kind === 'hessenberg')) {
      const m = c.cols;
      const Hbar = dense(c, 'G');
      const H = Hbar.subMatrix(0, m - 1, 0, m - 1);
      const h = Hbar.get(m, m - 1);
      const f = inverse(H.transpose()).mmul(Matrix.columnVector(Array.from({ length: m }, (_, i) => (i === m - 1 ? 1 : 0))));
      const S = H.clone();
      for (let i = 0; i < m; i++) S.set(i, m - 1, S.get(i, m - 1) + h * h * f.get(i, 0));
      const evd = new EigenvalueDecomposition(S);
      const want = evd.realEigenvalues.map((re, i) => [re, evd.imaginaryEigenvalues[i]] as [number, number]);
      const got = ours(c);
      expectSameValues(got.re.map((re, i) => [re, got.im[i]]), want);
    }
  });

  it('a singular Ḡ gives no vectors (the caller restarts plainly)', () => {
    const G = new Float64Array(3 * 2); // 3×2 of zeros
    expect(harmonicRitz(G, 3, 3, 2, undefined, 1).k).toBe(0);
    const bad = Float64Array.from([1, 0, 0, NaN, 1, 0]);
    expect(harmonicRitz(bad, 3, 3, 2, undefined, 1).k).toBe(0);
  });
});
