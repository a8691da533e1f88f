import { FaceKind, type SpaceTimeMesh } from '../mesh/space-time.js';
import { MAX_INT32_INDEX } from '../sparse/types.js';
import { UserError } from '../util/errors.js';

/**
 * BSR block pattern of a space-time DG operator, built from the face graph before any values
 * exist so the value array is allocated once: block rows in the new element order, a diagonal
 * block per element, both off-diagonal blocks for faces inside a slab (interior and periodic),
 * and only the (later, earlier) block for a slab interface — the upper one would be zero
 * (upwinding in time), and leaving it out keeps the matrix block lower triangular by slabs.
 */
export interface BlockPattern {
  readonly rowPtr: Int32Array;
  readonly colInd: Int32Array;
  /** Block index of (new(e), new(e)) per OLD element index. */
  readonly diagonal: Int32Array;
  /** Per face 4 block indices: (L,L), (L,R), (R,L), (R,R) in new numbering; −1 when absent. */
  readonly faceBlocks: Int32Array;
}

export function buildBlockPattern(mesh: SpaceTimeMesh, inv: Int32Array, bs: number): BlockPattern {
  const n = mesh.nElements;
  const { faceLeft, faceRight, faceKind, nFaces } = mesh;
  const count = new Int32Array(n + 1);
  for (let e = 0; e < n; e++) count[inv[e] + 1] = 1;
  for (let f = 0; f < nFaces; f++) {
    const k = faceKind[f];
    const L = faceLeft[f], R = faceRight[f];
    if (k === FaceKind.interior || k === FaceKind.periodic) {
      if (L === R) continue;
      count[inv[L] + 1]++;
      count[inv[R] + 1]++;
    } else if (k === FaceKind.slabInterface) {
      count[inv[R] + 1]++;
    }
  }
  const rowPtr = new Int32Array(n + 1);
  for (let i = 0; i < n; i++) rowPtr[i + 1] = rowPtr[i] + count[i + 1];
  const upper = rowPtr[n];
  if (upper * bs * bs > MAX_INT32_INDEX * 4) {
    throw new UserError(`generated matrix would hold ${upper} blocks of ${bs}×${bs}: too large; reduce cells, slabs or order`);
  }
  const cols = new Int32Array(upper);
  const fill = rowPtr.slice(0, n);
  for (let e = 0; e < n; e++) cols[fill[inv[e]]++] = inv[e];
  for (let f = 0; f < nFaces; f++) {
    const k = faceKind[f];
    const L = faceLeft[f], R = faceRight[f];
    if (k === FaceKind.interior || k === FaceKind.periodic) {
      if (L === R) continue;
      cols[fill[inv[L]]++] = inv[R];
      cols[fill[inv[R]]++] = inv[L];
    } else if (k === FaceKind.slabInterface) {
      cols[fill[inv[R]]++] = inv[L];
    }
  }
  // Sort each (short) row and drop duplicates (an element pair can share two faces on tiny periodic meshes).
  const outPtr = new Int32Array(n + 1);
  let p = 0;
  for (let i = 0; i < n; i++) {
    const s = rowPtr[i], t = rowPtr[i + 1];
    for (let a = s + 1; a < t; a++) {
      const v = cols[a];
      let b = a - 1;
      while (b >= s && cols[b] > v) { cols[b + 1] = cols[b]; b--; }
      cols[b + 1] = v;
    }
    for (let a = s; a < t; a++) if (a === s || cols[a] !== cols[a - 1]) cols[p++] = cols[a];
    outPtr[i + 1] = p;
  }
  const colInd = p === upper ? cols : cols.slice(0, p);
  const find = (row: number, col: number): number => {
    for (let q = outPtr[row]; q < outPtr[row + 1]; q++) if (colInd[q] === col) return q;
    return -1;
  };
  const diagonal = new Int32Array(n);
  for (let e = 0; e < n; e++) diagonal[e] = find(inv[e], inv[e]);
  const faceBlocks = new Int32Array(4 * nFaces).fill(-1);
  for (let f = 0; f < nFaces; f++) {
    const k = faceKind[f];
    const L = faceLeft[f], R = faceRight[f];
    faceBlocks[4 * f] = diagonal[L];
    if (R < 0) continue;
    faceBlocks[4 * f + 2] = find(inv[R], inv[L]);
    faceBlocks[4 * f + 3] = diagonal[R];
    if (k !== FaceKind.slabInterface) faceBlocks[4 * f + 1] = find(inv[L], inv[R]);
  }
  return { rowPtr: outPtr, colInd, diagonal, faceBlocks };
}
