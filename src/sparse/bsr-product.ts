/**
 * Block sparse matrix–matrix product C = A·B for BSR matrices with the same block size
 * (rectangular allowed: A is m×k blocks, B is k×n blocks), by Gustavson's row-by-row method
 * (Gustavson, ACM TOMS 4(3), 1978): a symbolic pass finds each row's column set with a marker
 * array, a numeric pass accumulates the bs×bs block products into the row's slots. Output columns
 * are sorted and unique in each block row; every block reached by a product is stored, exact
 * zeros included (the pattern is structural, as everywhere in src/sparse).
 *
 * `colMap` (optional, length B.nBlockCols) renumbers B's block columns on the fly: output column
 * colMap[j], or the column dropped when colMap[j] < 0, with `nOutCols` output columns. That is
 * C = A·B·Q for a selection matrix Q without forming B·Q (used for restriction to a column subset).
 */
import type { Bsr } from './types.js';
import { sortInt32Range } from './sort-range.js';

/** C = A·B (optionally with B's columns renumbered/dropped by colMap). Throws RangeError on mismatched shapes. */
export function bsrMultiply(a: Bsr, b: Bsr, colMap?: Int32Array, nOutCols?: number): Bsr {
  if (a.bs !== b.bs) throw new RangeError(`bsrMultiply: block sizes differ (${a.bs} and ${b.bs})`);
  if (a.nBlockCols !== b.nBlockRows) {
    throw new RangeError(`bsrMultiply: inner dimensions differ (${a.nBlockCols} and ${b.nBlockRows} blocks)`);
  }
  if (colMap && colMap.length !== b.nBlockCols) throw new RangeError(`bsrMultiply: colMap has length ${colMap.length}, expected ${b.nBlockCols}`);
  const nOut = colMap ? (nOutCols ?? 0) : b.nBlockCols;
  const bs = a.bs, bb = bs * bs;
  const m = a.nBlockRows;
  const marker = new Int32Array(nOut).fill(-1);
  const rowPtr = new Int32Array(m + 1);
  // symbolic pass: count
  for (let i = 0; i < m; i++) {
    let count = 0;
    for (let p = a.rowPtr[i]; p < a.rowPtr[i + 1]; p++) {
      const k = a.colInd[p];
      for (let q = b.rowPtr[k]; q < b.rowPtr[k + 1]; q++) {
        const j = colMap ? colMap[b.colInd[q]] : b.colInd[q];
        if (j < 0) continue;
        if (marker[j] !== i) { marker[j] = i; count++; }
      }
    }
    rowPtr[i + 1] = rowPtr[i] + count;
  }
  const nnz = rowPtr[m];
  if (nnz * bb > 2 ** 31 - 1) throw new RangeError(`bsrMultiply: the product has ${nnz} blocks of ${bb} entries, beyond Int32 indexing`);
  const colInd = new Int32Array(nnz);
  const values = new Float64Array(nnz * bb);
  marker.fill(-1);
  const slot = new Int32Array(nOut);
  for (let i = 0; i < m; i++) {
    // columns of row i, sorted
    let w = rowPtr[i];
    for (let p = a.rowPtr[i]; p < a.rowPtr[i + 1]; p++) {
      const k = a.colInd[p];
      for (let q = b.rowPtr[k]; q < b.rowPtr[k + 1]; q++) {
        const j = colMap ? colMap[b.colInd[q]] : b.colInd[q];
        if (j < 0) continue;
        if (marker[j] !== i) { marker[j] = i; colInd[w++] = j; }
      }
    }
    sortInt32Range(colInd, rowPtr[i], rowPtr[i + 1]);
    for (let s = rowPtr[i]; s < rowPtr[i + 1]; s++) slot[colInd[s]] = s;
    // numeric pass: C_ij += A_ik B_kj
    for (let p = a.rowPtr[i]; p < a.rowPtr[i + 1]; p++) {
      const k = a.colInd[p];
      const ao = p * bb;
      for (let q = b.rowPtr[k]; q < b.rowPtr[k + 1]; q++) {
        const j = colMap ? colMap[b.colInd[q]] : b.colInd[q];
        if (j < 0) continue;
        blockGemmAdd(values, slot[j] * bb, a.values, ao, b.values, q * bb, bs);
      }
    }
  }
  return { nBlockRows: m, nBlockCols: nOut, bs, rowPtr, colInd, values };
}

/**
 * c[co..] += A·B for row-major bs×bs blocks: i-k-j loop order (contiguous inner loops), four k
 * per pass so each update of c serves four products (the shape of blockGemm in dense.ts).
 */
export function blockGemmAdd(
  c: Float64Array, co: number, a: Float64Array, ao: number, b: Float64Array, bo: number, bs: number,
): void {
  if (bs === 1) { c[co] += a[ao] * b[bo]; return; }
  const k4 = bs & ~3;
  for (let i = 0; i < bs; i++) {
    const ci = co + i * bs;
    const ai = ao + i * bs;
    let k = 0;
    for (; k < k4; k += 4) {
      const a0 = a[ai + k], a1 = a[ai + k + 1], a2 = a[ai + k + 2], a3 = a[ai + k + 3];
      const b0 = bo + k * bs, b1 = b0 + bs, b2 = b1 + bs, b3 = b2 + bs;
      for (let j = 0; j < bs; j++) c[ci + j] += a0 * b[b0 + j] + a1 * b[b1 + j] + a2 * b[b2 + j] + a3 * b[b3 + j];
    }
    for (; k < bs; k++) {
      const aik = a[ai + k];
      const bk = bo + k * bs;
      for (let j = 0; j < bs; j++) c[ci + j] += aik * b[bk + j];
    }
  }
}

/** Bᵀ of a BSR matrix (each block transposed too), columns sorted in each output row. */
export function bsrTranspose(a: Bsr): Bsr {
  const { nBlockRows: m, nBlockCols: n, bs } = a;
  const bb = bs * bs;
  const nnz = a.rowPtr[m];
  const rowPtr = new Int32Array(n + 1);
  for (let p = 0; p < nnz; p++) rowPtr[a.colInd[p] + 1]++;
  for (let j = 0; j < n; j++) rowPtr[j + 1] += rowPtr[j];
  const next = rowPtr.slice(0, n);
  const colInd = new Int32Array(nnz);
  const values = new Float64Array(nnz * bb);
  for (let i = 0; i < m; i++) {
    for (let p = a.rowPtr[i]; p < a.rowPtr[i + 1]; p++) {
      const j = a.colInd[p];
      const d = next[j]++;
      colInd[d] = i;
      const so = p * bb, dO = d * bb;
      for (let r = 0; r < bs; r++) for (let c = 0; c < bs; c++) values[dO + c * bs + r] = a.values[so + r * bs + c];
    }
  }
  return { nBlockRows: n, nBlockCols: m, bs, rowPtr, colInd, values };
}
