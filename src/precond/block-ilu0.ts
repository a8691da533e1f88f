/**
 * Block ILU(0) on the BSR pattern: the block version of Saad 2003, Algorithm 10.4 (IKJ), with
 * dense bs×bs blocks: for each block row I, for each stored (I, K) with K < I,
 *   L_IK = A_IK · D_K⁻¹,   A_IJ −= L_IK · U_KJ for every stored (K, J), J > K, with (I, J) stored,
 * then D_I = A_II (+ shift·I) is factored by LU with partial pivoting and replaced by its explicit
 * inverse (so apply() uses block mat-vecs only). Fill outside the block pattern is dropped.
 *
 * Storage in sweep order: the factors are not kept on the pattern of A but in two arrays that the
 * two triangular sweeps of apply() each read front to back, so both stream contiguous memory:
 *  - lower: the L blocks of block rows 0, 1, …, nb−1 (columns ascending within a row);
 *  - upper: for block rows nb−1, nb−2, …, 0 the U blocks (columns ascending), then D_I⁻¹.
 * Reading the L blocks where they sit on the pattern (skipping the D and U blocks between rows)
 * made the forward sweep 1.8–2× slower than the same sweep over a contiguous copy
 * (bench/precond.bench.ts measures both layouts). Setup eliminates one block row at a time in a
 * row buffer, reading the finished rows K < I from upper; a reordered row is gathered from A on
 * the fly. So neither a pattern-ordered nor a permuted copy of the matrix is ever held: peak =
 * A (the caller's) + lower + upper + one row.
 * With bs = 1 this is point ILU(0). Pivot rule as in dense.ts (PIVOT_RTOL, per diagonal block).
 *
 * The ordering (recipe.ordering) renumbers the block rows and columns in setup (row I of the
 * factors is block row perm[I] of A); apply() permutes vectors.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { OrderingName, Recipe } from '../solvers/recipe.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { checkApplyArgs, checkReady, factorBlock, nonFinite } from './common.js';
import { allFinite, blockGemm, blockGemmSub, blockMatVec, blockMatVecSub, denseFlops, luInverse } from './dense.js';
import { addWork, blockSweepWork, denseWork, kernel, scaledWork, vectorWork, zeroWork } from '../solvers/work.js';
import { gatherBlocks, invertPermutation, orderingPermutation, scatterBlocks } from './block-tools.js';
import { allInArena, kernelCopyI32, kernelF64, kernelI32, ptr, wasmFor } from '../kernels-host/arena.js';

export function createBlockIlu0(system: SystemMatrix, recipe: Recipe): Preconditioner {
  return new BlockIlu0Preconditioner(system, recipe.ordering, recipe.shift);
}

export class BlockIlu0Preconditioner implements Preconditioner {
  readonly name = 'block-ilu0';
  readonly variable = false;
  readonly n: number;
  private readonly nb: number;
  private readonly bs: number;
  private perm: Int32Array | null = null;
  /** L blocks, block rows ascending; row I at lowerPtr[I] .. lowerPtr[I+1] (block units). */
  private lower: Float64Array = new Float64Array(0);
  private lowerPtr: Int32Array = new Int32Array(0);
  private lowerCol: Int32Array = new Int32Array(0);
  /** U blocks then D_I⁻¹, block rows descending: row I at upperPtr[nb−1−I] .. upperPtr[nb−I], D_I⁻¹ last. */
  private upper: Float64Array = new Float64Array(0);
  private upperPtr: Int32Array = new Int32Array(0);
  private upperCol: Int32Array = new Int32Array(0);
  private yp: Float64Array = new Float64Array(0);
  private t: Float64Array = new Float64Array(0);
  private ready = false;
  private setupFlops = 0;
  private applies = 0;
  private setupWork: WorkCounts = zeroWork();

  constructor(private readonly system: SystemMatrix, private readonly ordering: OrderingName, private readonly shift: number) {
    this.nb = system.bsr.nBlockRows;
    this.bs = system.bsr.bs;
    this.n = this.nb * this.bs;
  }

  setup(): SetupOutcome {
    const { nBlockRows: nb, bs, rowPtr, colInd, values } = this.system.bsr;
    const perm = orderingPermutation(this.system.bsr, this.ordering, this.system.slabOffsets);
    this.perm = perm ? kernelCopyI32(perm) : null;
    const inv = perm ? invertPermutation(perm) : null;
    const bb = bs * bs;
    this.applies = 0;
    // work model: the symbolic pass reads the pattern (row pointers, column indices); the numeric
    // pass is added per block row below. Orderings do no floating-point work and are not counted.
    const sw = kernel(0, 4 * (nb + 1) + 4 * colInd.length);
    this.setupWork = sw;
    // symbolic: per (renumbered) block row I, read from block row R = perm[I] of A: blocks left of,
    // on and right of the diagonal; the sweep-ordered layout; workspace
    const lowerPtr = kernelI32(nb + 1);
    const upperPtr = kernelI32(nb + 1); // storage order: step s holds block row nb−1−s
    let maxRow = 0;
    for (let I = 0; I < nb; I++) {
      const R = perm ? perm[I] : I;
      let below = 0, onDiagonal = false;
      for (let k = rowPtr[R]; k < rowPtr[R + 1]; k++) {
        const J = inv ? inv[colInd[k]] : colInd[k];
        if (J < I) below++; else if (J === I) onDiagonal = true;
      }
      if (!onDiagonal) {
        return { ok: false, reason: 'zero-pivot', blockRow: R,
          message: `block-ilu0: diagonal block of block row ${R} is absent from the pattern; a diagonal shift (recipe shift > 0) avoids it only when the block is stored` };
      }
      lowerPtr[I + 1] = lowerPtr[I] + below;
      maxRow = Math.max(maxRow, rowPtr[R + 1] - rowPtr[R]);
    }
    for (let s = 0; s < nb; s++) {
      const I = nb - 1 - s, R = perm ? perm[I] : I;
      upperPtr[s + 1] = upperPtr[s] + (rowPtr[R + 1] - rowPtr[R]) - (lowerPtr[I + 1] - lowerPtr[I]);
    }
    const nLower = lowerPtr[nb], nUpper = upperPtr[nb];
    // kernel memory (src/kernels-host) when a solve set one up: apply() and the dense kernels of the
    // numeric phase then run in WebAssembly
    const lower = kernelF64(nLower * bb);
    const lowerCol = kernelI32(nLower);
    const upper = kernelF64(nUpper * bb);
    const upperCol = kernelI32(nUpper);
    const row = kernelF64(maxRow * bb);
    const cols = new Int32Array(maxRow), src = new Int32Array(maxRow);
    const iw = new Int32Array(nb).fill(-1);
    const work = kernelF64(bb);
    const piv = kernelI32(bs);
    this.yp = kernelF64(perm ? this.n : 0);
    this.t = kernelF64(bs);
    // numeric: row I is gathered into the row buffer in column order (position p), eliminated
    // against the finished rows K < I in upper, then written out to lower and upper
    let flops = 0;
    for (let I = 0; I < nb; I++) {
      const R = perm ? perm[I] : I;
      const s = rowPtr[R], len = rowPtr[R + 1] - s;
      // row I: scanned, its blocks gathered into the row buffer, and the row written out to the factors
      // (L and U blocks copied, D⁻¹ by luInverse, then scanned); its column indices read twice
      addWork(sw, kernel(0, 4 * 2 * len), 1);
      addWork(sw, denseWork.scan(bs), len);
      if (!allFinite(values, s * bb, len * bb)) return nonFinite(this.name, R, 'the matrix blocks');
      addWork(sw, denseWork.copy(bs), len);
      for (let p = 0; p < len; p++) { // insertion sort by renumbered column (rows are short; A's rows are sorted)
        const J = inv ? inv[colInd[s + p]] : colInd[s + p];
        let q = p;
        for (; q > 0 && cols[q - 1] > J; q--) { cols[q] = cols[q - 1]; src[q] = src[q - 1]; }
        cols[q] = J; src[q] = s + p;
      }
      for (let p = 0; p < len; p++) {
        row.set(values.subarray(src[p] * bb, src[p] * bb + bb), p * bb);
        iw[cols[p]] = p;
      }
      const dp = lowerPtr[I + 1] - lowerPtr[I]; // cols[dp] === I
      for (let p = 0; p < dp; p++) {
        const K = cols[p];
        const uK = upperPtr[nb - 1 - K], dK = upperPtr[nb - K] - 1; // D_K⁻¹ closes row K
        // L_IK = A_IK · D_K⁻¹
        work.set(row.subarray(p * bb, p * bb + bb), 0);
        blockGemm(row, p * bb, work, 0, upper, dK * bb, bs);
        flops += denseFlops.gemm(bs);
        addWork(sw, denseWork.copy(bs));
        addWork(sw, denseWork.gemm(bs));
        let updates = 0;
        for (let q = uK; q < dK; q++) {
          const pos = iw[upperCol[q]];
          if (pos >= 0) { blockGemmSub(row, pos * bb, row, p * bb, upper, q * bb, bs); flops += denseFlops.gemm(bs); updates++; }
        }
        // the scan of row K's U part reads its column indices; each matching block is one C −= A·B
        addWork(sw, kernel(0, 4 * (dK - uK)));
        addWork(sw, denseWork.gemmSub(bs), updates);
      }
      for (let p = 0; p < len; p++) iw[cols[p]] = -1;
      work.set(row.subarray(dp * bb, dp * bb + bb), 0);
      addWork(sw, denseWork.copy(bs));
      addWork(sw, denseWork.factorBlock(bs, this.shift));
      const fail = factorBlock(this.name, R, work, 0, bs, piv, 0, this.shift);
      if (fail) return fail;
      addWork(sw, denseWork.inverse(bs));
      addWork(sw, denseWork.copy(bs), len - 1);
      addWork(sw, denseWork.scan(bs), len);
      const uI = upperPtr[nb - 1 - I], dI = upperPtr[nb - I] - 1;
      luInverse(work, 0, piv, 0, bs, upper, dI * bb);
      upperCol[dI] = I;
      flops += denseFlops.inverse(bs);
      lower.set(row.subarray(0, dp * bb), lowerPtr[I] * bb);
      lowerCol.set(cols.subarray(0, dp), lowerPtr[I]);
      upper.set(row.subarray((dp + 1) * bb, len * bb), uI * bb);
      upperCol.set(cols.subarray(dp + 1, len), uI);
      if (!allFinite(lower, lowerPtr[I] * bb, dp * bb) || !allFinite(upper, uI * bb, (dI - uI + 1) * bb)) {
        return nonFinite(this.name, R, 'the factors');
      }
    }
    this.lower = lower; this.lowerPtr = lowerPtr; this.lowerCol = lowerCol;
    this.upper = upper; this.upperPtr = upperPtr; this.upperCol = upperCol;
    this.setupFlops = flops;
    this.ready = true;
    return { ok: true };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    const nb = this.nb, bs = this.bs, bb = bs * bs;
    const lower = this.lower, lowerPtr = this.lowerPtr, lowerCol = this.lowerCol;
    const upper = this.upper, upperPtr = this.upperPtr, upperCol = this.upperCol, t = this.t;
    const perm = this.perm;
    if (allInArena([r, z, lower, upper, lowerPtr, lowerCol, upperPtr, upperCol, t, this.yp, perm])) {
      const k = wasmFor(r)!;
      const y = perm ? this.yp : z;
      if (perm) k.gatherBlocks(nb, ptr(r), ptr(perm), bs, ptr(y)); else z.set(r);
      k.blockIluSweeps(nb, bs, ptr(lowerPtr), ptr(lowerCol), ptr(lower), ptr(upperPtr), ptr(upperCol), ptr(upper), ptr(y), ptr(t));
      if (perm) k.scatterBlocks(nb, ptr(y), ptr(perm), bs, ptr(z));
      this.applies++;
      return;
    }
    let y = z;
    if (this.perm) { gatherBlocks(r, this.perm, bs, this.yp); y = this.yp; } else z.set(r);
    // forward: L unit block lower; lower is read front to back
    for (let I = 0; I < nb; I++) {
      const yo = I * bs;
      for (let q = lowerPtr[I]; q < lowerPtr[I + 1]; q++) blockMatVecSub(lower, q * bb, bs, y, lowerCol[q] * bs, y, yo);
    }
    // backward: y_I ← D_I⁻¹ (y_I − Σ_{J>I} U_IJ y_J); upper is read front to back (rows descending)
    for (let s = 0; s < nb; s++) {
      const I = nb - 1 - s, yo = I * bs, dI = upperPtr[s + 1] - 1;
      for (let q = upperPtr[s]; q < dI; q++) blockMatVecSub(upper, q * bb, bs, y, upperCol[q] * bs, y, yo);
      for (let i = 0; i < bs; i++) t[i] = y[yo + i];
      blockMatVec(upper, dI * bb, bs, t, 0, y, yo);
    }
    if (this.perm) scatterBlocks(y, this.perm, bs, z);
    this.applies++;
  }

  /**
   * Work model of one apply: gather into the new order (or z ← r), the forward sweep over the L
   * blocks, the backward sweep over the U blocks and the D⁻¹ blocks (one block mat-vec each; no
   * column index is read for D⁻¹), the scatter back.
   */
  work(): { setup: WorkCounts; apply: WorkCounts } {
    const { nb, bs } = this;
    const once = this.perm ? vectorWork.permute(nb, bs) : vectorWork.copy(this.n);
    addWork(once, blockSweepWork(nb, bs, this.lowerPtr[nb] ?? 0));
    addWork(once, blockSweepWork(nb, bs, this.upperPtr[nb] ?? 0));
    addWork(once, kernel(0, -4 * nb));
    if (this.perm) addWork(once, vectorWork.permute(nb, bs));
    return { setup: { ...this.setupWork }, apply: { ...scaledWork(once, this.applies), preconditionerApplies: this.applies } };
  }

  /**
   * The factors on the (permuted) block pattern, row by row: L_IK below, D_I⁻¹ on, U_IJ above the
   * diagonal. Assembled from the sweep-ordered storage on each call (a new array; for tests and
   * inspection, not for a solve).
   */
  factorValues(): Float64Array {
    const nb = this.nb, bb = this.bs * this.bs;
    const out = new Float64Array(this.lower.length + this.upper.length);
    let o = 0;
    for (let I = 0; I < nb; I++) {
      const nl = this.lowerPtr[I + 1] - this.lowerPtr[I];
      out.set(this.lower.subarray(this.lowerPtr[I] * bb, (this.lowerPtr[I] + nl) * bb), o * bb);
      o += nl;
      const uI = this.upperPtr[nb - 1 - I], uEnd = this.upperPtr[nb - I];
      const nu = uEnd - uI; // U blocks + D_I⁻¹ (last)
      out.set(this.upper.subarray((uEnd - 1) * bb, uEnd * bb), o * bb); // D_I⁻¹ comes first in pattern order
      out.set(this.upper.subarray(uI * bb, (uEnd - 1) * bb), (o + 1) * bb);
      o += nu;
    }
    return out;
  }

  memory(): BufferBytes {
    const m: BufferBytes = { 'factors (L, U and inverse diagonal blocks)': this.lower.byteLength + this.upper.byteLength };
    m['factor pattern'] = this.lowerPtr.byteLength + this.lowerCol.byteLength + this.upperPtr.byteLength + this.upperCol.byteLength;
    if (this.perm) m.permutation = this.perm.byteLength;
    m.workspace = this.yp.byteLength + this.t.byteLength;
    return m;
  }

  stats(): Record<string, unknown> {
    const { nb, bs } = this;
    return { ordering: this.ordering, shift: this.shift, shiftedPivots: this.shift !== 0 ? nb * bs : 0, setupFlops: this.setupFlops };
  }
}
