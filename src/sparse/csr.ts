import type { Csr } from './types.js';

/** y = A x for CSR (unchecked kernel). */
export function csrSpmvKernel(
  nRows: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, y: Float64Array,
): void {
  for (let i = 0; i < nRows; i++) {
    let s = 0;
    const end = rowPtr[i + 1];
    for (let k = rowPtr[i]; k < end; k++) s += values[k] * x[colInd[k]];
    y[i] = s;
  }
}

/** y = A x with length and aliasing checks. */
export function csrSpmv(a: Csr, x: Float64Array, y: Float64Array): void {
  if (x.length !== a.nCols) throw new RangeError(`csrSpmv: x has length ${x.length}, expected ${a.nCols}`);
  if (y.length !== a.nRows) throw new RangeError(`csrSpmv: y has length ${y.length}, expected ${a.nRows}`);
  if (x === y) throw new RangeError('csrSpmv: x and y must be different arrays');
  csrSpmvKernel(a.nRows, a.rowPtr, a.colInd, a.values, x, y);
}

/** Bytes held by the three CSR arrays. */
export function csrBytes(a: Csr): number {
  return a.rowPtr.byteLength + a.colInd.byteLength + a.values.byteLength;
}

export function csrNnz(a: Csr): number {
  return a.rowPtr[a.nRows];
}
