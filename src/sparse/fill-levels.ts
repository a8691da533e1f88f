/**
 * Symbolic ILU(k) on a block graph: the level-of-fill rule of Saad, Iterative Methods for Sparse
 * Linear Systems, 2nd ed. 2003, §10.3.3 (Algorithm 10.5, "ILU(p)"): entries of A have level 0;
 * eliminating row I with a pivot row K < I gives position (I, J) the level
 *   lev(I, J) = min(lev(I, J), lev(I, K) + lev(K, J) + 1),
 * and a position is kept when its level is ≤ k. Only pivots K with lev(I, K) ≤ k are used, in
 * ascending order, including fill created earlier in the same row (the IKJ order of the
 * numerical elimination), so the kept pattern is exactly the one the numerical factorization
 * fills. Rows are processed with an ordered linked list (Saad's implementation; common practice).
 */
import type { Bsr } from './types.js';
import { MAX_INT32_INDEX } from './types.js';

export interface FillPattern {
  nBlockRows: number;
  /** Block row pointer and sorted block columns of the kept pattern (A's blocks included). */
  rowPtr: Int32Array;
  colInd: Int32Array;
  /** Level of each kept block (0 for A's own blocks). */
  level: Uint8Array;
  /** Kept blocks per level 0..k. */
  blocksPerLevel: number[];
}

/** Largest fill level accepted (levels are stored in a byte). */
export const MAX_FILL_LEVEL = 64;

/**
 * The level-k block pattern of a square block matrix. `maxBlocks` bounds the kept blocks
 * (checked as the pattern grows, before it outgrows the bound): undefined means the Int32 limit.
 * Returns `{ tooBig: n }` when the pattern would exceed it after n rows.
 */
export function fillPattern(a: Pick<Bsr, 'nBlockRows' | 'rowPtr' | 'colInd'>, k: number, maxBlocks = MAX_INT32_INDEX): FillPattern | { tooBig: number } {
  const nb = a.nBlockRows;
  const rowPtr = new Int32Array(nb + 1);
  let cap = Math.max(16, a.rowPtr[nb]! * 2);
  let colInd = new Int32Array(cap);
  let level = new Uint8Array(cap);
  // ordered linked list of the current row: next[j] (nb = end), lev[j] (255 = absent)
  const next = new Int32Array(nb + 1);
  const lev = new Uint8Array(nb).fill(255);
  // position of U part (first column > I) in each finished row
  const diagPos = new Int32Array(nb);
  const perLevel = new Array<number>(k + 1).fill(0);
  let nnz = 0;
  for (let I = 0; I < nb; I++) {
    // load row I of A (sorted columns) into the list
    let head = nb;
    let tail = -1;
    for (let p = a.rowPtr[I]!; p < a.rowPtr[I + 1]!; p++) {
      const J = a.colInd[p]!;
      lev[J] = 0;
      if (tail < 0) head = J; else next[tail] = J;
      tail = J;
    }
    if (tail >= 0) next[tail] = nb;
    // eliminate with pivot rows K < I in ascending order (the list stays sorted)
    for (let K = head; K < I; K = next[K]!) {
      const lIK = lev[K]!;
      if (lIK <= k) {
        // walk row K's U part (sorted), merging into the list after K
        let at = K;
        for (let q = diagPos[K]!; q < rowPtr[K + 1]!; q++) {
          const J = colInd[q]!;
          const nl = lIK + level[q]! + 1;
          if (nl > k) continue;
          while (next[at]! < J) at = next[at]!;
          if (next[at] === J) {
            if (nl < lev[J]!) lev[J] = nl;
          } else {
            next[J] = next[at]!;
            next[at] = J;
            lev[J] = nl;
          }
          at = J;
        }
      }
    }
    // write out the kept entries of row I
    let count = 0;
    for (let J = head; J < nb; J = next[J]!) if (lev[J]! <= k) count++;
    if (nnz + count > maxBlocks) return { tooBig: I };
    if (nnz + count > cap) {
      cap = Math.min(MAX_INT32_INDEX, Math.max(cap * 2, nnz + count));
      const c2 = new Int32Array(cap); c2.set(colInd.subarray(0, nnz)); colInd = c2;
      const l2 = new Uint8Array(cap); l2.set(level.subarray(0, nnz)); level = l2;
    }
    let d = -1;
    for (let J = head; J < nb; J = next[J]!) {
      const l = lev[J]!;
      lev[J] = 255;
      if (l > k) continue;
      if (d < 0 && J > I) d = nnz;
      colInd[nnz] = J; level[nnz] = l; perLevel[l]!++; nnz++;
    }
    rowPtr[I + 1] = nnz;
    diagPos[I] = d < 0 ? nnz : d;
  }
  return { nBlockRows: nb, rowPtr, colInd: colInd.slice(0, nnz), level: level.slice(0, nnz), blocksPerLevel: perLevel };
}
