import { describe, it, expect } from 'vitest';
import { simplexQuadrature, MAX_QUADRATURE_DEGREE, type QuadratureRule } from '../../src/dg/quadrature.js';
import { grundmannMollerRule } from '../../src/dg/grundmann-moller.js';
import { gaussJacobi, jacobiP, symmetricTridiagonalEigenvalues } from '../../src/dg/jacobi-polynomials.js';

const fact = (n: number): number => { let f = 1; for (let k = 2; k <= n; k++) f *= k; return f; };

/** ∫ over the unit d-simplex of x^a = a₁!⋯a_d!/(d + Σa)! (DLMF §5.14, Dirichlet integral). */
function exactMonomial(a: number[]): number {
  let num = 1; let sum = 0;
  for (const ai of a) { num *= fact(ai); sum += ai; }
  return num / fact(a.length + sum);
}

/** Every exponent vector of length dim with total degree ≤ maxDeg. */
function exponents(dim: number, maxDeg: number): number[][] {
  const out: number[][] = [];
  const rec = (prefix: number[], left: number): void => {
    if (prefix.length === dim) { out.push(prefix); return; }
    for (let v = 0; v <= left; v++) rec([...prefix, v], left - v);
  };
  rec([], maxDeg);
  return out;
}

/** Worst relative error of the rule over all monomials of total degree exactly deg or ≤ deg. */
function worstMonomialError(rule: QuadratureRule, monos: number[][]): number {
  const { dim, nPoints, points, weights } = rule;
  const maxDeg = Math.max(0, ...monos.map((a) => a.reduce((s, v) => s + v, 0)));
  // powers[q][k][e] = x_k^e at point q
  const pw = new Float64Array(nPoints * dim * (maxDeg + 1));
  for (let q = 0; q < nPoints; q++) {
    for (let k = 0; k < dim; k++) {
      const base = (q * dim + k) * (maxDeg + 1);
      pw[base] = 1;
      for (let e = 1; e <= maxDeg; e++) pw[base + e] = pw[base + e - 1] * points[q * dim + k];
    }
  }
  let worst = 0;
  for (const a of monos) {
    let s = 0;
    for (let q = 0; q < nPoints; q++) {
      let v = weights[q];
      for (let k = 0; k < dim; k++) v *= pw[(q * dim + k) * (maxDeg + 1) + a[k]];
      s += v;
    }
    const ex = exactMonomial(a);
    worst = Math.max(worst, Math.abs(s - ex) / ex);
  }
  return worst;
}

describe('Gauss–Jacobi building blocks', () => {
  it('3-point Gauss–Legendre: nodes ±√(3/5), 0; weights 5/9, 8/9 (Abramowitz & Stegun 1964, Table 25.4)', () => {
    const { nodes, weights } = gaussJacobi(3, 0, 0);
    expect(nodes[0]).toBeCloseTo(-Math.sqrt(0.6), 15);
    expect(nodes[1]).toBeCloseTo(0, 15);
    expect(nodes[2]).toBeCloseTo(Math.sqrt(0.6), 15);
    expect(weights[0]).toBeCloseTo(5 / 9, 15);
    expect(weights[1]).toBeCloseTo(8 / 9, 15);
    expect(weights[2]).toBeCloseTo(5 / 9, 15);
  });

  it('nodes are the zeros of P_n^(α,β) and the rule integrates ξ^k(1−ξ)^α exactly to degree 2n−1', () => {
    for (const [alpha, n] of [[0, 9], [1, 7], [2, 9], [3, 5], [3, 12]] as const) {
      const { nodes, weights } = gaussJacobi(n, alpha, 0);
      for (const x of nodes) expect(Math.abs(jacobiP(n, alpha, 0, x))).toBeLessThan(1e-11 * Math.abs(jacobiP(n, alpha, 0, 1)));
      // ∫_{-1}^{1} (1−ξ)^α ((1+ξ)/2)^k dξ = 2^{α+1} α! k!/(α+k+1)! (Beta integral, DLMF 5.12.1), derived.
      for (let k = 0; k <= 2 * n - 1; k++) {
        let s = 0;
        for (let i = 0; i < n; i++) s += weights[i] * ((1 + nodes[i]) / 2) ** k;
        const ex = (2 ** (alpha + 1) * fact(alpha) * fact(k)) / fact(alpha + k + 1);
        expect(Math.abs(s - ex) / ex).toBeLessThan(1e-13);
      }
    }
  });

  it('tridiagonal eigenvalues of tridiag(−1, 2, −1) are 4 sin²(kπ/(2(n+1))) (Strang, Linear Algebra, §7.4)', () => {
    const n = 21;
    const d = new Float64Array(n).fill(2);
    const e = new Float64Array(n).fill(-1);
    const dCopy = Float64Array.from(d);
    const ev = symmetricTridiagonalEigenvalues(d, e);
    for (let k = 1; k <= n; k++) expect(ev[k - 1]).toBeCloseTo(4 * Math.sin((k * Math.PI) / (2 * (n + 1))) ** 2, 13);
    expect(Array.from(d)).toEqual(Array.from(dCopy)); // input unmodified
  });
});

