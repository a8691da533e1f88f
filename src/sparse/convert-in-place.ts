/**
 * CSR ↔ BSR conversion that reuses the value array, for matrices whose stored blocks are all full
 * (fill ratio 1: every entry of every stored bs×bs block is in the CSR pattern, as in every
 * generated case). Then block row I occupies the same value range [rowPtr[I·bs], rowPtr[(I+1)·bs])
 * in both formats, only ordered differently (CSR: row by row across the blocks; BSR: block by
 * block, each row-major), so each block row is rearranged through a scratch buffer the size of the
 * longest block row. The matrix is never held twice: the one copy of the values changes order and
 * only the index arrays are rebuilt. The input object is detached afterwards (sizes 0, empty arrays)
 * so that a stale reference fails its length checks instead of reading reordered values.
 */
import type { Bsr, Csr } from './types.js';

type Mutable<T> = { -readonly [K in keyof T]: T[K] };

/** True when every stored block of the bs-blocking of a is full (no CSR entry missing from a block). */
export function blocksAreFull(a: Csr, bs: number, nBlocks: number): boolean {
  return a.rowPtr[a.nRows] === nBlocks * bs * bs;
}

/**
 * CSR → BSR reusing `a.values` (requires blocksAreFull). Every row of block row I then has the
 * same sorted columns: nb·bs entries, block k of the row at offset k·bs.
 */
export function csrToBsrInPlace(a: Csr, bs: number): Bsr {
  const { nRows, nCols, rowPtr, colInd, values } = a;
  const nb = nRows / bs;
  const bb = bs * bs;
  const bRowPtr = new Int32Array(nb + 1);
  for (let I = 0; I < nb; I++) {
    const len = rowPtr[I * bs + 1] - rowPtr[I * bs];
    if (len % bs !== 0) throw new RangeError(`csrToBsrInPlace: row ${I * bs} has ${len} entries, not whole blocks of ${bs}`);
    bRowPtr[I + 1] = bRowPtr[I] + len / bs;
  }
  if (bRowPtr[nb] * bb !== values.length) throw new RangeError('csrToBsrInPlace: the stored blocks are not all full');
  const bColInd = new Int32Array(bRowPtr[nb]);
  let maxSeg = 0;
  for (let I = 0; I < nb; I++) maxSeg = Math.max(maxSeg, (bRowPtr[I + 1] - bRowPtr[I]) * bb);
  const scratch = new Float64Array(maxSeg);
  for (let I = 0; I < nb; I++) {
    const k0 = bRowPtr[I], nBlk = bRowPtr[I + 1] - k0;
    const base = rowPtr[I * bs];
    const rowLen = nBlk * bs;
    for (let k = 0; k < nBlk; k++) bColInd[k0 + k] = (colInd[base + k * bs] / bs) | 0;
    const seg = nBlk * bb;
    scratch.set(values.subarray(base, base + seg));
    for (let r = 0; r < bs; r++) {
      const src = r * rowLen;
      for (let k = 0; k < nBlk; k++) {
        const s = src + k * bs, d = base + k * bb + r * bs;
        for (let c = 0; c < bs; c++) values[d + c] = scratch[s + c];
      }
    }
  }
  const out: Bsr = { nBlockRows: nb, nBlockCols: nCols / bs, bs, rowPtr: bRowPtr, colInd: bColInd, values };
  detachCsr(a);
  return out;
}

/** BSR → CSR reusing `a.values` (the inverse of csrToBsrInPlace; every BSR block is full by definition). */
export function bsrToCsrInPlace(a: Bsr): Csr {
  const { nBlockRows: nb, nBlockCols, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const nRows = nb * bs;
  const cRowPtr = new Int32Array(nRows + 1);
  const cColInd = new Int32Array(values.length);
  let maxSeg = 0;
  for (let I = 0; I < nb; I++) maxSeg = Math.max(maxSeg, (rowPtr[I + 1] - rowPtr[I]) * bb);
  const scratch = new Float64Array(maxSeg);
  for (let I = 0; I < nb; I++) {
    const k0 = rowPtr[I], nBlk = rowPtr[I + 1] - k0;
    const base = k0 * bb;
    const rowLen = nBlk * bs;
    const seg = nBlk * bb;
    scratch.set(values.subarray(base, base + seg));
    for (let r = 0; r < bs; r++) {
      const row = I * bs + r;
      const d0 = base + r * rowLen;
      cRowPtr[row + 1] = d0 + rowLen;
      for (let k = 0; k < nBlk; k++) {
        const s = k * bb + r * bs, d = d0 + k * bs, c0 = colInd[k0 + k] * bs;
        for (let c = 0; c < bs; c++) { values[d + c] = scratch[s + c]; cColInd[d + c] = c0 + c; }
      }
    }
  }
  const out: Csr = { nRows, nCols: nBlockCols * bs, rowPtr: cRowPtr, colInd: cColInd, values };
  detachBsr(a);
  return out;
}

/** The same matrix seen as BSR with bs = 1, sharing every array (no copy). */
export function csrAsPointBsr(a: Csr): Bsr {
  return { nBlockRows: a.nRows, nBlockCols: a.nCols, bs: 1, rowPtr: a.rowPtr, colInd: a.colInd, values: a.values };
}

/** The same matrix seen as CSR, when bs = 1, sharing every array. */
export function pointBsrAsCsr(a: Bsr): Csr {
  return { nRows: a.nBlockRows, nCols: a.nBlockCols, rowPtr: a.rowPtr, colInd: a.colInd, values: a.values };
}

function detachCsr(a: Csr): void {
  Object.assign(a as Mutable<Csr>, { nRows: 0, nCols: 0, rowPtr: new Int32Array(1), colInd: new Int32Array(0), values: new Float64Array(0) });
}

function detachBsr(a: Bsr): void {
  Object.assign(a as Mutable<Bsr>, { nBlockRows: 0, nBlockCols: 0, rowPtr: new Int32Array(1), colInd: new Int32Array(0), values: new Float64Array(0) });
}
