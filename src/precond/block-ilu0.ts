/**
 * Block ILU(0) on the BSR pattern: the block version of Saad 2003, Algorithm 10.4 (IKJ), with
 * dense bs×bs blocks: for each block row I, for each stored (I, K) with K < I,
 *   L_IK = A_IK · D_K⁻¹,   A_IJ −= L_IK · U_KJ for every stored (K, J), J > K, with (I, J) stored,
 * then D_I = A_II (+ shift·I) is factored by LU with partial pivoting and replaced by its explicit
 * inverse (so apply() uses block mat-vecs only). Fill outside the block pattern is dropped.
 * With bs = 1 this is point ILU(0). Pivot rule as in dense.ts (PIVOT_RTOL, per diagonal block).
 *
 * The ordering (recipe.ordering) permutes the matrix once in setup; apply() permutes vectors.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { OrderingName, Recipe } from '../solvers/recipe.js';
import type { Bsr } from '../sparse/types.js';
import type { BufferBytes } from '../solvers/types.js';
import { checkApplyArgs, checkReady, factorBlock, nonFinite } from './common.js';
import { allFinite, blockGemm, blockGemmSub, blockMatVec, blockMatVecSub, denseFlops, luInverse } from './dense.js';
import { diagonalIndex, gatherBlocks, orderedMatrix, scatterBlocks } from './block-tools.js';

export function createBlockIlu0(system: SystemMatrix, recipe: Recipe): Preconditioner {
  return new BlockIlu0Preconditioner(system, recipe.ordering, recipe.shift);
}

export class BlockIlu0Preconditioner implements Preconditioner {
  readonly name = 'block-ilu0';
  readonly variable = false;
  readonly n: number;
  private a: Bsr;
  private perm: Int32Array | null = null;
  private factors: Float64Array = new Float64Array(0);
  private diag: Int32Array = new Int32Array(0);
  private yp: Float64Array = new Float64Array(0);
  private t: Float64Array = new Float64Array(0);
  private ready = false;
  private setupFlops = 0;

  constructor(private readonly system: SystemMatrix, private readonly ordering: OrderingName, private readonly shift: number) {
    this.a = system.bsr;
    this.n = system.bsr.nBlockRows * system.bsr.bs;
  }

  private blockRowName(I: number): number { return this.perm ? this.perm[I] : I; }

  setup(): SetupOutcome {
    // symbolic: ordering, permuted pattern, diagonal positions, workspace
    const ord = orderedMatrix(this.system.bsr, this.ordering, this.system.slabOffsets);
    this.a = ord.a;
    this.perm = ord.perm;
    const { nBlockRows: nb, bs, rowPtr, colInd } = this.a;
    const bb = bs * bs;
    const diag = diagonalIndex(this.a);
    for (let I = 0; I < nb; I++) {
      if (diag[I] < 0) {
        return { ok: false, reason: 'zero-pivot', blockRow: this.blockRowName(I),
          message: `block-ilu0: diagonal block of block row ${this.blockRowName(I)} is absent from the pattern; a diagonal shift (recipe shift > 0) avoids it only when the block is stored` };
      }
    }
    const f = ord.perm ? this.a.values : Float64Array.from(this.a.values); // a permuted copy is ours already
    const iw = new Int32Array(nb).fill(-1);
    const work = new Float64Array(2 * bb);
    const piv = new Int32Array(bs);
    this.yp = new Float64Array(ord.perm ? this.n : 0);
    this.t = new Float64Array(bs);
    // numeric
    let flops = 0;
    for (let I = 0; I < nb; I++) {
      const s = rowPtr[I], e = rowPtr[I + 1];
      if (!allFinite(f, s * bb, (e - s) * bb)) return nonFinite(this.name, this.blockRowName(I), 'the matrix blocks');
      for (let k = s; k < e; k++) iw[colInd[k]] = k;
      for (let k = s; k < diag[I]; k++) {
        const K = colInd[k];
        // L_IK = A_IK · D_K⁻¹ (D_K⁻¹ sits in the diagonal slot of row K)
        work.set(f.subarray(k * bb, k * bb + bb), 0);
        blockGemm(f, k * bb, work, 0, f, diag[K] * bb, bs);
        flops += denseFlops.gemm(bs);
        for (let q = diag[K] + 1; q < rowPtr[K + 1]; q++) {
          const p = iw[colInd[q]];
          if (p >= 0) { blockGemmSub(f, p * bb, f, k * bb, f, q * bb, bs); flops += denseFlops.gemm(bs); }
        }
      }
      for (let k = s; k < e; k++) iw[colInd[k]] = -1;
      const d = diag[I] * bb;
      work.set(f.subarray(d, d + bb), 0);
      const fail = factorBlock(this.name, this.blockRowName(I), work, 0, bs, piv, 0, this.shift);
      if (fail) return fail;
      luInverse(work, 0, piv, 0, bs, f, d);
      flops += denseFlops.inverse(bs);
      if (!allFinite(f, s * bb, (e - s) * bb)) return nonFinite(this.name, this.blockRowName(I), 'the factors');
    }
    this.factors = f;
    this.diag = diag;
    this.setupFlops = flops;
    this.ready = true;
    return { ok: true };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    const { nBlockRows: nb, bs, rowPtr, colInd } = this.a;
    const bb = bs * bs;
    const f = this.factors, diag = this.diag, t = this.t;
    let y = z;
    if (this.perm) { gatherBlocks(r, this.perm, bs, this.yp); y = this.yp; } else z.set(r);
    // forward: L unit block lower
    for (let I = 0; I < nb; I++) {
      for (let k = rowPtr[I]; k < diag[I]; k++) blockMatVecSub(f, k * bb, bs, y, colInd[k] * bs, y, I * bs);
    }
    // backward: y_I ← D_I⁻¹ (y_I − Σ_{J>I} U_IJ y_J)
    for (let I = nb - 1; I >= 0; I--) {
      const yo = I * bs;
      for (let k = diag[I] + 1; k < rowPtr[I + 1]; k++) blockMatVecSub(f, k * bb, bs, y, colInd[k] * bs, y, yo);
      for (let i = 0; i < bs; i++) t[i] = y[yo + i];
      blockMatVec(f, diag[I] * bb, bs, t, 0, y, yo);
    }
    if (this.perm) scatterBlocks(y, this.perm, bs, z);
  }

  /** Factor blocks on the (permuted) pattern: L_IK below, D_I⁻¹ on, U_IJ above the diagonal. */
  factorValues(): Float64Array { return this.factors; }

  memory(): BufferBytes {
    const m: BufferBytes = { 'factors (L, U and inverse diagonal blocks)': this.factors.byteLength };
    m['diagonal positions'] = this.diag.byteLength;
    if (this.perm) {
      m.permutation = this.perm.byteLength;
      m['permuted pattern'] = this.a.rowPtr.byteLength + this.a.colInd.byteLength;
    }
    m.workspace = this.yp.byteLength + this.t.byteLength;
    return m;
  }

  stats(): Record<string, unknown> {
    const { nBlockRows: nb, bs } = this.a;
    return { ordering: this.ordering, shift: this.shift, shiftedPivots: this.shift !== 0 ? nb * bs : 0, setupFlops: this.setupFlops };
  }
}
