/**
 * Element quality of a space-time simplex mesh, measured with time as an ordinary coordinate (the
 * Euclidean metric of (x, t), the one the mesh is built in).
 *
 * Aspect ratio of a D-simplex: longest edge / smallest altitude, scaled by √((D+1)/(2D)) so a
 * regular simplex gives 1 (the altitude of a regular D-simplex of unit edge is √((D+1)/(2D))).
 * Longest edge over smallest altitude is the aspect-ratio measure of Shewchuk, "What is a good
 * linear finite element?" (2002), §6 (from memory); the scaling is ours. The smallest altitude is
 * 1 / max_f |∇λ_f| (λ_f the barycentric coordinates, ∇λ_f the rows of J⁻¹ and minus their sum).
 *
 * Jacobian determinant: det J of the affine map from the reference simplex (geometry.ts), times
 * the sign of the element's Kuhn permutation so that every element of an unmoved lattice is
 * positive; it equals D!·volume when the element is not inverted.
 */
import { UserError } from '../util/errors.js';
import { createElementAffine, elementAffine, invertSmall } from './geometry.js';
import { kuhnPermutations, permutationSign } from './kuhn.js';
import type { SpaceTimeMesh } from './space-time.js';

/** What the layout records (field `elementQuality`). */
export interface ElementQuality {
  aspectRatio: { min: number; median: number; max: number };
  minJacobianDeterminant: number;
}

const scratch = { jac: new Float64Array(16), inv: new Float64Array(16), work: new Float64Array(32), res: { det: 0, absDet: 0 } };

/**
 * Aspect ratio (definition above) of the simplex whose D+1 vertices are rows of `verts`
 * (D coordinates each, starting at `offset`); Infinity for a flat simplex.
 */
export function simplexAspectRatio(verts: Float64Array, D: number, offset = 0): number {
  const { jac, inv, work, res } = scratch;
  for (let j = 0; j < D; j++) {
    for (let i = 0; i < D; i++) jac[i * D + j] = verts[offset + (j + 1) * D + i] - verts[offset + i];
  }
  invertSmall(jac, inv, work, D, res);
  if (res.absDet === 0) return Infinity;
  return aspectFromInverse(verts, D, offset, inv);
}

function aspectFromInverse(verts: Float64Array, D: number, offset: number, inv: Float64Array): number {
  let maxGrad2 = 0;
  for (let f = 0; f <= D; f++) {
    let g2 = 0;
    for (let i = 0; i < D; i++) {
      let g = 0;
      if (f === 0) for (let r = 0; r < D; r++) g -= inv[r * D + i];
      else g = inv[(f - 1) * D + i];
      g2 += g * g;
    }
    if (g2 > maxGrad2) maxGrad2 = g2;
  }
  let maxEdge2 = 0;
  for (let a = 0; a <= D; a++) {
    for (let b = a + 1; b <= D; b++) {
      let e2 = 0;
      for (let i = 0; i < D; i++) { const dx = verts[offset + b * D + i] - verts[offset + a * D + i]; e2 += dx * dx; }
      if (e2 > maxEdge2) maxEdge2 = e2;
    }
  }
  return Math.sqrt(maxEdge2 * maxGrad2 * ((D + 1) / (2 * D)));
}

/**
 * Orientation of every element against its Kuhn permutation (elements numbered box by box, then
 * by permutation, as buildSlabMesh does): throws a one-line UserError naming the first inverted or
 * flat element, its slab and its vertex coordinates. `cause` names what moved the vertices, `hint`
 * what to change.
 */
export function checkElementOrientation(
  coords: Float64Array, elements: Int32Array, nElements: number, D: number, slabOffsets: Int32Array, cause: string, hint: string,
): void {
  const nv = D + 1;
  const perms = kuhnPermutations(D);
  const nKuhn = perms.length / D;
  const signs = new Int8Array(nKuhn);
  for (let s = 0; s < nKuhn; s++) signs[s] = permutationSign(perms, s * D, D);
  const m = new Float64Array(D * D);
  for (let e = 0; e < nElements; e++) {
    const v0 = elements[e * nv];
    for (let j = 0; j < D; j++) {
      const vj = elements[e * nv + j + 1];
      for (let i = 0; i < D; i++) m[i * D + j] = coords[vj * D + i] - coords[v0 * D + i];
    }
    const det = determinant(m, D) * signs[e % nKuhn];
    if (!(det > 0)) {
      let slab = 0;
      while (slab + 2 < slabOffsets.length && slabOffsets[slab + 1] <= e) slab++;
      const pts: string[] = [];
      for (let j = 0; j < nv; j++) {
        const v = elements[e * nv + j];
        pts.push(`(${Array.from(coords.subarray(v * D, v * D + D), (x) => Number(x.toPrecision(6))).join(', ')})`);
      }
      throw new UserError(`${cause}: element ${e} (slab ${slab + 1}) would be ${det === 0 ? 'flat' : 'inverted'} (det J ${det.toPrecision(3)}), vertices (x…, t) ${pts.join(' ')}; ${hint}`);
    }
  }
}

/** Aspect ratios (min, median, max) and the smallest orientation-corrected det J of a mesh built by buildSlabMesh. */
export function meshQuality(mesh: SpaceTimeMesh): ElementQuality {
  const D = mesh.dim + 1;
  const nv = D + 1;
  const perms = kuhnPermutations(D);
  const nKuhn = perms.length / D;
  const signs = new Int8Array(nKuhn);
  for (let s = 0; s < nKuhn; s++) signs[s] = permutationSign(perms, s * D, D);
  const aff = createElementAffine(D);
  const verts = new Float64Array(nv * D);
  const ratios = new Float64Array(mesh.nElements);
  let minDet = Infinity;
  for (let e = 0; e < mesh.nElements; e++) {
    elementAffine(mesh, e, aff);
    const det = aff.det * signs[e % nKuhn];
    if (det < minDet) minDet = det;
    for (let j = 0; j < nv; j++) {
      const v = mesh.elements[e * nv + j];
      for (let i = 0; i < D; i++) verts[j * D + i] = mesh.coords[v * D + i];
    }
    ratios[e] = aff.absDet === 0 ? Infinity : aspectFromInverse(verts, D, 0, aff.inverse);
  }
  ratios.sort();
  const n = ratios.length;
  const median = n === 0 ? NaN : n % 2 === 1 ? ratios[(n - 1) / 2] : 0.5 * (ratios[n / 2 - 1] + ratios[n / 2]);
  return { aspectRatio: { min: ratios[0], median, max: ratios[n - 1] }, minJacobianDeterminant: minDet };
}

/** Determinant of a small row-major matrix by Gaussian elimination with partial pivoting; m is overwritten. */
export function determinant(m: Float64Array, n: number): number {
  let det = 1;
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r * n + c]) > Math.abs(m[p * n + c])) p = r;
    if (m[p * n + c] === 0) return 0;
    if (p !== c) {
      for (let k = 0; k < n; k++) { const t = m[c * n + k]; m[c * n + k] = m[p * n + k]; m[p * n + k] = t; }
      det = -det;
    }
    const piv = m[c * n + c];
    det *= piv;
    for (let r = c + 1; r < n; r++) {
      const f = m[r * n + c] / piv;
      if (f !== 0) for (let k = c; k < n; k++) m[r * n + k] -= f * m[c * n + k];
    }
  }
  return det;
}
