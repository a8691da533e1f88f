import type { Csr } from './types.js';
import { ptr, wasmFor } from '../kernels-host/arena.js';

/** y = A x for CSR (unchecked kernel). */
export function csrSpmvKernel(
  nRows: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, y: Float64Array,
): void {
  const k = wasmFor(rowPtr, colInd, values, x);
  if (k !== null && y.buffer === x.buffer) {
    k.csrMulAdd(nRows, ptr(rowPtr), ptr(colInd), ptr(values), ptr(x), 1, 0, ptr(y));
    return;
  }
  for (let i = 0; i < nRows; i++) {
    let s = 0;
    const end = rowPtr[i + 1];
    for (let k = rowPtr[i]; k < end; k++) s += values[k] * x[colInd[k]];
    y[i] = s;
  }
}

/**
 * y = z + alpha·A x for CSR (unchecked kernel). z may be y itself (y += alpha·A x); x must not
 * alias y. With z = b and alpha = −1 this is the residual r = b − A x.
 */
export function csrMultiplyAddKernel(
  nRows: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, alpha: number, z: Float64Array, y: Float64Array,
): void {
  const k = wasmFor(rowPtr, colInd, values, x);
  if (k !== null && y.buffer === x.buffer && z.buffer === x.buffer) {
    k.csrMulAdd(nRows, ptr(rowPtr), ptr(colInd), ptr(values), ptr(x), alpha, ptr(z), ptr(y));
    return;
  }
  for (let i = 0; i < nRows; i++) {
    let s = 0;
    const end = rowPtr[i + 1];
    for (let k = rowPtr[i]; k < end; k++) s += values[k] * x[colInd[k]];
    y[i] = z[i] + alpha * s;
  }
}

function checkApply(where: string, a: Csr, x: Float64Array, y: Float64Array): void {
  if (x.length !== a.nCols) throw new RangeError(`${where}: x has length ${x.length}, expected ${a.nCols}`);
  if (y.length !== a.nRows) throw new RangeError(`${where}: y has length ${y.length}, expected ${a.nRows}`);
  if (x === y) throw new RangeError(`${where}: x and y must be different arrays`);
}

/** y = A x with length and aliasing checks. */
export function csrSpmv(a: Csr, x: Float64Array, y: Float64Array): void {
  checkApply('csrSpmv', a, x, y);
  csrSpmvKernel(a.nRows, a.rowPtr, a.colInd, a.values, x, y);
}

/** y = z + alpha·A x with checks; z may be y (y += alpha·A x), x must differ from y. */
export function csrMultiplyAdd(a: Csr, x: Float64Array, alpha: number, z: Float64Array, y: Float64Array): void {
  checkApply('csrMultiplyAdd', a, x, y);
  if (z.length !== a.nRows) throw new RangeError(`csrMultiplyAdd: z has length ${z.length}, expected ${a.nRows}`);
  csrMultiplyAddKernel(a.nRows, a.rowPtr, a.colInd, a.values, x, alpha, z, y);
}

/** r = b − A x with checks; r must differ from x (r may be b). */
export function csrResidual(a: Csr, x: Float64Array, b: Float64Array, r: Float64Array): void {
  checkApply('csrResidual', a, x, r);
  if (b.length !== a.nRows) throw new RangeError(`csrResidual: b has length ${b.length}, expected ${a.nRows}`);
  csrMultiplyAddKernel(a.nRows, a.rowPtr, a.colInd, a.values, x, -1, b, r);
}

/** Bytes held by the three CSR arrays. */
export function csrBytes(a: Csr): number {
  return a.rowPtr.byteLength + a.colInd.byteLength + a.values.byteLength;
}

/** Bytes per named CSR buffer. */
export function csrMemory(a: Csr): Record<string, number> {
  return { rowPtr: a.rowPtr.byteLength, colInd: a.colInd.byteLength, values: a.values.byteLength };
}

export function csrNnz(a: Csr): number {
  return a.rowPtr[a.nRows];
}

/** Transpose (also CSR → CSC of the same matrix). Output rows come out sorted. */
export function csrTranspose(a: Csr): Csr {
  const { nRows, nCols, rowPtr, colInd, values } = a;
  const nnz = rowPtr[nRows];
  const outPtr = new Int32Array(nCols + 1);
  for (let k = 0; k < nnz; k++) outPtr[colInd[k] + 1]++;
  for (let j = 0; j < nCols; j++) outPtr[j + 1] += outPtr[j];
  const next = outPtr.slice(0, nCols);
  const outCol = new Int32Array(nnz);
  const outVal = new Float64Array(nnz);
  for (let i = 0; i < nRows; i++) {
    for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) {
      const p = next[colInd[k]]++;
      outCol[p] = i;
      outVal[p] = values[k];
    }
  }
  return { nRows: nCols, nCols: nRows, rowPtr: outPtr, colInd: outCol, values: outVal };
}

/**
 * Structural check of a CSR matrix; returns a description of the first problem, or undefined
 * when the arrays have the right lengths, rowPtr is non-decreasing from 0, and column indices
 * are in range, ascending and unique within each row.
 */
export function csrProblem(a: Csr): string | undefined {
  const { nRows, nCols, rowPtr, colInd, values } = a;
  if (rowPtr.length !== nRows + 1) return `rowPtr has length ${rowPtr.length}, expected ${nRows + 1}`;
  if (rowPtr[0] !== 0) return `rowPtr[0] is ${rowPtr[0]}, expected 0`;
  const nnz = rowPtr[nRows];
  if (colInd.length !== nnz || values.length !== nnz) {
    return `colInd/values have lengths ${colInd.length}/${values.length}, expected ${nnz}`;
  }
  for (let i = 0; i < nRows; i++) {
    if (rowPtr[i + 1] < rowPtr[i]) return `rowPtr decreases at row ${i}`;
    let prev = -1;
    for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) {
      const c = colInd[k];
      if (c < 0 || c >= nCols) return `row ${i}: column ${c} out of range 0..${nCols - 1}`;
      if (c <= prev) return `row ${i}: columns not ascending and unique at entry ${k}`;
      prev = c;
    }
  }
  return undefined;
}
