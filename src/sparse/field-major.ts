/**
 * Field-major numbering: many codes number all unknowns of equation 1, then all of equation 2, …
 * (index f·m + e·nb + a for field f, element e, mode a, with m = n / K unknowns per field and
 * nb = bs / K modes per element), where block methods need element blocks (index
 * e·bs + f·nb + a: the block of element e holds its K fields, equation-major inside the block).
 * Both are the same matrix up to a symmetric permutation; this file detects the first from the
 * pattern when the block size is known and gives the permutation to the second.
 */
import type { Csr } from './types.js';

/**
 * Scalar permutation new → old that interleaves a field-major numbering into element blocks of
 * size bs holding nFields fields each. Requires bs % nFields === 0 and n % bs === 0.
 */
export function fieldMajorToBlocks(n: number, bs: number, nFields: number): Int32Array {
  const nb = bs / nFields;
  const perField = n / nFields;
  const nElements = n / bs;
  const perm = new Int32Array(n);
  for (let e = 0; e < nElements; e++) {
    for (let f = 0; f < nFields; f++) {
      for (let a = 0; a < nb; a++) perm[e * bs + f * nb + a] = f * perField + e * nb + a;
    }
  }
  return perm;
}

/**
 * Stored bs×bs blocks of the matrix whose scalar row/column i sits at position oldToNew[i]
 * (identity when omitted), counted without building the permuted matrix: O(nnz) with one
 * marker per block column.
 */
export function blockCountUnder(a: Csr, bs: number, oldToNew?: Int32Array): number {
  const nb = a.nRows / bs;
  // rows grouped by their new block row
  const rowsOfBlock = new Int32Array(a.nRows);
  const start = new Int32Array(nb + 1);
  for (let i = 0; i < a.nRows; i++) start[Math.floor((oldToNew ? oldToNew[i]! : i) / bs) + 1]++;
  for (let I = 0; I < nb; I++) start[I + 1] += start[I]!;
  const fillPos = start.slice(0, nb);
  for (let i = 0; i < a.nRows; i++) {
    const I = Math.floor((oldToNew ? oldToNew[i]! : i) / bs);
    rowsOfBlock[fillPos[I]!++] = i;
  }
  const mark = new Int32Array(Math.ceil(a.nCols / bs)).fill(-1);
  let count = 0;
  for (let I = 0; I < nb; I++) {
    for (let p = start[I]!; p < start[I + 1]!; p++) {
      const i = rowsOfBlock[p]!;
      for (let k = a.rowPtr[i]!; k < a.rowPtr[i + 1]!; k++) {
        const c = a.colInd[k]!;
        const J = Math.floor((oldToNew ? oldToNew[c]! : c) / bs);
        if (mark[J] !== I) { mark[J] = I; count++; }
      }
    }
  }
  return count;
}

export interface FieldMajorDetection {
  /** Number of fields K whose interleaving gives the densest blocks. */
  nFields: number;
  /** Stored entries / stored block entries in the given numbering and after interleaving. */
  fillRatioAsGiven: number;
  fillRatioInterleaved: number;
}

/**
 * Detection rule (ours): with the block size known, try every field count K ≥ 2 dividing bs; the
 * numbering is called field-major when the best interleaving fills its blocks at least twice as
 * densely as the given numbering and to at least half (fill ratio ≥ 0.5). A matrix whose blocks
 * are already dense (fill ratio ≥ 0.5 as given) is never called field-major.
 * Undefined when bs < 2, bs does not divide n, or the rule does not fire.
 */
export function detectFieldMajor(a: Csr, bs: number): FieldMajorDetection | undefined {
  const n = a.nRows;
  if (bs < 2 || n !== a.nCols || n % bs !== 0) return undefined;
  const nnz = a.rowPtr[n]!;
  if (nnz === 0) return undefined;
  const given = nnz / (blockCountUnder(a, bs) * bs * bs);
  if (given >= 0.5) return undefined;
  let best: FieldMajorDetection | undefined;
  for (let K = 2; K <= bs; K++) {
    if (bs % K !== 0) continue;
    const perm = fieldMajorToBlocks(n, bs, K);
    const oldToNew = new Int32Array(n);
    for (let i = 0; i < n; i++) oldToNew[perm[i]!] = i;
    const fill = nnz / (blockCountUnder(a, bs, oldToNew) * bs * bs);
    if (best === undefined || fill > best.fillRatioInterleaved) best = { nFields: K, fillRatioAsGiven: given, fillRatioInterleaved: fill };
  }
  if (best === undefined || best.fillRatioInterleaved < 0.5 || best.fillRatioInterleaved < 2 * given) return undefined;
  return best;
}
