/**
 * Orthonormal polynomial basis of total degree ≤ order on the unit d-simplex {x_i ≥ 0, Σ x_i ≤ 1}:
 * the Proriol–Koornwinder–Dubiner (PKD) basis (Proriol 1957; Koornwinder 1975; Dubiner, J. Sci. Comput.
 * 6, 1991; Sherwin & Karniadakis, Comput. Methods Appl. Mech. Eng. 123, 1995, for the d-dimensional
 * collapsed form).
 *
 * Why PKD rather than Gram–Schmidt on monomials: it is orthonormal by construction (no Gram matrix
 * whose condition number grows like 10^{2p} in 4-D), hierarchical (the first C(q+d, d) functions span
 * degree ≤ q), and the scaled recurrence below is regular at the collapsed vertex, so values and
 * gradients are polynomial evaluations without any division by zero.
 *
 * With s_k = 1 − Σ_{j>k} x_j (s_d = 1) and multi-index n = (n_1 … n_d):
 *   φ_n(x) = c_n Π_k Q_{n_k}^{(α_k)}(x_k, s_k),   Q_m^{(α)}(x, s) = s^m P_m^{(α,0)}((2x − s)/s),
 *   α_k = 2(n_1 + … + n_{k−1}) + k − 1,   c_n² = Π_k (2 n_k + α_k + 1).
 * (The collapsed map x_k = s_k (1 + η_k)/2 turns ∫φ_n φ_m into a product of 1-D Jacobi
 * orthogonality integrals with weights (1 − η_k)^{α_k}; c_n follows from ∫(1−η)^α P_m² = 2^{α+1}/(2m+α+1).)
 * φ_0 = √(d!). Functions are ordered by total degree, then by n_1 descending, n_2 descending, ….
 */
import { MAX_QUADRATURE_DEGREE } from './quadrature.js';

export interface BasisEvaluation {
  /** nPoints·nBasis, point-major: values[p*nBasis + b]. */
  values: Float64Array;
  /** nPoints·nBasis·dim: gradients[(p*nBasis + b)*dim + k] = ∂φ_b/∂x_k at point p. */
  gradients: Float64Array;
}

export interface OrthonormalBasis {
  readonly dim: number;
  readonly order: number;
  readonly nBasis: number;
  /** Multi-indices n (nBasis·dim), in basis order. */
  readonly indices: Int32Array;
  /** Total degree of each basis function. */
  readonly degrees: Int32Array;
  /** Values and gradients at nPoints points (point-major, dim coordinates each). Allocates the result. */
  evaluate(points: Float64Array, nPoints: number): BasisEvaluation;
  /** Same as evaluate, into caller-owned arrays (values nPoints·nBasis, gradients nPoints·nBasis·dim or null). */
  evaluateInto(points: Float64Array, nPoints: number, values: Float64Array, gradients: Float64Array | null): void;
}

/** Highest order served (twice it must stay within the quadrature limit, for mass matrices). */
export const MAX_BASIS_ORDER = 10;

/** Number of polynomials of total degree ≤ order in dim variables: C(order + dim, dim). */
export function basisDimension(dim: number, order: number): number {
  let c = 1;
  for (let k = 1; k <= dim; k++) c = (c * (order + k)) / k;
  return Math.round(c);
}

const cache = new Map<string, OrthonormalBasis>();

export function orthonormalBasis(dim: 1 | 2 | 3 | 4, order: number): OrthonormalBasis {
  if (dim !== 1 && dim !== 2 && dim !== 3 && dim !== 4) {
    throw new RangeError(`orthonormalBasis: dim must be 1, 2, 3 or 4, got ${String(dim)}`);
  }
  if (!Number.isInteger(order) || order < 0 || order > MAX_BASIS_ORDER || 2 * order > MAX_QUADRATURE_DEGREE) {
    throw new RangeError(`orthonormalBasis: order must be an integer in 0..${MAX_BASIS_ORDER}, got ${order}`);
  }
  const key = `${dim}:${order}`;
  let b = cache.get(key);
  if (b === undefined) {
    b = buildBasis(dim, order);
    cache.set(key, b);
  }
  return b;
}

