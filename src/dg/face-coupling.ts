import { FaceKind, type SpaceTimeMesh } from '../mesh/space-time.js';
import { elementAffine, faceLocalVertices, faceOutwardNormalFromAffine, type ElementAffine } from '../mesh/geometry.js';

/** Slab interfaces and the t = 0, T faces: faces whose space-time normal is purely in time. */
export function isTimeFace(kind: number): boolean {
  return kind === FaceKind.slabInterface || kind === FaceKind.initial || kind === FaceKind.final;
}

/**
 * Face f seen from its left element: fills `aff` with that element's affine map and `normal` with
 * the unit outward space-time normal, snapped to (0, …, 0, ±1) on time faces (there n_x is zero
 * in exact arithmetic); returns the face measure.
 */
export function leftFaceFrame(mesh: SpaceTimeMesh, f: number, aff: ElementAffine, normal: Float64Array): number {
  elementAffine(mesh, mesh.faceLeft[f], aff);
  const area = faceOutwardNormalFromAffine(aff, mesh.faceLeftLocal[f], normal);
  if (isTimeFace(mesh.faceKind[f])) {
    const d = mesh.dim;
    for (let k = 0; k < d; k++) normal[k] = 0;
    normal[d] = normal[d] > 0 ? 1 : -1;
  }
  return area;
}

/**
 * Faces carry a canonical vertex order: the left element's face vertices as faceLocalVertices lists
 * them. For the right element we need its local vertex index of each of those vertices, so both
 * elements evaluate their bases at the same physical quadrature points. Faces inside the mesh share
 * vertex ids; across periodic sides the vertices are duplicates, matched by coordinates after the
 * face's shift.
 */
export function rightFaceOrder(mesh: SpaceTimeMesh, face: number, out: Int32Array): void {
  const D = mesh.dim + 1;
  const nv = D + 1;
  const { elements, coords } = mesh;
  const eL = mesh.faceLeft[face];
  const eR = mesh.faceRight[face];
  const leftVerts = faceLocalVertices(D, mesh.faceLeftLocal[face]);
  const fR = mesh.faceRightLocal[face];
  const periodic = mesh.faceKind[face] === FaceKind.periodic;
  for (let i = 0; i < D; i++) {
    const gL = elements[eL * nv + leftVerts[i]];
    let found = -1;
    for (let j = 0; j <= D; j++) {
      if (j === fR) continue;
      const gR = elements[eR * nv + j];
      if (!periodic) {
        if (gR === gL) { found = j; break; }
      } else {
        let dist = 0;
        let scale = 0;
        for (let k = 0; k < D; k++) {
          const target = coords[gL * D + k] + mesh.faceShift[face * D + k];
          dist = Math.max(dist, Math.abs(coords[gR * D + k] - target));
          scale = Math.max(scale, Math.abs(target));
        }
        if (dist <= 1e-9 * (1 + scale)) { found = j; break; }
      }
    }
    if (found < 0) throw new Error(`face ${face}: vertex ${i} of the left element has no match on the right element (mesh not conforming)`);
    out[i] = found;
  }
}
