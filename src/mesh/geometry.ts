/**
 * Element geometry for assembly on a space-time simplex mesh (D = dim + 1 space-time dimensions).
 *
 * Reference element: the unit D-simplex {ξ_i ≥ 0, Σ ξ_i ≤ 1} with reference vertex 0 at the origin
 * and reference vertex j (1 ≤ j ≤ D) at the unit vector e_j. Element e maps from it affinely:
 *   x(ξ) = x_0 + J ξ,   J[i][j] = (x_{j+1} − x_0)_i   (row-major, column j = edge to vertex j+1),
 * with x_k the coordinates of the element's k-th vertex (mesh.elements order). The barycentric
 * coordinates are λ_j = ξ_j (j ≥ 1), λ_0 = 1 − Σ ξ_j, and ∇_x λ_j is row j−1 of J⁻¹.
 *
 * Local face f is the face opposite local vertex f; its vertices, in the fixed order of
 * faceLocalVertices, are all local vertices except f, ascending.
 */
import type { SpaceTimeMesh } from './space-time.js';

export interface ElementAffine {
  /** Space-time dimension D = dim + 1. */
  readonly dimPlusOne: number;
  /** Vertex 0 of the element (D entries). */
  readonly origin: Float64Array;
  /** J, D×D row-major: ∂x_i/∂ξ_j. */
  readonly jacobian: Float64Array;
  /** J⁻¹, D×D row-major: ∂ξ_i/∂x_j. */
  readonly inverse: Float64Array;
  /** det J (sign = orientation of the vertex order). */
  det: number;
  /** |det J| = D!·volume. */
  absDet: number;
  /** Scratch for the inversion (2·D·D). */
  readonly work: Float64Array;
}

/** Allocates an ElementAffine workspace for D = dimPlusOne. */
export function createElementAffine(dimPlusOne: number): ElementAffine {
  const D = dimPlusOne;
  if (!Number.isInteger(D) || D < 1 || D > 4) throw new RangeError(`createElementAffine: dimPlusOne must be 1..4, got ${D}`);
  return {
    dimPlusOne: D, origin: new Float64Array(D), jacobian: new Float64Array(D * D), inverse: new Float64Array(D * D),
    det: 0, absDet: 0, work: new Float64Array(2 * D * D),
  };
}

/** Fills `out` with the affine map of element e (allocation-free) and returns it. */
export function elementAffine(mesh: SpaceTimeMesh, e: number, out: ElementAffine): ElementAffine {
  const D = mesh.dim + 1;
  if (out.dimPlusOne !== D) throw new RangeError(`elementAffine: workspace is for D = ${out.dimPlusOne}, mesh has D = ${D}`);
  if (!(e >= 0 && e < mesh.nElements)) throw new RangeError(`elementAffine: element ${e} out of range 0..${mesh.nElements - 1}`);
  const nv = D + 1;
  const { coords, elements } = mesh;
  const v0 = elements[e * nv];
  for (let i = 0; i < D; i++) out.origin[i] = coords[v0 * D + i];
  for (let j = 0; j < D; j++) {
    const vj = elements[e * nv + j + 1];
    for (let i = 0; i < D; i++) out.jacobian[i * D + j] = coords[vj * D + i] - out.origin[i];
  }
  invertSmall(out.jacobian, out.inverse, out.work, D, out);
  return out;
}

/**
 * inv = m⁻¹ by Gauss–Jordan with partial pivoting; sets target.det/absDet. A singular matrix gives
 * det 0 and a NaN-filled inverse (a degenerate element is a bug upstream, not a user error).
 */
export function invertSmall(m: Float64Array, inv: Float64Array, work: Float64Array, n: number, target: { det: number; absDet: number }): void {
  const w = 2 * n; // augmented [m | I] in work, n rows of width 2n
  for (let r = 0; r < n; r++) {
    for (let c = 0; c < n; c++) { work[r * w + c] = m[r * n + c]; work[r * w + n + c] = r === c ? 1 : 0; }
  }
  let det = 1;
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(work[r * w + c]) > Math.abs(work[p * w + c])) p = r;
    const piv = work[p * w + c];
    if (piv === 0) {
      target.det = 0; target.absDet = 0; inv.fill(NaN);
      return;
    }
    if (p !== c) {
      for (let k = 0; k < w; k++) { const t = work[c * w + k]; work[c * w + k] = work[p * w + k]; work[p * w + k] = t; }
      det = -det;
    }
    det *= piv;
    for (let k = 0; k < w; k++) work[c * w + k] /= piv;
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = work[r * w + c];
      if (f !== 0) for (let k = 0; k < w; k++) work[r * w + k] -= f * work[c * w + k];
    }
  }
  for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) inv[r * n + c] = work[r * w + n + c];
  target.det = det;
  target.absDet = Math.abs(det);
}

