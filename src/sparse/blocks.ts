import type { Bsr } from './types.js';

/**
 * Index k (into colInd, and values at k·bs²) of the diagonal block (I, I) of each block row,
 * or −1 when that block is not stored. Binary search: block columns are sorted.
 */
export function diagonalBlockIndex(a: Bsr): Int32Array {
  const { nBlockRows, rowPtr, colInd } = a;
  const out = new Int32Array(nBlockRows).fill(-1);
  for (let I = 0; I < nBlockRows; I++) {
    let lo = rowPtr[I], hi = rowPtr[I + 1] - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      const c = colInd[mid];
      if (c === I) { out[I] = mid; break; }
      if (c < I) lo = mid + 1; else hi = mid - 1;
    }
  }
  return out;
}

/**
 * Diagonal blocks as nBlockRows·bs² row-major values (block I at offset I·bs²). A missing
 * diagonal block gives zeros: callers that invert these see the singular block and must report it.
 */
export function extractDiagonalBlocks(a: Bsr): Float64Array {
  const { nBlockRows, bs, values } = a;
  const bb = bs * bs;
  const index = diagonalBlockIndex(a);
  const out = new Float64Array(nBlockRows * bb);
  for (let I = 0; I < nBlockRows; I++) {
    const k = index[I];
    if (k >= 0) out.set(values.subarray(k * bb, (k + 1) * bb), I * bb);
  }
  return out;
}
