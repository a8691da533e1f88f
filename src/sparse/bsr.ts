import type { Bsr, Csr } from './types.js';

/** y = A x for row-major BSR (unchecked generic kernel). */
export function bsrSpmvKernel(
  nBlockRows: number, bs: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, y: Float64Array,
): void {
  const bb = bs * bs;
  for (let I = 0; I < nBlockRows; I++) {
    const yo = I * bs;
    for (let i = 0; i < bs; i++) y[yo + i] = 0;
    const end = rowPtr[I + 1];
    for (let k = rowPtr[I]; k < end; k++) {
      const xo = colInd[k] * bs;
      const vo = k * bb;
      for (let i = 0; i < bs; i++) {
        let s = 0;
        const ro = vo + i * bs;
        for (let j = 0; j < bs; j++) s += values[ro + j] * x[xo + j];
        y[yo + i] += s;
      }
    }
  }
}

/** y = A x with length and aliasing checks. */
export function bsrSpmv(a: Bsr, x: Float64Array, y: Float64Array): void {
  const n = a.nBlockCols * a.bs;
  const m = a.nBlockRows * a.bs;
  if (x.length !== n) throw new RangeError(`bsrSpmv: x has length ${x.length}, expected ${n}`);
  if (y.length !== m) throw new RangeError(`bsrSpmv: y has length ${y.length}, expected ${m}`);
  if (x === y) throw new RangeError('bsrSpmv: x and y must be different arrays');
  bsrSpmvKernel(a.nBlockRows, a.bs, a.rowPtr, a.colInd, a.values, x, y);
}

export function bsrBytes(a: Bsr): number {
  return a.rowPtr.byteLength + a.colInd.byteLength + a.values.byteLength;
}

/**
 * Expand BSR to CSR. Every entry of every stored block becomes a CSR entry, zeros included:
 * the dense blocks are the pattern a DG code would hand to ILU(0).
 */
export function bsrToCsr(a: Bsr): Csr {
  const { nBlockRows, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const nRows = nBlockRows * bs;
  const nBlocks = rowPtr[nBlockRows];
  const outPtr = new Int32Array(nRows + 1);
  const outCol = new Int32Array(nBlocks * bb);
  const outVal = new Float64Array(nBlocks * bb);
  let p = 0;
  for (let I = 0; I < nBlockRows; I++) {
    const start = rowPtr[I], end = rowPtr[I + 1];
    for (let i = 0; i < bs; i++) {
      for (let k = start; k < end; k++) {
        const c0 = colInd[k] * bs;
        const vo = k * bb + i * bs;
        for (let j = 0; j < bs; j++) {
          outCol[p] = c0 + j;
          outVal[p] = values[vo + j];
          p++;
        }
      }
      outPtr[I * bs + i + 1] = p;
    }
  }
  return { nRows, nCols: a.nBlockCols * bs, rowPtr: outPtr, colInd: outCol, values: outVal };
}

/**
 * Group CSR into bs×bs blocks. A block is stored when at least one of its entries is in the
 * CSR pattern (explicit zeros count); entries absent from the pattern become stored zeros.
 * Requires nRows and nCols divisible by bs and sorted column indices.
 */
export function csrToBsr(a: Csr, bs: number): Bsr {
  if (!Number.isInteger(bs) || bs < 1) throw new RangeError(`csrToBsr: block size ${bs} is not a positive integer`);
  if (a.nRows % bs !== 0 || a.nCols % bs !== 0) {
    throw new RangeError(`csrToBsr: size ${a.nRows}×${a.nCols} is not divisible by block size ${bs}`);
  }
  const nBlockRows = a.nRows / bs;
  const nBlockCols = a.nCols / bs;
  const bb = bs * bs;
  const marker = new Int32Array(nBlockCols).fill(-1);
  const rowPtr = new Int32Array(nBlockRows + 1);
  // pass 1: count distinct block columns per block row
  for (let I = 0; I < nBlockRows; I++) {
    let count = 0;
    for (let i = I * bs; i < (I + 1) * bs; i++) {
      for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) {
        const J = (a.colInd[k] / bs) | 0;
        if (marker[J] !== I) { marker[J] = I; count++; }
      }
    }
    rowPtr[I + 1] = rowPtr[I] + count;
  }
  const nBlocks = rowPtr[nBlockRows];
  const colInd = new Int32Array(nBlocks);
  const values = new Float64Array(nBlocks * bb);
  marker.fill(-1);
  const slot = new Int32Array(nBlockCols);
  for (let I = 0; I < nBlockRows; I++) {
    let p = rowPtr[I];
    for (let i = I * bs; i < (I + 1) * bs; i++) {
      for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) {
        const J = (a.colInd[k] / bs) | 0;
        if (marker[J] !== I) { marker[J] = I; colInd[p++] = J; }
      }
    }
    const start = rowPtr[I];
    const seg = colInd.subarray(start, p).sort();
    for (let q = 0; q < seg.length; q++) slot[seg[q]] = start + q;
    for (let i = I * bs; i < (I + 1) * bs; i++) {
      const li = i - I * bs;
      for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) {
        const c = a.colInd[k];
        const J = (c / bs) | 0;
        values[slot[J] * bb + li * bs + (c - J * bs)] = a.values[k];
      }
    }
  }
  return { nBlockRows, nBlockCols, bs, rowPtr, colInd, values };
}
