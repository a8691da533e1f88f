/**
 * Grundmann–Möller rules on the unit n-simplex (Grundmann & Möller, "Invariant integration formulas
 * for the n-simplex by combinatorial methods", SIAM J. Numer. Anal. 15, 1978, Theorem 4).
 * Index s is exact to degree 2s + 1 with C(n + s + 1, s) points; some weights are negative.
 * Used as an independent second family to cross-check the collapsed Gauss–Jacobi rules.
 */
import type { QuadratureRule } from './quadrature.js';

export function grundmannMollerRule(dim: number, s: number): QuadratureRule {
  if (!Number.isInteger(dim) || dim < 1) throw new RangeError(`grundmannMollerRule: bad dim ${dim}`);
  if (!Number.isInteger(s) || s < 0 || s > 12) throw new RangeError(`grundmannMollerRule: index s must be in 0..12, got ${s}`);
  const d = 2 * s + 1;
  const pts: number[] = [];
  const wts: number[] = [];
  const beta = new Int32Array(dim + 1);
  for (let i = 0; i <= s; i++) {
    const denom = d + dim - 2 * i;
    // Theorem 4: weight (−1)^i 2^{−2s} (d + n − 2i)^d / (i! (d + n − i)!), on the simplex of volume 1/n!.
    const w = ((i % 2 === 0 ? 1 : -1) * Math.pow(2, -2 * s) * Math.pow(denom, d)) / (factorial(i) * factorial(d + dim - i));
    forEachComposition(s - i, dim + 1, beta, () => {
      for (let k = 0; k < dim; k++) pts.push((2 * beta[k] + 1) / denom);
      wts.push(w);
    });
  }
  return { dim, degree: d, nPoints: wts.length, points: Float64Array.from(pts), weights: Float64Array.from(wts) };
}

function factorial(n: number): number {
  let f = 1;
  for (let k = 2; k <= n; k++) f *= k;
  return f;
}

/** Calls fn once for every β ∈ N^parts with Σβ = total (β written in place). */
function forEachComposition(total: number, parts: number, beta: Int32Array, fn: () => void): void {
  const rec = (k: number, left: number): void => {
    if (k === parts - 1) {
      beta[k] = left;
      fn();
      return;
    }
    for (let v = left; v >= 0; v--) {
      beta[k] = v;
      rec(k + 1, left - v);
    }
  };
  rec(0, total);
}
