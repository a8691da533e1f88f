import type { Bsr, Csr } from './types.js';
import { MAX_INT32_INDEX } from './types.js';
import { sortInt32Range } from './sort-range.js';
import { ptr, wasmFor } from '../kernels-host/arena.js';

// ---------------------------------------------------------------------------------------------
// Kernels. All compute y = alpha·A x (+ z when z is given) on row-major bs×bs blocks, without
// checks. z may be y itself (y += alpha·A x); x must not alias y. Fast paths keep a whole block
// row of y in locals for bs ≤ 4; larger blocks use a 2-row × 2-column register tile, which
// measured ~1.3–1.7× faster than the plain triple loop for bs 10–40 (bench/spmv.bench.ts).
// ---------------------------------------------------------------------------------------------

function mulAddBs1(
  n: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, alpha: number, z: Float64Array | null, y: Float64Array,
): void {
  for (let i = 0; i < n; i++) {
    let s = 0;
    const end = rowPtr[i + 1];
    for (let k = rowPtr[i]; k < end; k++) s += values[k] * x[colInd[k]];
    y[i] = z === null ? alpha * s : z[i] + alpha * s;
  }
}

function mulAddBs2(
  n: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, alpha: number, z: Float64Array | null, y: Float64Array,
): void {
  for (let I = 0; I < n; I++) {
    let s0 = 0, s1 = 0;
    const end = rowPtr[I + 1];
    for (let k = rowPtr[I]; k < end; k++) {
      const xo = colInd[k] * 2, v = k * 4;
      const x0 = x[xo], x1 = x[xo + 1];
      s0 += values[v] * x0 + values[v + 1] * x1;
      s1 += values[v + 2] * x0 + values[v + 3] * x1;
    }
    const yo = I * 2;
    if (z === null) {
      y[yo] = alpha * s0; y[yo + 1] = alpha * s1;
    } else {
      y[yo] = z[yo] + alpha * s0; y[yo + 1] = z[yo + 1] + alpha * s1;
    }
  }
}

function mulAddBs3(
  n: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, alpha: number, z: Float64Array | null, y: Float64Array,
): void {
  for (let I = 0; I < n; I++) {
    let s0 = 0, s1 = 0, s2 = 0;
    const end = rowPtr[I + 1];
    for (let k = rowPtr[I]; k < end; k++) {
      const xo = colInd[k] * 3, v = k * 9;
      const x0 = x[xo], x1 = x[xo + 1], x2 = x[xo + 2];
      s0 += values[v] * x0 + values[v + 1] * x1 + values[v + 2] * x2;
      s1 += values[v + 3] * x0 + values[v + 4] * x1 + values[v + 5] * x2;
      s2 += values[v + 6] * x0 + values[v + 7] * x1 + values[v + 8] * x2;
    }
    const yo = I * 3;
    if (z === null) {
      y[yo] = alpha * s0; y[yo + 1] = alpha * s1; y[yo + 2] = alpha * s2;
    } else {
      y[yo] = z[yo] + alpha * s0; y[yo + 1] = z[yo + 1] + alpha * s1; y[yo + 2] = z[yo + 2] + alpha * s2;
    }
  }
}

function mulAddBs4(
  n: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, alpha: number, z: Float64Array | null, y: Float64Array,
): void {
  for (let I = 0; I < n; I++) {
    let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
    const end = rowPtr[I + 1];
    for (let k = rowPtr[I]; k < end; k++) {
      const xo = colInd[k] * 4, v = k * 16;
      const x0 = x[xo], x1 = x[xo + 1], x2 = x[xo + 2], x3 = x[xo + 3];
      s0 += values[v] * x0 + values[v + 1] * x1 + values[v + 2] * x2 + values[v + 3] * x3;
      s1 += values[v + 4] * x0 + values[v + 5] * x1 + values[v + 6] * x2 + values[v + 7] * x3;
      s2 += values[v + 8] * x0 + values[v + 9] * x1 + values[v + 10] * x2 + values[v + 11] * x3;
      s3 += values[v + 12] * x0 + values[v + 13] * x1 + values[v + 14] * x2 + values[v + 15] * x3;
    }
    const yo = I * 4;
    if (z === null) {
      y[yo] = alpha * s0; y[yo + 1] = alpha * s1; y[yo + 2] = alpha * s2; y[yo + 3] = alpha * s3;
    } else {
      y[yo] = z[yo] + alpha * s0; y[yo + 1] = z[yo + 1] + alpha * s1;
      y[yo + 2] = z[yo + 2] + alpha * s2; y[yo + 3] = z[yo + 3] + alpha * s3;
    }
  }
}

