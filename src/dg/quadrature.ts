/**
 * Quadrature on the unit d-simplex {x_i ≥ 0, Σ x_i ≤ 1}, d = 1..4.
 *
 * Family: collapsed (Duffy) Gauss–Jacobi conical product rules (Stroud, Approximate Calculation of
 * Multiple Integrals, 1971, §2.7 "conical product"; Karniadakis & Sherwin, Spectral/hp Element
 * Methods, 2nd ed. 2005, §4.1 and App. B). The cube [0,1]^d maps onto the simplex by
 *   x_1 = u_1,  x_k = (1 − u_1)⋯(1 − u_{k−1}) u_k,
 * with Jacobian Π_k (1 − u_k)^{d−k}; direction k therefore uses an m-point Gauss–Jacobi rule with
 * weight (1 − u)^{d−k}. A polynomial of total degree n in x has degree ≤ n in every u_k, so m points
 * per direction integrate total degree 2m − 1 exactly. All weights are positive; no point lies on
 * the boundary. dim 1 is Gauss–Legendre on [0, 1].
 */
import { gaussJacobi } from './jacobi-polynomials.js';

export interface QuadratureRule {
  readonly dim: number;
  /** Degree of exactness of the rule (2m − 1 ≥ the requested degree). */
  readonly degree: number;
  readonly nPoints: number;
  /** nPoints·dim, point-major, inside the unit simplex. */
  readonly points: Float64Array;
  /** Sum 1/dim!. */
  readonly weights: Float64Array;
}

/** Highest degree served: 21 points per direction, 194 481 points in 4-D. */
export const MAX_QUADRATURE_DEGREE = 41;

const cache = new Map<string, QuadratureRule>();

/**
 * Rule on the unit dim-simplex exact for every polynomial of total degree ≤ degree.
 * Rules are cached per (dim, points per direction) and SHARED: callers must not modify the arrays.
 */
export function simplexQuadrature(dim: 1 | 2 | 3 | 4, degree: number): QuadratureRule {
  if (dim !== 1 && dim !== 2 && dim !== 3 && dim !== 4) {
    throw new RangeError(`simplexQuadrature: dim must be 1, 2, 3 or 4, got ${String(dim)}`);
  }
  if (!Number.isInteger(degree) || degree < 0 || degree > MAX_QUADRATURE_DEGREE) {
    throw new RangeError(`simplexQuadrature: degree must be an integer in 0..${MAX_QUADRATURE_DEGREE}, got ${degree}`);
  }
  const m = Math.max(1, Math.ceil((degree + 1) / 2));
  const key = `${dim}:${m}`;
  let rule = cache.get(key);
  if (rule === undefined) {
    rule = collapsedRule(dim, m);
    cache.set(key, rule);
  }
  return rule;
}

/** Conical product rule with m Gauss–Jacobi points per direction. */
function collapsedRule(dim: number, m: number): QuadratureRule {
  // 1-D factors on [0, 1]: u = (1 + ξ)/2, weight (1 − u)^α du = 2^{−α−1} (1 − ξ)^α dξ.
  const uNodes: Float64Array[] = [];
  const uWeights: Float64Array[] = [];
  for (let k = 0; k < dim; k++) {
    const alpha = dim - 1 - k;
    const { nodes, weights } = gaussJacobi(m, alpha, 0);
    const scale = Math.pow(2, -alpha - 1);
    uNodes.push(nodes.map((xi) => (1 + xi) / 2));
    uWeights.push(weights.map((w) => w * scale));
  }
  const nPoints = m ** dim;
  const points = new Float64Array(nPoints * dim);
  const weights = new Float64Array(nPoints);
  const idx = new Int32Array(dim);
  for (let q = 0; q < nPoints; q++) {
    let r = q;
    for (let k = dim - 1; k >= 0; k--) {
      idx[k] = r % m;
      r = (r - idx[k]) / m;
    }
    let w = 1;
    let room = 1; // Π_{j<k} (1 − u_j)
    for (let k = 0; k < dim; k++) {
      const u = uNodes[k][idx[k]];
      w *= uWeights[k][idx[k]];
      points[q * dim + k] = room * u;
      room *= 1 - u;
    }
    weights[q] = w;
  }
  return { dim, degree: 2 * m - 1, nPoints, points, weights };
}