/** Volume of element e: |det J| / D!. */
export function elementVolume(mesh: SpaceTimeMesh, e: number, work?: ElementAffine): number {
  const a = elementAffine(mesh, e, work ?? createElementAffine(mesh.dim + 1));
  let fact = 1;
  for (let k = 2; k <= a.dimPlusOne; k++) fact *= k;
  return a.absDet / fact;
}

const faceVertexCache: Int32Array[][] = [];

/**
 * Local vertex indices of local face `localFace` of a D-simplex (D = dimPlusOne): every local vertex
 * except localFace, ascending (D entries). Shared, read-only.
 */
export function faceLocalVertices(dimPlusOne: number, localFace: number): Int32Array {
  const D = dimPlusOne;
  if (!Number.isInteger(D) || D < 1 || D > 4) throw new RangeError(`faceLocalVertices: dimPlusOne must be 1..4, got ${D}`);
  if (!Number.isInteger(localFace) || localFace < 0 || localFace > D) throw new RangeError(`faceLocalVertices: local face must be 0..${D}, got ${localFace}`);
  let perD = faceVertexCache[D];
  if (perD === undefined) {
    perD = [];
    for (let f = 0; f <= D; f++) {
      const a = new Int32Array(D);
      let n = 0;
      for (let j = 0; j <= D; j++) if (j !== f) a[n++] = j;
      perD.push(a);
    }
    faceVertexCache[D] = perD;
  }
  return perD[localFace];
}

/**
 * Maps a point η of the unit (D−1)-simplex (the face's own reference simplex, whose vertex i is
 * faceLocalVertices(D, localFace)[i]) to the element reference coordinates ξ (D entries):
 * ξ = r(a_0) + Σ_i η_i (r(a_{i+1}) − r(a_0)), r(0) = 0, r(j) = e_j.
 */
export function faceToElementReference(dimPlusOne: number, localFace: number, eta: Float64Array, etaOffset: number, out: Float64Array): void {
  const D = dimPlusOne;
  const a = faceLocalVertices(D, localFace);
  for (let i = 0; i < D; i++) out[i] = 0;
  let w0 = 1;
  for (let i = 0; i < D - 1; i++) {
    const t = eta[etaOffset + i];
    w0 -= t;
    if (a[i + 1] > 0) out[a[i + 1] - 1] += t;
  }
  if (a[0] > 0) out[a[0] - 1] += w0;
}

/** x = origin + J ξ (D entries each). */
export function referenceToPhysical(aff: ElementAffine, xi: Float64Array, xiOffset: number, out: Float64Array): void {
  const D = aff.dimPlusOne;
  for (let i = 0; i < D; i++) {
    let s = aff.origin[i];
    for (let j = 0; j < D; j++) s += aff.jacobian[i * D + j] * xi[xiOffset + j];
    out[i] = s;
  }
}

/** ξ = J⁻¹ (x − origin) (D entries each). */
export function physicalToReference(aff: ElementAffine, x: Float64Array, xOffset: number, out: Float64Array): void {
  const D = aff.dimPlusOne;
  for (let i = 0; i < D; i++) {
    let s = 0;
    for (let j = 0; j < D; j++) s += aff.inverse[i * D + j] * (x[xOffset + j] - aff.origin[j]);
    out[i] = s;
  }
}

/**
 * Unit outward space-time normal (n_x…, n_t) of local face `localFace` of the element whose affine
 * map is `aff`, written to out[0..D−1]; returns the face measure ((D−1)-dimensional).
 * n = −∇λ_f / |∇λ_f| (λ_f grows towards the opposite vertex f), |face| = |det J|·|∇λ_f| / (D−1)!
 * (volume = |face|·height/D with height = 1/|∇λ_f|).
 */
export function faceOutwardNormalFromAffine(aff: ElementAffine, localFace: number, out: Float64Array): number {
  const D = aff.dimPlusOne;
  let norm2 = 0;
  for (let i = 0; i < D; i++) {
    let g = 0;
    if (localFace === 0) {
      for (let j = 0; j < D; j++) g -= aff.inverse[j * D + i];
    } else {
      g = aff.inverse[(localFace - 1) * D + i];
    }
    out[i] = -g;
    norm2 += g * g;
  }
  const norm = Math.sqrt(norm2);
  for (let i = 0; i < D; i++) out[i] /= norm;
  let fact = 1;
  for (let k = 2; k < D; k++) fact *= k;
  return (aff.absDet * norm) / fact;
}

