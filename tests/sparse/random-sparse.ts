// Seeded random sparse matrices for the sparse-core tests (not a test file itself).
import { Matrix } from 'ml-matrix';
import type { Bsr, Csr } from '../../src/sparse/types.js';
import { mulberry32 } from '../../src/util/random.js';

export const rng = mulberry32;

/**
 * Random BSR with sorted unique block columns, about `perRow` blocks per block row (diagonal
 * included when square and withDiagonal) and independent values in every entry, so no block is
 * symmetric and a transposed block gives a different product.
 */
export function randomBsr(
  r: () => number, nBlockRows: number, nBlockCols: number, bs: number, perRow: number, withDiagonal = true,
): Bsr {
  const rowPtr = new Int32Array(nBlockRows + 1);
  const cols: number[] = [];
  for (let I = 0; I < nBlockRows; I++) {
    const set = new Set<number>();
    if (withDiagonal && I < nBlockCols) set.add(I);
    const want = Math.min(nBlockCols, Math.max(0, Math.round(perRow + (r() - 0.5) * 2)));
    while (set.size < want) set.add(Math.floor(r() * nBlockCols));
    cols.push(...[...set].sort((a, b) => a - b));
    rowPtr[I + 1] = cols.length;
  }
  const values = new Float64Array(cols.length * bs * bs);
  for (let i = 0; i < values.length; i++) values[i] = r() * 2 - 1;
  return { nBlockRows, nBlockCols, bs, rowPtr, colInd: Int32Array.from(cols), values };
}

/** Random CSR with sorted unique columns and about `perRow` entries per row. */
export function randomCsr(r: () => number, nRows: number, nCols: number, perRow: number): Csr {
  return bsrAsCsr(randomBsr(r, nRows, nCols, 1, perRow, false));
}

function bsrAsCsr(a: Bsr): Csr {
  return { nRows: a.nBlockRows, nCols: a.nBlockCols, rowPtr: a.rowPtr, colInd: a.colInd, values: a.values };
}

export function randomVector(r: () => number, n: number): Float64Array {
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = r() * 2 - 1;
  return x;
}

/** Dense copy, written entry by entry from the documented row-major block layout. */
export function bsrDense(a: Bsr): Matrix {
  const { bs } = a;
  const m = Matrix.zeros(a.nBlockRows * bs, a.nBlockCols * bs);
  for (let I = 0; I < a.nBlockRows; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      for (let i = 0; i < bs; i++) {
        for (let j = 0; j < bs; j++) m.set(I * bs + i, a.colInd[k] * bs + j, a.values[k * bs * bs + i * bs + j]);
      }
    }
  }
  return m;
}

export function csrDense(a: Csr): Matrix {
  const m = Matrix.zeros(a.nRows, a.nCols);
  for (let i = 0; i < a.nRows; i++) for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) m.set(i, a.colInd[k], a.values[k]);
  return m;
}

/** Dense matrix-vector product via ml-matrix. */
export function denseApply(m: Matrix, x: Float64Array): Float64Array {
  return Float64Array.from(m.mmul(Matrix.columnVector(Array.from(x))).getColumn(0));
}

export function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  if (a.length !== b.length) return Infinity;
  let d = 0;
  for (let i = 0; i < a.length; i++) d = Math.max(d, Math.abs(a[i] - b[i]));
  return d;
}

export function snapshot<T extends object>(obj: T): string {
  return JSON.stringify(obj, (_k, v: unknown) => (ArrayBuffer.isView(v) ? Array.from(v as Float64Array) : v));
}
