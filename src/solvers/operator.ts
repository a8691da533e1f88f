import type { Bsr, Csr } from '../sparse/types.js';
import { csrSpmvKernel } from '../sparse/csr.js';
import { bsrSpmvKernel } from '../sparse/bsr.js';
import type { BufferBytes, LinearOperator, RelativeTo, WorkCounts } from './types.js';
import { norm2, subtractFrom } from './vector.js';
import { addWork, kernel, sparseWork, vectorWork } from './work.js';

/** A matrix seen as an operator, with the bytes its arrays hold (for the memory report). */
export interface MatrixOperator extends LinearOperator {
  readonly format: 'csr' | 'bsr';
  /** Bytes by named array: rowPtr, colInd, values. */
  readonly bytes: BufferBytes;
  readonly applyWork: WorkCounts;
}

function checkApply(name: string, n: number, x: Float64Array, y: Float64Array): void {
  if (x.length !== n) throw new RangeError(`${name}: x has length ${x.length}, expected ${n}`);
  if (y.length !== n) throw new RangeError(`${name}: y has length ${y.length}, expected ${n}`);
  if (x === y) throw new RangeError(`${name}: x and y must be different arrays`);
}

/** y ← A x for a square CSR matrix (checked apply, unchecked kernel). */
export function csrOperator(a: Csr): MatrixOperator {
  if (a.nRows !== a.nCols) throw new RangeError(`csrOperator: matrix is ${a.nRows}×${a.nCols}, expected square`);
  const n = a.nRows;
  const { rowPtr, colInd, values } = a;
  return {
    n,
    format: 'csr',
    applyWork: sparseWork.csrSpmv(n, colInd.length),
    bytes: { rowPtr: rowPtr.byteLength, colInd: colInd.byteLength, values: values.byteLength },
    apply(x, y) {
      checkApply('csrOperator', n, x, y);
      csrSpmvKernel(n, rowPtr, colInd, values, x, y);
    },
  };
}

/** y ← A x for a square BSR matrix (row-major blocks). */
export function bsrOperator(a: Bsr): MatrixOperator {
  if (a.nBlockRows !== a.nBlockCols) {
    throw new RangeError(`bsrOperator: matrix is ${a.nBlockRows}×${a.nBlockCols} blocks, expected square`);
  }
  const { nBlockRows, bs, rowPtr, colInd, values } = a;
  const n = nBlockRows * bs;
  return {
    n,
    format: 'bsr',
    applyWork: sparseWork.bsrSpmv(nBlockRows, bs, colInd.length),
    bytes: { rowPtr: rowPtr.byteLength, colInd: colInd.byteLength, values: values.byteLength },
    apply(x, y) {
      checkApply('bsrOperator', n, x, y);
      bsrSpmvKernel(nBlockRows, bs, rowPtr, colInd, values, x, y);
    },
  };
}

/** The cost of one A.apply (A.applyWork, or matvecs 1 and nothing else when A does not say). */
export function applyWorkOf(A: LinearOperator): WorkCounts {
  return A.applyWork ?? { ...kernel(0, 0), matvecs: 1 };
}

/**
 * r ← b − A x; returns ‖r‖₂ (the true residual every solver checks its estimate against).
 * With `work`, adds its cost: one apply, the subtraction pass and the norm.
 */
export function residualInto(
  A: LinearOperator, b: Float64Array, x: Float64Array, r: Float64Array, work?: WorkCounts,
): number {
  const n = A.n;
  A.apply(x, r);
  subtractFrom(n, b, r);
  if (work) {
    addWork(work, applyWorkOf(A));
    addWork(work, vectorWork.subtractFrom(n));
    addWork(work, vectorWork.norm2(n));
  }
  return norm2(n, r);
}

/**
 * Iteration 0, the same for every method. A non-finite b stops as 'non-finite-value' (trueNorm NaN);
 * b = 0 sets x = 0 and stops as 'relative-target' (trueNorm 0: the solution of a nonsingular
 * system, 0/0 taken as 0). Otherwise r ← b − A x, and trueBase is the unpreconditioned norm the
 * relative residuals divide by (‖b‖ or ‖r₀‖).
 */
export function startResidual(
  A: LinearOperator, b: Float64Array, x: Float64Array, r: Float64Array, relativeTo: RelativeTo,
  work?: WorkCounts,
): { stop: 'non-finite-value' | 'relative-target'; trueNorm: number } | { stop: undefined; trueNorm: number; trueBase: number } {
  const bNorm = norm2(A.n, b);
  if (work) addWork(work, vectorWork.norm2(A.n));
  if (!Number.isFinite(bNorm)) return { stop: 'non-finite-value', trueNorm: NaN };
  if (bNorm === 0) {
    x.fill(0);
    if (work) addWork(work, vectorWork.fill(A.n));
    return { stop: 'relative-target', trueNorm: 0 };
  }
  const trueNorm = residualInto(A, b, x, r, work);
  return { stop: undefined, trueNorm, trueBase: relativeTo === 'rhs' ? bNorm : trueNorm };
}
