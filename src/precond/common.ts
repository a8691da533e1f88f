/**
 * Pieces shared by the preconditioner files: the checked apply wrapper, polite setup failures,
 * and the "shift, then factor one diagonal block" step with the pivot rule of dense.ts.
 */
import type { Preconditioner, SetupOutcome } from './types.js';
import { PIVOT_RTOL, allFinite, blockMaxAbs, luFactor } from './dense.js';
import type { WorkCounts } from '../solvers/types.js';
import { addWork, denseWork, kernel } from '../solvers/work.js';

/**
 * Setup work of factoring the diagonal blocks (block-jacobi, block-gs), by the work model: the
 * diagonal search (row pointers, column indices), then per block row attempted the block copied
 * in (zero-filled when absent), factorBlock, and with inverses luInverse. `rows` attempted, of
 * which `present` had a stored diagonal block.
 */
export function diagonalSetupWork(
  nb: number, nStoredBlocks: number, bs: number, shift: number, withInverse: boolean,
): (rows: number, present: number) => WorkCounts {
  const perRow = denseWork.factorBlock(bs, shift);
  if (withInverse) addWork(perRow, denseWork.inverse(bs));
  return (rows, present) => {
    const w = kernel(0, 4 * (nb + 1) + 4 * nStoredBlocks);
    addWork(w, perRow, rows);
    addWork(w, denseWork.copy(bs), present);
    return addWork(w, kernel(0, 8 * bs * bs), rows - present);
  };
}

/** Throws (a programming error, not a user error) unless r and z are distinct arrays of length n. */
export function checkApplyArgs(name: string, n: number, r: Float64Array, z: Float64Array): void {
  if (r.length !== n) throw new RangeError(`${name}.apply: r has length ${r.length}, expected ${n}`);
  if (z.length !== n) throw new RangeError(`${name}.apply: z has length ${z.length}, expected ${n}`);
  if (r === z) throw new RangeError(`${name}.apply: r and z must be different arrays`);
}

/** Throws when apply() is called before a successful setup(). */
export function checkReady(name: string, ready: boolean): void {
  if (!ready) throw new Error(`${name}.apply: setup() has not succeeded`);
}

export function zeroPivot(name: string, blockRow: number, detail: string): SetupOutcome {
  return {
    ok: false, reason: 'zero-pivot', blockRow,
    message: `${name}: zero or tiny pivot in block row ${blockRow} (${detail}); a diagonal shift (recipe shift > 0) avoids it`,
  };
}

export function nonFinite(name: string, blockRow: number, what: string): SetupOutcome {
  return {
    ok: false, reason: 'non-finite', blockRow,
    message: `${name}: non-finite value (NaN or Inf) in ${what} of block row ${blockRow}`,
  };
}

/**
 * Factor the bs×bs block at a[ao..] in place (LU with partial pivoting) after adding `shift`
 * to its diagonal. Pivot rule: |pivot| ≤ PIVOT_RTOL·max|block entry| (measured after the
 * shift), or an exact zero, fails. Returns null on success or the failure outcome.
 */
export function factorBlock(
  name: string, blockRow: number, a: Float64Array, ao: number, bs: number,
  piv: Int32Array, po: number, shift: number,
): SetupOutcome | null {
  if (!allFinite(a, ao, bs * bs)) return nonFinite(name, blockRow, 'the diagonal block');
  if (shift !== 0) for (let i = 0; i < bs; i++) a[ao + i * bs + i] += shift;
  const norm = blockMaxAbs(a, ao, bs);
  const k = luFactor(a, ao, bs, piv, po, PIVOT_RTOL * norm);
  if (k >= 0) {
    return zeroPivot(name, blockRow, norm === 0
      ? 'the diagonal block is zero or missing'
      : `pivot ${k} of the diagonal block is ≤ ${PIVOT_RTOL}·${norm.toExponential(3)}`);
  }
  if (!allFinite(a, ao, bs * bs)) return nonFinite(name, blockRow, 'the factors');
  return null;
}

/** Sum of a BufferBytes record. */
export function totalBytes(m: Record<string, number>): number {
  let s = 0;
  for (const k in m) s += m[k];
  return s;
}

/** Type guard used by tests and solveSystem to tell a failed outcome apart. */
export function isFailure(o: SetupOutcome): o is Extract<SetupOutcome, { ok: false }> {
  return !o.ok;
}

export type { Preconditioner };
