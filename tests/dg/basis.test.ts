import { describe, it, expect } from 'vitest';
import { orthonormalBasis, basisDimension, MAX_BASIS_ORDER } from '../../src/dg/basis.js';
import { simplexQuadrature } from '../../src/dg/quadrature.js';
import { jacobiP } from '../../src/dg/jacobi-polynomials.js';
import { mulberry32 } from '../../src/util/random.js';

const fact = (n: number): number => { let f = 1; for (let k = 2; k <= n; k++) f *= k; return f; };
const dims = [1, 2, 3, 4] as const;

/** Seeded points inside the unit simplex (mulberry32, common practice). */
function randomSimplexPoints(dim: number, n: number, seed: number): Float64Array {
  const rnd = mulberry32(seed);
  const pts = new Float64Array(n * dim);
  for (let p = 0; p < n; p++) {
    // sorted uniforms give a uniform point in the simplex (spacings); shrink slightly off the boundary
    const u = Array.from({ length: dim }, rnd).sort((x, y) => x - y);
    let prev = 0;
    for (let k = 0; k < dim; k++) { pts[p * dim + k] = 0.98 * (u[k] - prev) + 0.004; prev = u[k]; }
  }
  return pts;
}

describe('orthonormalBasis (Proriol–Koornwinder–Dubiner)', () => {
  it('nBasis = C(p+d, d): 15 for d=4,p=2 and 35 for d=4,p=3 (Dubiner 1991; dimension of P_p)', () => {
    expect(orthonormalBasis(4, 2).nBasis).toBe(15);
    expect(orthonormalBasis(4, 3).nBasis).toBe(35);
    expect(orthonormalBasis(4, 4).nBasis).toBe(70);
    for (const d of dims) for (let p = 0; p <= 4; p++) expect(orthonormalBasis(d, p).nBasis).toBe(fact(p + d) / (fact(p) * fact(d)));
    expect(basisDimension(3, 2)).toBe(10);
  });

  it('Gram matrix is the identity to 1e-13 for d = 1..4, p = 0..4 (and p = 6, 8 for d ≤ 2)', () => {
    const cases: [1 | 2 | 3 | 4, number][] = [];
    for (const d of dims) for (let p = 0; p <= 4; p++) cases.push([d, p]);
    cases.push([1, 8], [2, 6], [2, 8], [3, 6]);
    for (const [d, p] of cases) {
      const basis = orthonormalBasis(d, p);
      const rule = simplexQuadrature(d, 2 * p);
      const { values } = basis.evaluate(rule.points, rule.nPoints);
      const n = basis.nBasis;
      let worst = 0;
      for (let i = 0; i < n; i++) {
        for (let j = 0; j <= i; j++) {
          let s = 0;
          for (let q = 0; q < rule.nPoints; q++) s += rule.weights[q] * values[q * n + i] * values[q * n + j];
          worst = Math.max(worst, Math.abs(s - (i === j ? 1 : 0)));
        }
      }
      expect(worst, `d=${d} p=${p}`).toBeLessThan(1e-13);
    }
  });

  it('basis function 0 is the constant √(d!), gradient zero', () => {
    for (const d of dims) {
      const pts = randomSimplexPoints(d, 5, 7);
      const { values, gradients } = orthonormalBasis(d, 2).evaluate(pts, 5);
      const n = orthonormalBasis(d, 2).nBasis;
      for (let p = 0; p < 5; p++) {
        expect(values[p * n]).toBeCloseTo(Math.sqrt(fact(d)), 14);
        for (let k = 0; k < d; k++) expect(gradients[p * n * d + k]).toBe(0);
      }
    }
  });

  it('1-D basis is the orthonormal shifted Legendre family √(2n+1) P_n(2x−1) (A&S 22.2.11, derived)', () => {
    const pts = Float64Array.from([0, 0.1, 0.37, 0.5, 0.93, 1]);
    const basis = orthonormalBasis(1, 5);
    const { values } = basis.evaluate(pts, pts.length);
    for (let p = 0; p < pts.length; p++) {
      for (let n = 0; n <= 5; n++) expect(values[p * 6 + n]).toBeCloseTo(Math.sqrt(2 * n + 1) * jacobiP(n, 0, 0, 2 * pts[p] - 1), 12);
    }
  });

  it('triangle: φ for n = (1, 0) is √12 (2x + y − 1) (derived from the PKD formula)', () => {
    const basis = orthonormalBasis(2, 1);
    const pts = Float64Array.from([0.2, 0.3, 0, 1, 0.6, 0.1]);
    const { values } = basis.evaluate(pts, 3);
    const b = Array.from({ length: 3 }, (_, i) => i).find((i) => basis.indices[2 * i] === 1 && basis.indices[2 * i + 1] === 0)!;
    for (let p = 0; p < 3; p++) expect(values[p * 3 + b]).toBeCloseTo(Math.sqrt(12) * (2 * pts[2 * p] + pts[2 * p + 1] - 1), 13);
  });

  it('spans P_p and is hierarchical: the first C(q+d,d) functions reproduce every monomial of degree ≤ q', () => {
    for (const d of dims) {
      const p = d === 4 ? 3 : 4;
      const basis = orthonormalBasis(d, p);
      const rule = simplexQuadrature(d, 2 * p);
      const { values } = basis.evaluate(rule.points, rule.nPoints);
      const test = randomSimplexPoints(d, 4, 11);
      const tv = basis.evaluate(test, 4).values;
      const n = basis.nBasis;
      for (let q = 0; q <= p; q++) {
        const nq = basisDimension(d, q);
        for (let b = 0; b < n; b++) expect(basis.degrees[b] <= q).toBe(b < nq);
        // monomial x_1^{a} x_d^{q−a}: L2 projection onto the first nq functions must be exact
        const a = Math.floor(q / 2);
        const mono = (x: Float64Array, o: number): number => x[o] ** a * x[o + d - 1] ** (q - a); // d = 1: x^q
        const coef = new Float64Array(nq);
        for (let i = 0; i < nq; i++) for (let r = 0; r < rule.nPoints; r++) coef[i] += rule.weights[r] * mono(rule.points, r * d) * values[r * n + i];
        for (let t = 0; t < 4; t++) {
          let s = 0;
          for (let i = 0; i < nq; i++) s += coef[i] * tv[t * n + i];
          expect(s).toBeCloseTo(mono(test, t * d), 12);
        }
      }
    }
  });

  it('gradients agree with central finite differences (d = 1..4, p = 4)', () => {
    const h = 1e-6;
    for (const d of dims) {
      const basis = orthonormalBasis(d, 4);
      const n = basis.nBasis;
      const pts = randomSimplexPoints(d, 6, 3 + d);
      const { gradients } = basis.evaluate(pts, 6);
      const shifted = new Float64Array(d);
      const vp = new Float64Array(n); const vm = new Float64Array(n);
      let worst = 0;
      for (let p = 0; p < 6; p++) {
        for (let k = 0; k < d; k++) {
          for (let j = 0; j < d; j++) shifted[j] = pts[p * d + j];
          shifted[k] += h; basis.evaluateInto(shifted, 1, vp, null);
          shifted[k] -= 2 * h; basis.evaluateInto(shifted, 1, vm, null);
          for (let b = 0; b < n; b++) {
            const fd = (vp[b] - vm[b]) / (2 * h);
            const g = gradients[(p * n + b) * d + k];
            worst = Math.max(worst, Math.abs(fd - g) / (1 + Math.abs(g)));
          }
        }
      }
      expect(worst, `d=${d}`).toBeLessThan(1e-6);
    }
  });

  it('evaluates at the vertices (collapsed point of the PKD map) without NaN', () => {
    for (const d of dims) {
      const pts = new Float64Array((d + 1) * d);
      for (let v = 1; v <= d; v++) pts[v * d + v - 1] = 1;
      const { values, gradients } = orthonormalBasis(d, 4).evaluate(pts, d + 1);
      expect(values.every(Number.isFinite)).toBe(true);
      expect(gradients.every(Number.isFinite)).toBe(true);
    }
  });

  it('evaluateInto matches evaluate and leaves the points unmodified', () => {
    const basis = orthonormalBasis(3, 3);
    const pts = randomSimplexPoints(3, 5, 99);
    const copy = Float64Array.from(pts);
    const a = basis.evaluate(pts, 5);
    const v = new Float64Array(5 * basis.nBasis); const g = new Float64Array(5 * basis.nBasis * 3);
    basis.evaluateInto(pts, 5, v, g);
    expect(Array.from(v)).toEqual(Array.from(a.values));
    expect(Array.from(g)).toEqual(Array.from(a.gradients));
    expect(Array.from(pts)).toEqual(Array.from(copy));
    expect(orthonormalBasis(3, 3)).toBe(basis);
  });

  it('rejects bad dimensions, orders and array sizes', () => {
    expect(() => orthonormalBasis(0 as 1, 1)).toThrow(/dim must be 1, 2, 3 or 4/);
    expect(() => orthonormalBasis(2, -1)).toThrow(/order must be an integer/);
    expect(() => orthonormalBasis(2, 1.5)).toThrow(/order must be an integer/);
    expect(() => orthonormalBasis(2, MAX_BASIS_ORDER + 1)).toThrow(/order must be an integer/);
    const basis = orthonormalBasis(2, 1);
    expect(() => basis.evaluate(new Float64Array(3), 2)).toThrow(/need 2·2 coordinates/);
    expect(() => basis.evaluateInto(new Float64Array(4), 2, new Float64Array(5), null)).toThrow(/values needs length 6/);
  });
});
