import type { SpaceTimeMesh } from './space-time.js';

/** Largest mesh (elements) whose centroids a generated layout records: about 30 bytes each in JSON. */
export const MAX_RECORDED_CENTROIDS = 1_000_000;

/** Significant digits kept per coordinate: ample to order points for bisection, half the JSON text. */
export const CENTROID_DIGITS = 7;

/**
 * Element centroids in block-row order: block row I is element perm[I] (perm maps block row →
 * element, as the element orderings do); dim + 1 numbers per element, space axes then time, each
 * rounded to CENTROID_DIGITS significant digits. The centroid is the mean of the d + 2 vertices
 * (an element never straddles a periodic wrap: its vertices are copies on one side).
 */
export function elementCentroids(mesh: SpaceTimeMesh, perm: Int32Array): number[] {
  const D = mesh.dim + 1, nv = mesh.dim + 2;
  const out = new Array<number>(mesh.nElements * D);
  for (let I = 0; I < mesh.nElements; I++) {
    const e = perm[I];
    for (let k = 0; k < D; k++) {
      let s = 0;
      for (let v = 0; v < nv; v++) s += mesh.coords[mesh.elements[e * nv + v] * D + k];
      out[I * D + k] = Number((s / nv).toPrecision(CENTROID_DIGITS));
    }
  }
  return out;
}
