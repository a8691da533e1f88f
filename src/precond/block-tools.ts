/**
 * Block-structure helpers shared by the preconditioners: unchecked gather/scatter of vector
 * blocks for apply(), and the permutation of a requested block ordering for setup().
 */
import type { Bsr } from '../sparse/types.js';
import type { OrderingName } from '../solvers/recipe.js';
import { blockOrdering } from '../sparse/orderings.js';
import { diagonalBlockIndex } from '../sparse/blocks.js';
import { slabOffsetsProblem } from '../sparse/structure.js';

/** Inverse of a permutation: inv[perm[i]] = i. */
export function invertPermutation(perm: Int32Array): Int32Array {
  const inv = new Int32Array(perm.length);
  for (let i = 0; i < perm.length; i++) inv[perm[i]] = i;
  return inv;
}

/** out[i-th block] = x[perm[i]-th block] (gather into the new order). */
export function gatherBlocks(x: Float64Array, perm: Int32Array, bs: number, out: Float64Array): void {
  const n = perm.length;
  if (bs === 1) { for (let i = 0; i < n; i++) out[i] = x[perm[i]]; return; }
  for (let i = 0; i < n; i++) {
    const s = perm[i] * bs, d = i * bs;
    for (let j = 0; j < bs; j++) out[d + j] = x[s + j];
  }
}

/** out[perm[i]-th block] = x[i-th block] (scatter back to the old order). */
export function scatterBlocks(x: Float64Array, perm: Int32Array, bs: number, out: Float64Array): void {
  const n = perm.length;
  if (bs === 1) { for (let i = 0; i < n; i++) out[perm[i]] = x[i]; return; }
  for (let i = 0; i < n; i++) {
    const s = i * bs, d = perm[i] * bs;
    for (let j = 0; j < bs; j++) out[d + j] = x[s + j];
  }
}

/** Index k of block (I, I) in colInd, −1 when absent. */
export const diagonalIndex = diagonalBlockIndex;

/** Index of block (i, j), or −1 (binary search in the sorted row). */
export function findBlock(rowPtr: Int32Array, colInd: Int32Array, i: number, j: number): number {
  let lo = rowPtr[i], hi = rowPtr[i + 1] - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const c = colInd[mid];
    if (c === j) return mid;
    if (c < j) lo = mid + 1; else hi = mid - 1;
  }
  return -1;
}

/** Slab offsets usable for this matrix (src/sparse/structure.ts slabOffsetsProblem finds none). */
export function validSlabOffsets(offsets: Int32Array | undefined, nBlockRows: number): offsets is Int32Array {
  return offsets !== undefined && slabOffsetsProblem(offsets, nBlockRows) === undefined;
}

/**
 * The block permutation of the requested ordering (perm[new] = old), or null for the natural order
 * and for an ordering that leaves every block row in place, so apply() can skip the gather/scatter.
 */
export function orderingPermutation(
  a: Bsr, ordering: OrderingName, slabOffsets: Int32Array | undefined,
): Int32Array | null {
  if (ordering === 'natural') return null;
  const slabs = validSlabOffsets(slabOffsets, a.nBlockRows) ? slabOffsets : undefined;
  const perm = blockOrdering(a, ordering, { slabOffsets: slabs });
  for (let i = 0; i < perm.length; i++) if (perm[i] !== i) return perm;
  return null;
}
