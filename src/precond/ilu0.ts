/**
 * Point ILU(0) on the CSR pattern (explicit zeros included): L unit lower, U upper, with the
 * pattern of L + U equal to that of A. IKJ variant, Saad, Iterative Methods for Sparse Linear
 * Systems, 2nd ed. 2003, Algorithm 10.4. The shift is added to every diagonal entry first.
 * Pivot rule: |u_ii| ≤ 1e-14·max_j |a_ij| (row i of the shifted matrix), an exact zero, or a
 * diagonal entry absent from the pattern fails naming the row and its block row.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { Recipe } from '../solvers/recipe.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { kernel, scaledWork, zeroWork } from '../solvers/work.js';
import { checkApplyArgs, checkReady } from './common.js';
import { PIVOT_RTOL } from './dense.js';
import { allInArena, kernelCopyF64, kernelI32, ptr, wasmFor } from '../kernels-host/arena.js';

export function createIlu0(system: SystemMatrix, recipe: Recipe): Preconditioner {
  if (system.csr.nRows !== system.csr.nCols) throw new RangeError('ilu0: matrix is not square');
  return new Ilu0Preconditioner(system, recipe.shift);
}

export class Ilu0Preconditioner implements Preconditioner {
  readonly name = 'ilu0';
  readonly variable = false;
  readonly n: number;
  private factors: Float64Array = new Float64Array(0);
  private diagPtr: Int32Array = new Int32Array(0);
  private ready = false;
  private setupFlops = 0;
  private applies = 0;
  private setupWork: WorkCounts = zeroWork();

  constructor(private readonly system: SystemMatrix, private readonly shift: number) {
    this.n = system.csr.nRows;
  }

  private fail(reason: 'zero-pivot' | 'non-finite', i: number, what: string): SetupOutcome {
    const bs = this.system.bsr.bs;
    const I = Math.floor(i / bs);
    return { ok: false, reason, blockRow: I, message: `ilu0: ${what} in row ${i} (block row ${I})` +
      (reason === 'zero-pivot' ? '; a diagonal shift (recipe shift > 0) avoids it' : '') };
  }

  setup(): SetupOutcome {
    const { rowPtr, colInd, values } = this.system.csr;
    const n = this.n;
    const lu = kernelCopyF64(values);
    const diag = kernelI32(n);
    // symbolic: locate diagonals
    for (let i = 0; i < n; i++) {
      diag[i] = -1;
      for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) if (colInd[k] === i) { diag[i] = k; break; }
      if (diag[i] < 0) {
        this.setupWork = kernel(0, 16 * values.length + 4 * rowPtr[i + 1] + 4 * (i + 2)); // the copy, the pattern scanned so far
        return this.fail('zero-pivot', i, 'diagonal entry absent from the pattern');
      }
    }
    const iw = new Int32Array(n).fill(-1);
    let flops = 0;
    this.applies = 0;
    // work model for rows 0..rows−1 (a failing row counts as attempted): the values copied, the
    // diagonal search over the pattern, per row its entries read with their column indices (24 bytes
    // per entry with the marker writes and resets) and one shift addition, per multiplier l = a/u
    // one division (24 bytes), per update a −= l·u two flops (32 bytes: u, its column, the marker,
    // a read and written); the update count is what the loop below counts in `flops`.
    const work = (rows: number): WorkCounts => {
      let multipliers = 0;
      for (let i = 0; i < rows; i++) multipliers += Math.max(0, diag[i] - rowPtr[i]);
      const updates = (flops - multipliers) / 2;
      const len = rowPtr[rows] - rowPtr[0];
      return kernel(flops + rows, 16 * values.length + 4 * colInd.length + 4 * (n + 1) + 24 * len + 24 * multipliers + 32 * updates);
    };
    for (let i = 0; i < n; i++) {
      const s = rowPtr[i], e = rowPtr[i + 1];
      let rowMax = 0;
      for (let k = s; k < e; k++) {
        if (!Number.isFinite(lu[k])) { this.setupWork = work(i + 1); return this.fail('non-finite', i, 'non-finite matrix entry'); }
        if (k === diag[i]) lu[k] += this.shift;
        const v = Math.abs(lu[k]);
        if (v > rowMax) rowMax = v;
        iw[colInd[k]] = k;
      }
      for (let k = s; k < diag[i]; k++) {
        const c = colInd[k];
        const l = lu[k] / lu[diag[c]];
        lu[k] = l;
        for (let q = diag[c] + 1; q < rowPtr[c + 1]; q++) {
          const p = iw[colInd[q]];
          if (p >= 0) { lu[p] -= l * lu[q]; flops += 2; }
        }
        flops++;
      }
      for (let k = s; k < e; k++) iw[colInd[k]] = -1;
      const d = lu[diag[i]];
      if (!Number.isFinite(d)) { this.setupWork = work(i + 1); return this.fail('non-finite', i, 'non-finite pivot'); }
      if (!(Math.abs(d) > PIVOT_RTOL * rowMax)) {
        this.setupWork = work(i + 1);
        return this.fail('zero-pivot', i, `zero or tiny pivot ${d} (≤ ${PIVOT_RTOL}·${rowMax.toExponential(3)})`);
      }
    }
    this.factors = lu;
    this.diagPtr = diag;
    this.setupFlops = flops;
    this.setupWork = work(n);
    this.ready = true;
    return { ok: true };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    const { rowPtr, colInd } = this.system.csr;
    const lu = this.factors, diag = this.diagPtr, n = this.n;
    if (allInArena([rowPtr, colInd, lu, diag, r, z])) {
      wasmFor(z)!.iluPointSweeps(n, ptr(rowPtr), ptr(colInd), ptr(lu), ptr(diag), ptr(r), ptr(z));
      this.applies++;
      return;
    }
    for (let i = 0; i < n; i++) {
      let s = r[i];
      for (let k = rowPtr[i]; k < diag[i]; k++) s -= lu[k] * z[colInd[k]];
      z[i] = s;
    }
    for (let i = n - 1; i >= 0; i--) {
      let s = z[i];
      for (let k = diag[i] + 1; k < rowPtr[i + 1]; k++) s -= lu[k] * z[colInd[k]];
      z[i] = s / lu[diag[i]];
    }
    this.applies++;
  }

  /**
   * Work model of one apply (forward then backward sweep): 2 flops and 12 bytes (value and column)
   * per off-diagonal entry, a division and the pivot per row, the row pointers and diagonal
   * positions read in both sweeps, r read, z read and written in each sweep.
   */
  work(): { setup: WorkCounts; apply: WorkCounts } {
    const n = this.n, nnz = this.system.csr.colInd.length;
    const once = kernel(2 * (nnz - n) + n, 12 * (nnz - n) + 8 * n + 2 * (4 * (n + 1) + 4 * n) + 40 * n);
    return { setup: { ...this.setupWork }, apply: { ...scaledWork(once, this.applies), preconditionerApplies: this.applies } };
  }

  /** The pivots u_ii (for tests and inspection). */
  pivots(): Float64Array {
    const out = new Float64Array(this.n);
    for (let i = 0; i < this.n; i++) out[i] = this.factors[this.diagPtr[i]];
    return out;
  }

  /** The combined factors L + U − I on the pattern of A (same rowPtr/colInd as the CSR input). */
  factorValues(): Float64Array { return this.factors; }

  memory(): BufferBytes {
    return { 'factors (L+U values)': this.factors.byteLength, 'diagonal positions': this.diagPtr.byteLength };
  }

  stats(): Record<string, unknown> {
    return { shift: this.shift, shiftedPivots: this.shift !== 0 ? this.n : 0, setupFlops: this.setupFlops };
  }
}