/**
 * Any bs: y segment initialised from z (or 0), then each block adds its product computed two
 * block rows at a time with two partial sums each, so four independent add chains hide the
 * floating-point add latency and each x entry is loaded once per row pair.
 */
function mulAddTiled(
  n: number, bs: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, alpha: number, z: Float64Array | null, y: Float64Array,
): void {
  const bb = bs * bs;
  for (let I = 0; I < n; I++) {
    const yo = I * bs;
    if (z === null) for (let i = 0; i < bs; i++) y[yo + i] = 0;
    else if (z !== y) for (let i = 0; i < bs; i++) y[yo + i] = z[yo + i];
    const end = rowPtr[I + 1];
    for (let k = rowPtr[I]; k < end; k++) {
      const xo = colInd[k] * bs;
      let r0 = k * bb;
      let i = 0;
      for (; i + 1 < bs; i += 2) {
        const r1 = r0 + bs;
        let s0 = 0, t0 = 0, s1 = 0, t1 = 0;
        let j = 0;
        for (; j + 1 < bs; j += 2) {
          const xa = x[xo + j], xb = x[xo + j + 1];
          s0 += values[r0 + j] * xa; t0 += values[r0 + j + 1] * xb;
          s1 += values[r1 + j] * xa; t1 += values[r1 + j + 1] * xb;
        }
        if (j < bs) {
          const xa = x[xo + j];
          s0 += values[r0 + j] * xa;
          s1 += values[r1 + j] * xa;
        }
        y[yo + i] += alpha * (s0 + t0);
        y[yo + i + 1] += alpha * (s1 + t1);
        r0 += 2 * bs;
      }
      if (i < bs) {
        let s = 0;
        for (let j = 0; j < bs; j++) s += values[r0 + j] * x[xo + j];
        y[yo + i] += alpha * s;
      }
    }
  }
}

/**
 * Block sizes 6–33 divisible by 3: the same, three rows at a time with two partial sums each (six
 * independent add chains, each x entry loaded once per row triple). Same-process A/B against the
 * two-row kernel on the bench machine (7–24 M values, streamed): 1.11–1.29× at bs 6, 9, 12, 15, 24,
 * 30, 33, but 0.96–0.97× at 36, 42, 45 (memory-bound there), and slower wherever a remainder row
 * had to be handled separately, so mulAdd uses it only in that range.
 */
function mulAddTiled3(
  n: number, bs: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, alpha: number, z: Float64Array | null, y: Float64Array,
): void {
  const bb = bs * bs;
  for (let I = 0; I < n; I++) {
    const yo = I * bs;
    if (z === null) for (let i = 0; i < bs; i++) y[yo + i] = 0;
    else if (z !== y) for (let i = 0; i < bs; i++) y[yo + i] = z[yo + i];
    const end = rowPtr[I + 1];
    for (let k = rowPtr[I]; k < end; k++) {
      const xo = colInd[k] * bs;
      let r0 = k * bb;
      for (let i = 0; i < bs; i += 3) {
        const r1 = r0 + bs, r2 = r1 + bs;
        let s0 = 0, t0 = 0, s1 = 0, t1 = 0, s2 = 0, t2 = 0;
        let j = 0;
        for (; j + 1 < bs; j += 2) {
          const xa = x[xo + j], xb = x[xo + j + 1];
          s0 += values[r0 + j] * xa; t0 += values[r0 + j + 1] * xb;
          s1 += values[r1 + j] * xa; t1 += values[r1 + j + 1] * xb;
          s2 += values[r2 + j] * xa; t2 += values[r2 + j + 1] * xb;
        }
        if (j < bs) {
          const xa = x[xo + j];
          s0 += values[r0 + j] * xa;
          s1 += values[r1 + j] * xa;
          s2 += values[r2 + j] * xa;
        }
        y[yo + i] += alpha * (s0 + t0);
        y[yo + i + 1] += alpha * (s1 + t1);
        y[yo + i + 2] += alpha * (s2 + t2);
        r0 += 3 * bs;
      }
    }
  }
}

