import { simplexQuadrature } from './quadrature.js';
import { orthonormalBasis, type OrthonormalBasis } from './basis.js';

/**
 * Precomputed reference-element quantities for one (space-time dimension D, order p, quadrature
 * degree) triple: volume quadrature with basis values and reference gradients, the reference
 * convection integrals S_l[a][b] = ∫ φ_b ∂φ_a/∂ξ_l, and face quadrature tables keyed by the order
 * in which a face's vertices are listed (so the left and right element of a face evaluate their
 * bases at the same physical points).
 */
export interface VolumeTable {
  readonly nq: number;
  /** Reference points (nq·D). */
  readonly points: Float64Array;
  /** Weights (sum 1/D!). */
  readonly weights: Float64Array;
  /** φ_b(q): nq·nb, point-major. */
  readonly phi: Float64Array;
  /** ∂φ_b/∂ξ_l(q): (q·nb + b)·D + l. */
  readonly grad: Float64Array;
  /** S_l[a][b] = Σ_q w_q φ_b ∂_l φ_a, stored l·nb² + a·nb + b (exact for the volume degree ≥ 2p − 1). */
  readonly convection: Float64Array;
}

export interface FaceTable {
  readonly nq: number;
  /** Face weights on the unit (D−1)-simplex (sum 1/(D−1)!). */
  readonly weights: Float64Array;
  /** Element reference coordinates of the face points (nq·D). */
  readonly points: Float64Array;
  readonly phi: Float64Array;
  readonly grad: Float64Array;
}

export interface ReferenceTables {
  readonly D: number;
  readonly order: number;
  readonly nb: number;
  readonly basis: OrthonormalBasis;
  readonly volume: VolumeTable;
  /** (D−1)! — converts face reference weights to physical ones: w·(D−1)!·|F|. */
  readonly faceFactorial: number;
  /**
   * Face table for a face whose vertices, listed in the face's canonical order, are the element's
   * local vertices `localVertices` (D entries, distinct, in 0..D).
   */
  face(localVertices: ArrayLike<number>): FaceTable;
  /**
   * Reference face mass matrix M[a][b] = Σ_q w_q x_a(q) y_b(q) between the bases of two face tables
   * of the same face rule (cached per pair; shared, read-only). Physical: multiply by (D−1)!·|F|.
   */
  faceMass(x: FaceTable, y: FaceTable): Float64Array;
}

export function buildReferenceTables(D: 2 | 3 | 4, order: number, volumeDegree: number, faceDegree: number): ReferenceTables {
  const basis = orthonormalBasis(D, order);
  const nb = basis.nBasis;
  const vq = simplexQuadrature(D, volumeDegree);
  const { values: phi, gradients: grad } = basis.evaluate(vq.points, vq.nPoints);
  const convection = new Float64Array(D * nb * nb);
  for (let q = 0; q < vq.nPoints; q++) {
    const w = vq.weights[q];
    for (let a = 0; a < nb; a++) {
      for (let l = 0; l < D; l++) {
        const ga = w * grad[(q * nb + a) * D + l];
        const row = l * nb * nb + a * nb;
        for (let b = 0; b < nb; b++) convection[row + b] += ga * phi[q * nb + b];
      }
    }
  }
  const volume: VolumeTable = { nq: vq.nPoints, points: vq.points, weights: vq.weights, phi, grad, convection };
  const fq = simplexQuadrature((D - 1) as 1 | 2 | 3, faceDegree);
  let faceFactorial = 1;
  for (let k = 2; k < D; k++) faceFactorial *= k;
  const faces = new Map<number, FaceTable>();
  const face = (localVertices: ArrayLike<number>): FaceTable => {
    let key = 0;
    for (let i = 0; i < D; i++) key = key * (D + 1) + localVertices[i];
    let table = faces.get(key);
    if (table === undefined) {
      const nq = fq.nPoints;
      const points = new Float64Array(nq * D);
      for (let q = 0; q < nq; q++) {
        // Barycentric coordinates on the face: λ_0 = 1 − Σ η, λ_i = η_{i−1}; vertex v of the element
        // sits at the origin (v = 0) or at e_v (v ≥ 1) of the reference simplex.
        let l0 = 1;
        for (let i = 1; i < D; i++) {
          const eta = fq.points[q * (D - 1) + i - 1];
          l0 -= eta;
          const v = localVertices[i];
          if (v > 0) points[q * D + v - 1] += eta;
        }
        const v0 = localVertices[0];
        if (v0 > 0) points[q * D + v0 - 1] += l0;
      }
      const ev = basis.evaluate(points, nq);
      table = { nq, weights: fq.weights, points, phi: ev.values, grad: ev.gradients };
      faces.set(key, table);
    }
    return table;
  };
  const masses = new Map<FaceTable, Map<FaceTable, Float64Array>>();
  const faceMass = (x: FaceTable, y: FaceTable): Float64Array => {
    let row = masses.get(x);
    if (row === undefined) { row = new Map(); masses.set(x, row); }
    let M = row.get(y);
    if (M === undefined) {
      M = new Float64Array(nb * nb);
      for (let q = 0; q < x.nq; q++) {
        const w = x.weights[q];
        const po = q * nb;
        for (let a = 0; a < nb; a++) {
          const s = w * x.phi[po + a];
          for (let b = 0; b < nb; b++) M[a * nb + b] += s * y.phi[po + b];
        }
      }
      row.set(y, M);
    }
    return M;
  };
  return { D, order, nb, basis, volume, faceFactorial, face, faceMass };
}
