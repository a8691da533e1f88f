import { FaceKind, type SpaceTimeMesh } from '../mesh/space-time.js';
import { createElementAffine, elementAffine, faceOutwardNormalFromAffine, faceLocalVertices } from '../mesh/geometry.js';
import { mulberry32 } from '../util/random.js';

/** Element order within each time slab (slabs always stay in time order). */
export type ElementOrdering = 'natural' | 'downstream' | 'random';
export const ELEMENT_ORDERINGS: readonly ElementOrdering[] = ['natural', 'downstream', 'random'];

export interface OrderingResult {
  /** new → old element index. */
  readonly perm: Int32Array;
  /** old → new. */
  readonly inv: Int32Array;
  /** Downstream only: how many times a cycle of the upwind graph had to be cut (0 = exact topological order). */
  readonly cyclesCut: number;
}

/**
 * Orders the elements of every slab.
 * - natural: the mesh numbering.
 * - downstream: a topological order of the upwind graph — an edge K → K' when the space-time
 *   transport velocity (v, 1) crosses their shared face from K to K' — so every element comes after
 *   the elements it takes inflow from and upwind DG transport is block lower triangular within the
 *   slab (Reed & Hill 1973; Natvig & Lie, ECMOR XI 2008, for the reordering). Kahn's algorithm;
 *   where the graph has cycles (periodic wrap, rotating flows) the lowest-numbered remaining element
 *   is taken next and the cut is counted.
 * - random: a seeded shuffle (mulberry32), a deliberately bad order for comparisons.
 * `velocity(X, xo, out)` gives the transport velocity (d comps) at a space-time point.
 */
export function orderElements(
  mesh: SpaceTimeMesh, ordering: ElementOrdering, seed: number,
  velocity: (X: Float64Array, xo: number, out: Float64Array) => void,
): OrderingResult {
  const n = mesh.nElements;
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  let cyclesCut = 0;
  if (ordering === 'random') {
    const rand = mulberry32(seed);
    for (let s = 0; s < mesh.nSlabs; s++) {
      const lo = mesh.slabOffsets[s], hi = mesh.slabOffsets[s + 1];
      for (let i = hi - 1; i > lo; i--) {
        const j = lo + Math.floor(rand() * (i - lo + 1));
        const t = perm[i]; perm[i] = perm[j]; perm[j] = t;
      }
    }
  } else if (ordering === 'downstream') {
    cyclesCut = downstream(mesh, velocity, perm);
  }
  const inv = new Int32Array(n);
  for (let i = 0; i < n; i++) inv[perm[i]] = i;
  return { perm, inv, cyclesCut };
}

function downstream(mesh: SpaceTimeMesh, velocity: (X: Float64Array, xo: number, out: Float64Array) => void, perm: Int32Array): number {
  const n = mesh.nElements;
  const d = mesh.dim;
  const D = d + 1;
  const { faceLeft, faceRight, faceKind, nFaces } = mesh;
  // Directed edges from -> to, stored as CSR by source.
  const from = new Int32Array(nFaces);
  const to = new Int32Array(nFaces);
  let nEdges = 0;
  const aff = createElementAffine(D);
  const normal = new Float64Array(D);
  const centroid = new Float64Array(D);
  const v = new Float64Array(d);
  for (let f = 0; f < nFaces; f++) {
    const k = faceKind[f];
    if (k !== FaceKind.interior && k !== FaceKind.periodic) continue;
    const L = faceLeft[f], R = faceRight[f];
    if (L === R) continue;
    elementAffine(mesh, L, aff);
    faceOutwardNormalFromAffine(aff, mesh.faceLeftLocal[f], normal);
    const verts = faceLocalVertices(D, mesh.faceLeftLocal[f]);
    centroid.fill(0);
    for (let i = 0; i < D; i++) {
      const g = mesh.elements[L * (D + 1) + verts[i]];
      for (let c = 0; c < D; c++) centroid[c] += mesh.coords[g * D + c] / D;
    }
    velocity(centroid, 0, v);
    let beta = normal[d];
    let scale = 1;
    for (let c = 0; c < d; c++) { beta += v[c] * normal[c]; scale += Math.abs(v[c]); }
    if (beta > 1e-13 * scale) { from[nEdges] = L; to[nEdges] = R; nEdges++; }
    else if (beta < -1e-13 * scale) { from[nEdges] = R; to[nEdges] = L; nEdges++; }
  }
  const outPtr = new Int32Array(n + 1);
  const indeg = new Int32Array(n);
  for (let e = 0; e < nEdges; e++) { outPtr[from[e] + 1]++; indeg[to[e]]++; }
  for (let i = 0; i < n; i++) outPtr[i + 1] += outPtr[i];
  const adj = new Int32Array(nEdges);
  const pos = outPtr.slice(0, n);
  for (let e = 0; e < nEdges; e++) adj[pos[from[e]]++] = to[e];
  const done = new Uint8Array(n);
  const queue = new Int32Array(n);
  let cuts = 0;
  for (let s = 0; s < mesh.nSlabs; s++) {
    const lo = mesh.slabOffsets[s], hi = mesh.slabOffsets[s + 1];
    let head = 0, tail = 0, out = lo, scan = lo;
    for (let i = lo; i < hi; i++) if (indeg[i] === 0) queue[tail++] = i;
    while (out < hi) {
      if (head === tail) {
        while (done[scan]) scan++;
        queue[tail++] = scan;
        indeg[scan] = 0;
        cuts++;
      }
      const e = queue[head++];
      if (done[e]) continue;
      done[e] = 1;
      perm[out++] = e;
      for (let q = outPtr[e]; q < outPtr[e + 1]; q++) {
        const t = adj[q];
        if (!done[t] && --indeg[t] === 0) queue[tail++] = t;
      }
    }
  }
  return cuts;
}