const scratch: (ElementAffine | undefined)[] = [];

/** As faceOutwardNormalFromAffine, computing the affine map of element e (module scratch, not re-entrant across threads). */
export function faceOutwardNormal(mesh: SpaceTimeMesh, e: number, localFace: number, out: Float64Array): number {
  const D = mesh.dim + 1;
  if (!Number.isInteger(localFace) || localFace < 0 || localFace > D) throw new RangeError(`faceOutwardNormal: local face must be 0..${D}, got ${localFace}`);
  let aff = scratch[D];
  if (aff === undefined) { aff = createElementAffine(D); scratch[D] = aff; }
  return faceOutwardNormalFromAffine(elementAffine(mesh, e, aff), localFace, out);
}

/**
 * For a shared face f (faceRight[f] ≥ 0): out[i] = local vertex index, in the RIGHT element, of the
 * vertex that is vertex i of the left element's face (faceLocalVertices(D, faceLeftLocal[f])[i]).
 * Matched by vertex id, or for periodic faces by coordinates after adding faceShift (nearest vertex;
 * face vertices are a cell size apart, so round-off cannot confuse them).
 */
export function faceVertexMatch(mesh: SpaceTimeMesh, f: number, out: Int32Array): void {
  const D = mesh.dim + 1;
  const nv = D + 1;
  const eR = mesh.faceRight[f];
  if (!(f >= 0 && f < mesh.nFaces)) throw new RangeError(`faceVertexMatch: face ${f} out of range 0..${mesh.nFaces - 1}`);
  if (eR < 0) throw new RangeError(`faceVertexMatch: face ${f} is a boundary face`);
  const eL = mesh.faceLeft[f];
  const lv = faceLocalVertices(D, mesh.faceLeftLocal[f]);
  const rv = faceLocalVertices(D, mesh.faceRightLocal[f]);
  const { coords, elements, faceShift } = mesh;
  for (let i = 0; i < D; i++) {
    const vl = elements[eL * nv + lv[i]];
    let best = -1;
    let bestDist = Infinity;
    for (let j = 0; j < D; j++) {
      const vr = elements[eR * nv + rv[j]];
      if (vr === vl) { best = rv[j]; break; }
      let dist = 0;
      for (let k = 0; k < D; k++) {
        const diff = coords[vl * D + k] + faceShift[f * D + k] - coords[vr * D + k];
        dist += diff * diff;
      }
      if (dist < bestDist) { bestDist = dist; best = rv[j]; }
    }
    out[i] = best;
  }
}

const matchScratch = new Int32Array(4);

/**
 * Maps nPoints points η of the face reference simplex (unit (D−1)-simplex, D−1 coordinates each,
 * whose vertex i is vertex i of faceLocalVertices(D, faceLeftLocal[f])) to reference coordinates of
 * the left element (outLeft) and, for a shared face, of the right element (outRight); D per point.
 * The same η is the same space-time point on both sides (up to faceShift on periodic faces).
 * Physical face integrals: ∫_F g = measure·(D−1)!·Σ_q w_q g(x_q) with a rule on the unit (D−1)-simplex.
 */
export function facePointsToElements(
  mesh: SpaceTimeMesh, f: number, eta: Float64Array, nPoints: number,
  outLeft: Float64Array, outRight: Float64Array | null,
): void {
  const D = mesh.dim + 1;
  const lv = faceLocalVertices(D, mesh.faceLeftLocal[f]);
  const shared = mesh.faceRight[f] >= 0 && outRight !== null;
  if (shared) faceVertexMatch(mesh, f, matchScratch);
  for (let q = 0; q < nPoints; q++) {
    const o = q * D;
    for (let i = 0; i < D; i++) { outLeft[o + i] = 0; if (shared) outRight![o + i] = 0; }
    for (let i = 0; i < D; i++) {
      // barycentric weight of face vertex i: b_0 = 1 − Ση, b_i = η_{i−1}
      let b: number;
      if (i === 0) {
        b = 1;
        for (let j = 0; j < D - 1; j++) b -= eta[q * (D - 1) + j];
      } else {
        b = eta[q * (D - 1) + i - 1];
      }
      if (lv[i] > 0) outLeft[o + lv[i] - 1] += b;
      if (shared && matchScratch[i] > 0) outRight![o + matchScratch[i] - 1] += b;
    }
  }
}