function mulAdd(
  n: number, bs: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, alpha: number, z: Float64Array | null, y: Float64Array,
): void {
  // every array in kernel memory: the WebAssembly twin (src/kernels/sparse.ts, same summation order)
  const k = wasmFor(rowPtr, colInd, values, x);
  if (k !== null && y.buffer === x.buffer && (z === null || z.buffer === x.buffer)) {
    k.bsrMulAdd(n, bs, ptr(rowPtr), ptr(colInd), ptr(values), ptr(x), alpha, z === null ? 0 : ptr(z), ptr(y));
    return;
  }
  switch (bs) {
    case 1: mulAddBs1(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 2: mulAddBs2(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 3: mulAddBs3(n, rowPtr, colInd, values, x, alpha, z, y); return;
    case 4: mulAddBs4(n, rowPtr, colInd, values, x, alpha, z, y); return;
    default:
      if (bs % 3 === 0 && bs <= 33) mulAddTiled3(n, bs, rowPtr, colInd, values, x, alpha, z, y);
      else mulAddTiled(n, bs, rowPtr, colInd, values, x, alpha, z, y);
  }
}

/** y = A x for row-major BSR (unchecked; dispatches to the fast path for bs). */
export function bsrSpmvKernel(
  nBlockRows: number, bs: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, y: Float64Array,
): void {
  mulAdd(nBlockRows, bs, rowPtr, colInd, values, x, 1, null, y);
}

/** y = z + alpha·A x (unchecked). z may be y (y += alpha·A x); x must not alias y. */
export function bsrMultiplyAddKernel(
  nBlockRows: number, bs: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, alpha: number, z: Float64Array, y: Float64Array,
): void {
  mulAdd(nBlockRows, bs, rowPtr, colInd, values, x, alpha, z, y);
}

/** y = A x with the tiled generic path for every bs (unchecked; to test the fast paths against). */
export function bsrSpmvTiledKernel(
  nBlockRows: number, bs: number, rowPtr: Int32Array, colInd: Int32Array, values: Float64Array,
  x: Float64Array, y: Float64Array,
): void {
  const k = wasmFor(rowPtr, colInd, values, x);
  if (k !== null && y.buffer === x.buffer) {
    k.bsrMulAddGeneric(nBlockRows, bs, ptr(rowPtr), ptr(colInd), ptr(values), ptr(x), 1, 0, ptr(y));
    return;
  }
  mulAddTiled(nBlockRows, bs, rowPtr, colInd, values, x, 1, null, y);
}

/** y = A x, plain triple loop (unchecked reference kernel; slow, kept as the yardstick). */
export function bsrSpmvReferenceKernel(
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

function checkApply(where: string, a: Bsr, x: Float64Array, y: Float64Array): void {
  const n = a.nBlockCols * a.bs;
  const m = a.nBlockRows * a.bs;
  if (x.length !== n) throw new RangeError(`${where}: x has length ${x.length}, expected ${n}`);
  if (y.length !== m) throw new RangeError(`${where}: y has length ${y.length}, expected ${m}`);
  if (x === y) throw new RangeError(`${where}: x and y must be different arrays`);
}

/** y = A x with length and aliasing checks. */
export function bsrSpmv(a: Bsr, x: Float64Array, y: Float64Array): void {
  checkApply('bsrSpmv', a, x, y);
  mulAdd(a.nBlockRows, a.bs, a.rowPtr, a.colInd, a.values, x, 1, null, y);
}

/** y = z + alpha·A x with checks; z may be y (y += alpha·A x); x must differ from y. */
export function bsrMultiplyAdd(a: Bsr, x: Float64Array, alpha: number, z: Float64Array, y: Float64Array): void {
  checkApply('bsrMultiplyAdd', a, x, y);
  if (z.length !== y.length) throw new RangeError(`bsrMultiplyAdd: z has length ${z.length}, expected ${y.length}`);
  mulAdd(a.nBlockRows, a.bs, a.rowPtr, a.colInd, a.values, x, alpha, z, y);
}

/** r = b − A x with checks; r must differ from x (r may be b). */
export function bsrResidual(a: Bsr, x: Float64Array, b: Float64Array, r: Float64Array): void {
  checkApply('bsrResidual', a, x, r);
  if (b.length !== r.length) throw new RangeError(`bsrResidual: b has length ${b.length}, expected ${r.length}`);
  mulAdd(a.nBlockRows, a.bs, a.rowPtr, a.colInd, a.values, x, -1, b, r);
}

/** Number of stored blocks. */
export function bsrNnzBlocks(a: Bsr): number {
  return a.rowPtr[a.nBlockRows];
}

export function bsrBytes(a: Bsr): number {
  return a.rowPtr.byteLength + a.colInd.byteLength + a.values.byteLength;
}

/** Bytes per named BSR buffer. */
export function bsrMemory(a: Bsr): Record<string, number> {
  return { rowPtr: a.rowPtr.byteLength, colInd: a.colInd.byteLength, values: a.values.byteLength };
}

/**
 * Structural check of a BSR matrix; returns a description of the first problem, or undefined when
 * lengths match and block column indices are in range, ascending and unique within each block row.
 */
export function bsrProblem(a: Bsr): string | undefined {
  const { nBlockRows, nBlockCols, bs, rowPtr, colInd, values } = a;
  if (!Number.isInteger(bs) || bs < 1) return `block size ${bs} is not a positive integer`;
  if (rowPtr.length !== nBlockRows + 1) return `rowPtr has length ${rowPtr.length}, expected ${nBlockRows + 1}`;
  if (rowPtr[0] !== 0) return `rowPtr[0] is ${rowPtr[0]}, expected 0`;
  const nBlocks = rowPtr[nBlockRows];
  if (colInd.length !== nBlocks) return `colInd has length ${colInd.length}, expected ${nBlocks}`;
  if (values.length !== nBlocks * bs * bs) return `values has length ${values.length}, expected ${nBlocks * bs * bs}`;
  for (let I = 0; I < nBlockRows; I++) {
    if (rowPtr[I + 1] < rowPtr[I]) return `rowPtr decreases at block row ${I}`;
    let prev = -1;
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      const c = colInd[k];
      if (c < 0 || c >= nBlockCols) return `block row ${I}: block column ${c} out of range 0..${nBlockCols - 1}`;
      if (c <= prev) return `block row ${I}: block columns not ascending and unique at block ${k}`;
      prev = c;
    }
  }
  return undefined;
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

function checkBlockSize(where: string, a: Csr, bs: number): void {
  if (!Number.isInteger(bs) || bs < 1) throw new RangeError(`${where}: block size ${bs} is not a positive integer`);
  if (a.nRows % bs !== 0 || a.nCols % bs !== 0) {
    throw new RangeError(`${where}: size ${a.nRows}×${a.nCols} is not divisible by block size ${bs}`);
  }
}

/**
 * Number of bs×bs blocks csrToBsr would store (blocks holding at least one pattern entry).
 * Lets callers refuse a block size whose dense blocks would not fit before allocating them.
 */
export function bsrBlockCount(a: Csr, bs: number): number {
  checkBlockSize('bsrBlockCount', a, bs);
  const marker = new Int32Array(a.nCols / bs).fill(-1);
  let count = 0;
  for (let I = 0; I < a.nRows / bs; I++) {
    for (let i = I * bs; i < (I + 1) * bs; i++) {
      for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) {
        const J = (a.colInd[k] / bs) | 0;
        if (marker[J] !== I) { marker[J] = I; count++; }
      }
    }
  }
  return count;
}

/**
 * Group CSR into bs×bs blocks. A block is stored when at least one of its entries is in the
 * CSR pattern (explicit zeros count); entries absent from the pattern become stored zeros.
 * Requires nRows and nCols divisible by bs; column indices must be unique within a row but
 * need not be sorted (output block columns are sorted either way). Rectangular matrices are fine.
 */
export function csrToBsr(a: Csr, bs: number): Bsr {
  checkBlockSize('csrToBsr', a, bs);
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
  if (nBlocks * bb > MAX_INT32_INDEX) {
    throw new RangeError(`csrToBsr: ${nBlocks} blocks of ${bs}×${bs} need ${nBlocks * bb} values, more than ${MAX_INT32_INDEX}`);
  }
  const colInd = new Int32Array(nBlocks);
  const values = new Float64Array(nBlocks * bb);
  marker.fill(-1);
  const slot = new Int32Array(nBlockCols);
  for (let I = 0; I < nBlockRows; I++) {
    const start = rowPtr[I];
    let p = start;
    for (let i = I * bs; i < (I + 1) * bs; i++) {
      for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) {
        const J = (a.colInd[k] / bs) | 0;
        if (marker[J] !== I) { marker[J] = I; colInd[p++] = J; }
      }
    }
    sortInt32Range(colInd, start, p);
    for (let q = start; q < p; q++) slot[colInd[q]] = q;
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
