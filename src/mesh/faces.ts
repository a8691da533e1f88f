/**
 * Face list of a lattice-based simplex mesh. Every element has D+1 local faces (local face f is the
 * one opposite local vertex f). Faces are matched by hashing their sorted vertex ids in an
 * open-addressing table (linear probing; O(number of faces), no per-face objects). Unmatched faces lie
 * on the boundary of the lattice and are classified by the lattice axis on which all their vertices
 * share the first or last index; periodic sides are then paired by mapping the high-side vertex ids
 * onto their low-side copies.
 *
 * Emission order is deterministic: faces appear in the order of their first half-face (element, then
 * local face). Left = lower element index for interior and slab-interface faces (so the left element
 * of a slab interface is the earlier slab), the high-side element for periodic faces.
 */
import { FaceKind } from './face-kind.js';

export interface FaceInput {
  D: number;
  nVertices: number;
  elements: Int32Array;
  nElements: number;
  /** Lattice points per axis (space axes, then time). */
  nPts: Int32Array;
  stride: Int32Array;
  periodic: boolean[];
  extent: number[];
  slabOffsets: Int32Array;
}

export interface FaceArrays {
  nFaces: number;
  faceLeft: Int32Array;
  faceLeftLocal: Int32Array;
  faceRight: Int32Array;
  faceRightLocal: Int32Array;
  faceShift: Float64Array;
  faceKind: Uint8Array;
  faceSide: Int8Array;
}

