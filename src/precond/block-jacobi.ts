/**
 * Block Jacobi on the bs×bs diagonal blocks: z_I = (A_II + shift·I)⁻¹ r_I, by LU with partial
 * pivoting (recipe.blockInverse 'lu': forward/back substitution per apply) or by explicit
 * inverses ('inverse': one block mat-vec per apply). A zero/tiny pivot (dense.ts PIVOT_RTOL) or an
 * absent diagonal block fails naming the block row.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { BlockInverse, Recipe } from '../solvers/recipe.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { addWork, denseWork, kernel, scaledWork, vectorWork, zeroWork } from '../solvers/work.js';
import { checkApplyArgs, checkReady, diagonalSetupWork, factorBlock } from './common.js';
import { blockMatVec, denseFlops, luInverse, luSolve } from './dense.js';
import { diagonalIndex } from './block-tools.js';
import { kernelF64, kernelI32, ptr, wasmFor } from '../kernels-host/arena.js';

export function createBlockJacobi(system: SystemMatrix, recipe: Recipe): Preconditioner {
  return new BlockJacobiPreconditioner(system, recipe.blockInverse, recipe.shift);
}

class BlockJacobiPreconditioner implements Preconditioner {
  readonly name = 'block-jacobi';
  readonly variable = false;
  readonly n: number;
  private factors: Float64Array = new Float64Array(0);
  private pivots: Int32Array = new Int32Array(0);
  private scratch: Float64Array = new Float64Array(0);
  private applies = 0;
  private setupWork: WorkCounts = zeroWork();
  private ready = false;
  private setupFlops = 0;
  constructor(
    private readonly system: SystemMatrix,
    private readonly mode: BlockInverse,
    private readonly shift: number,
  ) {
    this.n = system.bsr.nBlockRows * system.bsr.bs;
  }

  setup(): SetupOutcome {
    const a = this.system.bsr;
    const { nBlockRows: nb, bs, values } = a;
    const bb = bs * bs;
    const diag = diagonalIndex(a);
    this.applies = 0;
    const work = diagonalSetupWork(nb, a.colInd.length, bs, this.shift, this.mode === 'inverse');
    let present = 0;
    this.factors = kernelF64(nb * bb);
    this.pivots = kernelI32(this.mode === 'lu' ? nb * bs : bs);
    this.scratch = kernelF64(this.mode === 'lu' ? 0 : bb);
    for (let I = 0; I < nb; I++) {
      const fo = I * bb;
      const src = this.mode === 'lu' ? this.factors : this.scratch;
      const so = this.mode === 'lu' ? fo : 0;
      if (diag[I] >= 0) present++;
      if (diag[I] >= 0) src.set(values.subarray(diag[I] * bb, diag[I] * bb + bb), so);
      else src.fill(0, so, so + bb);
      const po = this.mode === 'lu' ? I * bs : 0;
      const fail = factorBlock(this.name, I, src, so, bs, this.pivots, po, this.shift);
      if (fail) { this.setupWork = work(I + 1, present); return fail; }
      if (this.mode === 'inverse') luInverse(this.scratch, 0, this.pivots, 0, bs, this.factors, fo);
    }
    this.setupFlops = nb * (this.mode === 'lu' ? denseFlops.lu(bs) : denseFlops.inverse(bs));
    this.setupWork = work(nb, present);
    this.ready = true;
    return { ok: true };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    const { nBlockRows: nb, bs } = this.system.bsr;
    const bb = bs * bs;
    const k = wasmFor(this.factors, this.pivots, r, z);
    if (k !== null) {
      if (this.mode === 'lu') { z.set(r); k.blockDiagonalLuSolve(nb, bs, ptr(this.factors), ptr(this.pivots), ptr(z)); }
      else k.blockDiagonalApply(nb, bs, ptr(this.factors), ptr(r), ptr(z));
      this.applies++;
      return;
    }
    if (this.mode === 'lu') {
      z.set(r);
      for (let I = 0; I < nb; I++) luSolve(this.factors, I * bb, this.pivots, I * bs, bs, z, I * bs);
    } else {
      for (let I = 0; I < nb; I++) blockMatVec(this.factors, I * bb, bs, r, I * bs, z, I * bs);
    }
    this.applies++;
  }

  /** Work model: lu: z ← r, then one luSolve per block row; inverse: one block mat-vec per block row. */
  work(): { setup: WorkCounts; apply: WorkCounts } {
    const { nBlockRows: nb, bs } = this.system.bsr;
    const once = this.mode === 'lu'
      ? addWork(vectorWork.copy(nb * bs), denseWork.luSolve(bs), nb)
      : scaledWork(denseWork.matVec(bs), nb);
    return { setup: { ...this.setupWork }, apply: { ...scaledWork(once, this.applies), preconditionerApplies: this.applies } };
  }

  memory(): BufferBytes {
    return this.mode === 'lu'
      ? { 'factors (diagonal-block LU)': this.factors.byteLength, pivots: this.pivots.byteLength }
      : { 'inverse blocks': this.factors.byteLength, workspace: this.scratch.byteLength + this.pivots.byteLength };
  }

  stats(): Record<string, unknown> {
    const { nBlockRows: nb, bs } = this.system.bsr;
    return { blockInverse: this.mode, shift: this.shift, shiftedPivots: this.shift !== 0 ? nb * bs : 0, setupFlops: this.setupFlops };
  }
}
