/**
 * Point Jacobi: z_i = r_i / (a_ii + shift). Pivot rule: |a_ii + shift| ≤ 1e-14·max_j |a_ij|
 * (row i of the shifted matrix), or an absent diagonal entry, fails naming the row and its block row.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { Recipe } from '../solvers/recipe.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { kernel, scaledWork, zeroWork } from '../solvers/work.js';
import { checkApplyArgs, checkReady } from './common.js';
import { PIVOT_RTOL } from './dense.js';
import { kernelF64, ptr, wasmFor } from '../kernels-host/arena.js';

export function createJacobi(system: SystemMatrix, recipe: Recipe): Preconditioner {
  return new JacobiPreconditioner(system, recipe.shift);
}

class JacobiPreconditioner implements Preconditioner {
  readonly name = 'jacobi';
  readonly variable = false;
  readonly n: number;
  private invDiag: Float64Array = new Float64Array(0);
  private ready = false;
  private applies = 0;
  private setupWork: WorkCounts = zeroWork();
  constructor(private readonly system: SystemMatrix, private readonly shift: number) {
    this.n = system.csr.nRows;
  }

  setup(): SetupOutcome {
    const { rowPtr, colInd, values } = this.system.csr;
    const bs = this.system.bsr.bs;
    const n = this.n;
    this.invDiag = kernelF64(n);
    this.applies = 0;
    // work model for rows 0..rows−1: two passes over each row (values and column indices) and the
    // row pointers, one shift addition and one reciprocal per row, the inverse diagonal written.
    // A failing row counts as attempted.
    const work = (rows: number): WorkCounts => kernel(2 * rows, 24 * (rowPtr[rows] - rowPtr[0]) + 8 * (rows + 1) + 8 * rows);
    this.setupWork = work(n);
    for (let i = 0; i < n; i++) {
      let d = NaN, rowMax = 0, found = false;
      for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) {
        const v = values[k];
        if (!Number.isFinite(v)) {
          this.setupWork = work(i + 1);
          return { ok: false, reason: 'non-finite', blockRow: Math.floor(i / bs),
            message: `jacobi: non-finite value in row ${i} (block row ${Math.floor(i / bs)})` };
        }
        if (colInd[k] === i) { d = v + this.shift; found = true; }
      }
      for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) {
        const v = Math.abs(colInd[k] === i ? d : values[k]);
        if (v > rowMax) rowMax = v;
      }
      if (!found || !(Math.abs(d) > PIVOT_RTOL * rowMax)) {
        this.setupWork = work(i + 1);
        return { ok: false, reason: 'zero-pivot', blockRow: Math.floor(i / bs),
          message: `jacobi: zero or tiny diagonal entry in row ${i} (block row ${Math.floor(i / bs)})` +
            `${found ? '' : ', absent from the pattern'}; a diagonal shift (recipe shift > 0) avoids it` };
      }
      this.invDiag[i] = 1 / d;
    }
    this.ready = true;
    return { ok: true };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    const d = this.invDiag;
    const k = wasmFor(d, r, z);
    if (k !== null) { k.hadamard(this.n, ptr(d), ptr(r), ptr(z)); this.applies++; return; }
    for (let i = 0; i < this.n; i++) z[i] = d[i] * r[i];
    this.applies++;
  }

  /** Work model: setup as counted in setup(); apply: n multiplications, invDiag and r read, z written. */
  work(): { setup: WorkCounts; apply: WorkCounts } {
    return {
      setup: { ...this.setupWork },
      apply: { ...scaledWork(kernel(this.n, 24 * this.n), this.applies), preconditionerApplies: this.applies },
    };
  }

  memory(): BufferBytes { return { 'inverse diagonal': this.invDiag.byteLength }; }

  stats(): Record<string, unknown> {
    return { shift: this.shift, shiftedPivots: this.shift !== 0 ? this.n : 0 };
  }
}