export function buildFaces(inp: FaceInput): FaceArrays {
  const { D, elements, nElements, nPts, stride, periodic, extent, slabOffsets } = inp;
  const d = D - 1;
  const nv = D + 1;
  const nHalf = nElements * nv;
  let cap = 16;
  while (cap < 2 * nHalf) cap *= 2;
  const mask = cap - 1;
  const table = new Int32Array(cap).fill(-1);
  const tableHash = new Int32Array(cap); // full 32-bit hash of the stored key: most probes end without rebuilding a key
  const mate = new Int32Array(nHalf).fill(-1);
  const isPeriodic = new Uint8Array(nHalf);
  const keyA = new Int32Array(D);
  const keyB = new Int32Array(D);

  /** Sorted vertex ids of half-face h into out (insertion sort, D ≤ 4). */
  const faceKey = (h: number, out: Int32Array): void => {
    const e = (h / nv) | 0;
    const f = h - e * nv;
    let n = 0;
    for (let j = 0; j < nv; j++) {
      if (j === f) continue;
      const v = elements[e * nv + j];
      let i = n++;
      while (i > 0 && out[i - 1] > v) { out[i] = out[i - 1]; i--; }
      out[i] = v;
    }
  };
  const hashKey = (key: Int32Array): number => {
    let hsh = 0x811c9dc5;
    for (let i = 0; i < D; i++) {
      hsh = Math.imul(hsh ^ key[i], 0x01000193);
      hsh ^= hsh >>> 15;
    }
    hsh = Math.imul(hsh, 0x85ebca6b);
    hsh ^= hsh >>> 13;
    return hsh | 0;
  };
  const sameKey = (a: Int32Array, b: Int32Array): boolean => {
    for (let i = 0; i < D; i++) if (a[i] !== b[i]) return false;
    return true;
  };
  /** Half-face in the table whose key equals `key`, or −1. */
  const lookup = (key: Int32Array): number => {
    const hk = hashKey(key);
    for (let slot = hk & mask; ; slot = (slot + 1) & mask) {
      const g = table[slot];
      if (g < 0) return -1;
      if (tableHash[slot] !== hk) continue;
      faceKey(g, keyB);
      if (sameKey(key, keyB)) return g;
    }
  };

  // Pass 1: match half-faces with identical vertex sets.
  for (let h = 0; h < nHalf; h++) {
    faceKey(h, keyA);
    const hk = hashKey(keyA);
    let slot = hk & mask;
    for (;;) {
      const g = table[slot];
      if (g < 0) { table[slot] = h; tableHash[slot] = hk; break; }
      if (tableHash[slot] === hk) faceKey(g, keyB);
      if (tableHash[slot] === hk && sameKey(keyA, keyB)) {
        if (mate[g] >= 0) throw new Error(`buildFaces: face of half-face ${h} is shared by more than two elements`);
        mate[g] = h;
        mate[h] = g;
        break;
      }
      slot = (slot + 1) & mask;
    }
  }

  // Boundary classification of unmatched half-faces: axis and side where all vertices share the index.
  const boundaryAxis = new Int8Array(nHalf).fill(-1);
  const boundaryHigh = new Uint8Array(nHalf);
  for (let h = 0; h < nHalf; h++) {
    if (mate[h] >= 0) continue;
    faceKey(h, keyA);
    for (let a = 0; a < D; a++) {
      const i0 = Math.floor(keyA[0] / stride[a]) % nPts[a];
      if (i0 !== 0 && i0 !== nPts[a] - 1) continue;
      let same = true;
      for (let i = 1; i < D && same; i++) same = Math.floor(keyA[i] / stride[a]) % nPts[a] === i0;
      if (same) {
        boundaryAxis[h] = a;
        boundaryHigh[h] = i0 === 0 ? 0 : 1;
        break;
      }
    }
    if (boundaryAxis[h] < 0) throw new Error(`buildFaces: unmatched face of half-face ${h} is not on the boundary`);
  }

  // Pass 2: pair periodic sides: high-side vertex ids minus (nPts−1)·stride are the low-side copies.
  for (let h = 0; h < nHalf; h++) {
    const a = boundaryAxis[h];
    if (a < 0 || a >= d || !periodic[a] || boundaryHigh[h] === 0) continue;
    faceKey(h, keyA);
    const delta = (nPts[a] - 1) * stride[a];
    for (let i = 0; i < D; i++) keyA[i] -= delta; // stays sorted
    const g = lookup(keyA);
    if (g < 0 || mate[g] >= 0) throw new Error(`buildFaces: periodic face of half-face ${h} has no image`);
    mate[g] = h;
    mate[h] = g;
    isPeriodic[h] = 1;
    isPeriodic[g] = 1;
  }

  // Pass 3: emit.
  let nFaces = 0;
  for (let h = 0; h < nHalf; h++) {
    if (mate[h] < 0 || (isPeriodic[h] === 1 ? boundaryHigh[h] === 1 : h < mate[h])) nFaces++;
  }
  const faceLeft = new Int32Array(nFaces);
  const faceLeftLocal = new Int32Array(nFaces);
  const faceRight = new Int32Array(nFaces);
  const faceRightLocal = new Int32Array(nFaces);
  const faceShift = new Float64Array(nFaces * D);
  const faceKind = new Uint8Array(nFaces);
  const faceSide = new Int8Array(nFaces).fill(-1);
  const nSlabs = slabOffsets.length - 1;
  const slabOf = (e: number): number => {
    // binary search in slabOffsets
    let lo = 0;
    let hi = nSlabs - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (slabOffsets[mid] <= e) lo = mid; else hi = mid - 1;
    }
    return lo;
  };
  let f = 0;
  for (let h = 0; h < nHalf; h++) {
    const m = mate[h];
    const e = (h / nv) | 0;
    const local = h - e * nv;
    if (m < 0) {
      const a = boundaryAxis[h];
      faceLeft[f] = e; faceLeftLocal[f] = local; faceRight[f] = -1; faceRightLocal[f] = -1;
      if (a === d) {
        faceKind[f] = boundaryHigh[h] === 0 ? FaceKind.initial : FaceKind.final;
      } else {
        faceKind[f] = FaceKind.spaceBoundary;
        faceSide[f] = 2 * a + boundaryHigh[h];
      }
      f++;
    } else if (isPeriodic[h] === 1) {
      if (boundaryHigh[h] !== 1) continue;
      const em = (m / nv) | 0;
      faceLeft[f] = e; faceLeftLocal[f] = local; faceRight[f] = em; faceRightLocal[f] = m - em * nv;
      faceKind[f] = FaceKind.periodic;
      faceShift[f * D + boundaryAxis[h]] = -extent[boundaryAxis[h]];
      f++;
    } else if (h < m) {
      const em = (m / nv) | 0;
      faceLeft[f] = e; faceLeftLocal[f] = local; faceRight[f] = em; faceRightLocal[f] = m - em * nv;
      faceKind[f] = slabOf(e) === slabOf(em) ? FaceKind.interior : FaceKind.slabInterface;
      f++;
    }
  }
  return { nFaces, faceLeft, faceLeftLocal, faceRight, faceRightLocal, faceShift, faceKind, faceSide };
}