describe('simplexQuadrature', () => {
  it('reference values: x²y → 1/60 (triangle), xyz → 1/720 (tetrahedron), x₁²x₄⁵ → 1/166320 (4-simplex) (DLMF §5.14)', () => {
    const cases: [1 | 2 | 3 | 4, number[], number][] = [[2, [2, 1], 1 / 60], [3, [1, 1, 1], 1 / 720], [4, [2, 0, 0, 5], 1 / 166320]];
    for (const [dim, a, value] of cases) {
      const rule = simplexQuadrature(dim, a.reduce((s, v) => s + v, 0));
      let s = 0;
      for (let q = 0; q < rule.nPoints; q++) {
        let v = rule.weights[q];
        for (let k = 0; k < dim; k++) v *= rule.points[q * dim + k] ** a[k];
        s += v;
      }
      expect(Math.abs(s - value) / value).toBeLessThan(1e-13);
      expect(exactMonomial(a)).toBeCloseTo(value, 18);
    }
  });

  it('every rule is exact to its stated degree for d = 1..4, degrees 0..17 (DLMF §5.14), and that degree is sharp', () => {
    for (const dim of [1, 2, 3, 4] as const) {
      for (let requested = 0; requested <= 17; requested += 1) {
        const rule = simplexQuadrature(dim, requested);
        if (rule.degree !== Math.max(1, requested + (requested % 2 === 0 ? 1 : 0))) throw new Error(`degree ${rule.degree} for ${requested}`);
        if (requested % 2 === 0 && requested > 0) continue; // same rule as requested + 1
        const worst = worstMonomialError(rule, exponents(dim, rule.degree));
        expect(worst, `dim ${dim} degree ${rule.degree}`).toBeLessThan(2e-13);
        // One degree more is NOT integrated exactly: x_1^{degree+1} (Gauss rules are sharp).
        const a = [rule.degree + 1, ...new Array<number>(dim - 1).fill(0)];
        expect(worstMonomialError(rule, [a])).toBeGreaterThan(1e-10);
      }
    }
  });

  it('high degrees up to the limit stay exact in 1-D and 2-D', () => {
    const r1 = simplexQuadrature(1, MAX_QUADRATURE_DEGREE);
    expect(worstMonomialError(r1, exponents(1, MAX_QUADRATURE_DEGREE))).toBeLessThan(1e-12);
    const r2 = simplexQuadrature(2, 30);
    expect(worstMonomialError(r2, exponents(2, 31))).toBeLessThan(1e-12);
  });

  it('points lie inside the simplex, weights are positive and sum to 1/d!', () => {
    for (const dim of [1, 2, 3, 4] as const) {
      for (const deg of [0, 3, 8, 16]) {
        const r = simplexQuadrature(dim, deg);
        expect(r.points.length).toBe(r.nPoints * dim);
        let wsum = 0;
        for (let q = 0; q < r.nPoints; q++) {
          expect(r.weights[q]).toBeGreaterThan(0);
          wsum += r.weights[q];
          let s = 0;
          for (let k = 0; k < dim; k++) { expect(r.points[q * dim + k]).toBeGreaterThan(0); s += r.points[q * dim + k]; }
          expect(s).toBeLessThan(1);
        }
        expect(wsum).toBeCloseTo(1 / fact(dim), 14);
      }
    }
  });

  it('caches rules per (dim, points per direction)', () => {
    expect(simplexQuadrature(3, 5)).toBe(simplexQuadrature(3, 4));
    expect(simplexQuadrature(3, 5)).not.toBe(simplexQuadrature(2, 5));
  });

  it('rejects bad dimensions and degrees', () => {
    expect(() => simplexQuadrature(5 as 4, 2)).toThrow(/dim must be 1, 2, 3 or 4/);
    expect(() => simplexQuadrature(2, -1)).toThrow(/degree must be an integer/);
    expect(() => simplexQuadrature(2, 2.5)).toThrow(/degree must be an integer/);
    expect(() => simplexQuadrature(2, MAX_QUADRATURE_DEGREE + 1)).toThrow(/degree must be an integer/);
  });
});

describe('Grundmann–Möller cross-check (SIAM J. Numer. Anal. 15, 1978)', () => {
  it('index s has C(d+s+1, s) points and is exact to degree 2s+1 for d = 2, 3, 4 (DLMF §5.14)', () => {
    const binom = (n: number, k: number): number => fact(n) / (fact(k) * fact(n - k));
    for (const dim of [2, 3, 4]) {
      for (let s = 0; s <= 5; s++) {
        const rule = grundmannMollerRule(dim, s);
        expect(rule.nPoints).toBe(binom(dim + s + 1, s));
        expect(worstMonomialError(rule, exponents(dim, 2 * s + 1))).toBeLessThan(1e-11);
      }
    }
  });

  it('agrees with the collapsed Gauss–Jacobi rule on a smooth non-polynomial integrand', () => {
    // exp(x₁ + 2x₂ − x₃) over the tetrahedron: both families converge to the same value.
    const f = (p: Float64Array, o: number): number => Math.exp(p[o] + 2 * p[o + 1] - p[o + 2]);
    const integrate = (r: QuadratureRule): number => {
      let s = 0;
      for (let q = 0; q < r.nPoints; q++) s += r.weights[q] * f(r.points, q * 3);
      return s;
    };
    const a = integrate(simplexQuadrature(3, 21));
    const b = integrate(grundmannMollerRule(3, 8));
    expect(Math.abs(a - b)).toBeLessThan(1e-9);
  });
});