function buildBasis(dim: number, order: number): OrthonormalBasis {
  const nBasis = basisDimension(dim, order);
  const indices = new Int32Array(nBasis * dim);
  const degrees = new Int32Array(nBasis);
  const lowerSum = new Int32Array(nBasis * dim); // N_k = n_1 + … + n_{k−1}
  const scale = new Float64Array(nBasis);
  let b = 0;
  const cur = new Int32Array(dim);
  const rec = (k: number, left: number, total: number): void => {
    if (k === dim - 1) {
      cur[k] = left;
      let n = 0;
      let c2 = 1;
      for (let j = 0; j < dim; j++) {
        indices[b * dim + j] = cur[j];
        lowerSum[b * dim + j] = n;
        c2 *= 2 * cur[j] + 2 * n + j + 1; // 2 n_k + α_k + 1 with α_k = 2N_k + k (0-based k)
        n += cur[j];
      }
      degrees[b] = total;
      scale[b] = Math.sqrt(c2);
      b++;
      return;
    }
    for (let v = left; v >= 0; v--) {
      cur[k] = v;
      rec(k + 1, left - v, total);
    }
  };
  for (let t = 0; t <= order; t++) rec(0, t, t);

  // Per-point tables: Q[k][N][m], ∂Q/∂x, ∂Q/∂s for α = 2N + k, m ≤ order − N.
  const p1 = order + 1;
  const tabQ = new Float64Array(dim * p1 * p1);
  const tabQx = new Float64Array(dim * p1 * p1);
  const tabQs = new Float64Array(dim * p1 * p1);
  const sK = new Float64Array(dim);
  const fac = new Float64Array(dim);

  const evaluateInto = (points: Float64Array, nPoints: number, values: Float64Array, gradients: Float64Array | null): void => {
    if (!Number.isInteger(nPoints) || nPoints < 0 || points.length < nPoints * dim) {
      throw new RangeError(`basis.evaluate: need ${nPoints}·${dim} coordinates, got ${points.length}`);
    }
    if (values.length < nPoints * nBasis) throw new RangeError(`basis.evaluate: values needs length ${nPoints * nBasis}`);
    if (gradients !== null && gradients.length < nPoints * nBasis * dim) {
      throw new RangeError(`basis.evaluate: gradients needs length ${nPoints * nBasis * dim}`);
    }
    for (let p = 0; p < nPoints; p++) {
      const o = p * dim;
      let tail = 0;
      for (let k = dim - 1; k >= 0; k--) {
        sK[k] = 1 - tail;
        tail += points[o + k];
      }
      for (let k = 0; k < dim; k++) {
        const x = points[o + k];
        const s = sK[k];
        for (let nLow = 0; nLow <= order; nLow++) {
          fillScaledJacobi(2 * nLow + k, order - nLow, x, s, tabQ, tabQx, tabQs, (k * p1 + nLow) * p1);
        }
      }
      for (let bf = 0; bf < nBasis; bf++) {
        let v = scale[bf];
        for (let k = 0; k < dim; k++) {
          fac[k] = tabQ[(k * p1 + lowerSum[bf * dim + k]) * p1 + indices[bf * dim + k]];
          v *= fac[k];
        }
        values[p * nBasis + bf] = v;
        if (gradients === null) continue;
        // ∂φ/∂x_j = c [ Qx_j Π_{i≠j} Q_i − Σ_{k<j} Qs_k Π_{i≠k} Q_i ]  (∂s_k/∂x_j = −1 for j > k)
        const g = (p * nBasis + bf) * dim;
        for (let j = 0; j < dim; j++) {
          let sum = 0;
          for (let k = 0; k <= j; k++) {
            const t = (k * p1 + lowerSum[bf * dim + k]) * p1 + indices[bf * dim + k];
            let prod = k === j ? tabQx[t] : -tabQs[t];
            for (let i = 0; i < dim; i++) if (i !== k) prod *= fac[i];
            sum += prod;
          }
          gradients[g + j] = scale[bf] * sum;
        }
      }
    }
  };

  return {
    dim, order, nBasis, indices, degrees,
    evaluate(points: Float64Array, nPoints: number): BasisEvaluation {
      const values = new Float64Array(nPoints * nBasis);
      const gradients = new Float64Array(nPoints * nBasis * dim);
      evaluateInto(points, nPoints, values, gradients);
      return { values, gradients };
    },
    evaluateInto,
  };
}

/**
 * Q_m^{(α)}(x, s) = s^m P_m^{(α,0)}((2x − s)/s) for m = 0..mMax with ∂/∂x and ∂/∂s, written at
 * q[off + m]. Recurrence A&S 22.7.1 multiplied through by s^{m+1}:
 *   a1 Q_{m+1} = (a2 s + a3 (2x − s)) Q_m − a4 s² Q_{m−1}.
 */
function fillScaledJacobi(
  alpha: number, mMax: number, x: number, s: number,
  q: Float64Array, qx: Float64Array, qs: Float64Array, off: number,
): void {
  q[off] = 1; qx[off] = 0; qs[off] = 0;
  if (mMax < 1) return;
  q[off + 1] = (alpha + 2) * x - s; qx[off + 1] = alpha + 2; qs[off + 1] = -1;
  for (let m = 1; m < mMax; m++) {
    const sm = 2 * m + alpha;
    const a1 = 2 * (m + 1) * (m + alpha + 1) * sm;
    const a2 = (sm + 1) * alpha * alpha;
    const a3 = sm * (sm + 1) * (sm + 2);
    const a4 = 2 * (m + alpha) * m * (sm + 2);
    const lin = a2 * s + a3 * (2 * x - s);
    const i = off + m;
    q[i + 1] = (lin * q[i] - a4 * s * s * q[i - 1]) / a1;
    qx[i + 1] = (2 * a3 * q[i] + lin * qx[i] - a4 * s * s * qx[i - 1]) / a1;
    qs[i + 1] = ((a2 - a3) * q[i] + lin * qs[i] - a4 * (2 * s * q[i - 1] + s * s * qs[i - 1])) / a1;
  }
}
