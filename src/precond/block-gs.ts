/**
 * Block Gauss–Seidel / block SOR as a preconditioner: z ← (result of `sweeps` sweeps of
 *   x_I ← (1 − ω) x_I + ω (A_II + shift·I)⁻¹ (r_I − Σ_{J≠I} A_IJ x_J)
 * from x = 0), forward (I ascending), backward (descending) or symmetric (forward then backward
 * in each sweep), in the block order given by recipe.ordering. One forward sweep from zero is
 * M = D/ω + L (Saad 2003, §4.1: block SOR); its inverse applied to r.
 *
 * The ordering only changes the order in which block rows are visited: A is read in place (no
 * permuted copy is made), a sweep visits block row perm[s] at step s, and "already visited" means
 * an earlier step (inv[J] < inv[I] going forward). Vectors stay in the caller's numbering, so
 * apply() needs no gather or scatter; the diagonal-block factors are stored in visiting order.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { BlockInverse, OrderingName, Recipe, SweepDirection } from '../solvers/recipe.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { addWork, denseWork, kernel, scaledWork, vectorWork, zeroWork } from '../solvers/work.js';
import { UserError } from '../util/errors.js';
import { checkApplyArgs, checkReady, diagonalSetupWork, factorBlock } from './common.js';
import { blockMatVec, blockMatVecSub, denseFlops, luInverse, luSolve } from './dense.js';
import { diagonalIndex, invertPermutation, orderingPermutation } from './block-tools.js';
import { allInArena, kernelCopyI32, kernelF64, kernelI32, ptr, wasmFor } from '../kernels-host/arena.js';

export function createBlockGs(system: SystemMatrix, recipe: Recipe): Preconditioner {
  if (!(recipe.omega > 0 && recipe.omega < 2)) {
    throw new UserError(`recipe ${recipe.name}: block-gs omega ${recipe.omega} is outside (0, 2)`);
  }
  if (!Number.isInteger(recipe.sweeps) || recipe.sweeps < 1) {
    throw new UserError(`recipe ${recipe.name}: block-gs sweeps ${recipe.sweeps} is not a positive integer`);
  }
  return new BlockGsPreconditioner(system, recipe);
}

const PREFIX_NONE = 0, PREFIX_STORE = 1, PREFIX_USE = 2;

class BlockGsPreconditioner implements Preconditioner {
  readonly name = 'block-gs';
  readonly variable = false;
  readonly n: number;
  /** Visiting order (perm[step] = block row) and its inverse; null for the natural order. */
  private perm: Int32Array | null = null;
  private inv: Int32Array | null = null;
  private diagFactors: Float64Array = new Float64Array(0);
  private pivots: Int32Array = new Int32Array(0);
  private t: Float64Array = new Float64Array(0);
  /** Symmetric sweeps, natural order: row partial sums after the blocks left of the diagonal. */
  private prefix: Float64Array = new Float64Array(0);
  private ready = false;
  private setupFlops = 0;
  private applies = 0;
  private setupWork: WorkCounts = zeroWork();
  private applyWork: WorkCounts = zeroWork();
  private readonly sweep: SweepDirection;
  private readonly ordering: OrderingName;
  private readonly omega: number;
  private readonly sweeps: number;
  private readonly shift: number;
  private readonly mode: BlockInverse;

  constructor(private readonly system: SystemMatrix, recipe: Recipe) {
    this.n = system.bsr.nBlockRows * system.bsr.bs;
    this.sweep = recipe.sweep;
    this.ordering = recipe.ordering;
    this.omega = recipe.omega;
    this.sweeps = recipe.sweeps;
    this.shift = recipe.shift;
    this.mode = recipe.blockInverse;
  }

  setup(): SetupOutcome {
    const a = this.system.bsr;
    const perm = orderingPermutation(a, this.ordering, this.system.slabOffsets);
    this.perm = perm ? kernelCopyI32(perm) : null;
    this.inv = perm ? kernelCopyI32(invertPermutation(perm)) : null;
    const { nBlockRows: nb, bs, values } = a;
    const bb = bs * bs;
    const diag = diagonalIndex(a);
    this.applies = 0;
    const work = diagonalSetupWork(nb, a.colInd.length, bs, this.shift, this.mode === 'inverse');
    let present = 0;
    this.diagFactors = kernelF64(nb * bb);
    this.pivots = kernelI32(this.mode === 'lu' ? nb * bs : bs);
    this.t = kernelF64(this.mode === 'lu' ? bs : 2 * bs + bb);
    this.prefix = kernelF64(this.sweep === 'symmetric' && this.perm === null ? nb * bs : 0);
    for (let step = 0; step < nb; step++) {
      const I = this.perm ? this.perm[step] : step;
      const fo = step * bb;
      const lu = this.mode === 'lu';
      const dst = lu ? this.diagFactors : this.t;
      const so = lu ? fo : 2 * bs;
      if (diag[I] >= 0) present++;
      if (diag[I] >= 0) dst.set(values.subarray(diag[I] * bb, diag[I] * bb + bb), so);
      else dst.fill(0, so, so + bb);
      const fail = factorBlock(this.name, I, dst, so, bs, this.pivots, lu ? step * bs : 0, this.shift);
      if (fail) { this.setupWork = work(step + 1, present); return fail; }
      if (!lu) luInverse(this.t, so, this.pivots, 0, bs, this.diagFactors, fo);
    }
    this.setupFlops = nb * (this.mode === 'lu' ? denseFlops.lu(bs) : denseFlops.inverse(bs));
    this.setupWork = work(nb, present);
    this.applyWork = this.applyModel(present);
    this.ready = true;
    return { ok: true };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    z.fill(0);
    let first = true;
    // symmetric sweeps in the natural order: the forward sweep keeps each row's partial sum after
    // its blocks left of the diagonal (prefix), and the backward sweep starts from it instead of
    // subtracting those blocks again (the same x values, the same operations in the same order, so
    // the same result, reading A's lower blocks once per symmetric sweep instead of twice)
    const reuse = this.prefix.length > 0;
    for (let s = 0; s < this.sweeps; s++) {
      if (this.sweep !== 'backward') { this.sweepOnce(r, z, true, first, reuse ? PREFIX_STORE : PREFIX_NONE); first = false; }
      if (this.sweep !== 'forward') { this.sweepOnce(r, z, false, first, reuse ? PREFIX_USE : PREFIX_NONE); first = false; }
    }
    this.applies++;
  }

  /**
   * Work model of one apply: z ← 0, then per sweep pass (forward or backward): the off-diagonal
   * blocks it uses (all of them, except in the first pass from zero: only the already-visited side)
   * as block mat-vec subtractions, one diagonal solve per block row (luSolve or a block mat-vec with
   * the inverse), 4 flops per entry for the relaxation when ω ≠ 1; bytes: row pointers, every
   * column index of the block rows, the used blocks, the diagonal factors (and pivots), the visiting
   * order (and its inverse in the first pass), the right-hand side and x read, x written.
   */
  private applyModel(diagonalPresent: number): WorkCounts {
    const { nBlockRows: nb, bs, rowPtr, colInd } = this.system.bsr;
    const bb = bs * bs, n = nb * bs;
    const inv = this.inv;
    let visitedBefore = 0, visitedAfter = 0; // off-diagonal blocks whose column is visited earlier / later
    for (let I = 0; I < nb; I++) {
      const sI = inv ? inv[I] : I;
      for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
        const J = colInd[k];
        if (J === I) continue;
        if ((inv ? inv[J] : J) < sI) visitedBefore++; else visitedAfter++;
      }
    }
    const offDiagonal = colInd.length - diagonalPresent;
    const lu = this.mode === 'lu';
    const pass = (used: number, first: boolean): WorkCounts => {
      const w = kernel(2 * bb * used, 4 * (nb + 1) + 4 * colInd.length + 8 * bb * used + 8 * bb * nb + (lu ? 4 * bs * nb : 0)
        + (this.perm ? 4 * nb : 0) + (first && inv ? 4 * offDiagonal : 0) + 24 * n);
      addWork(w, kernel((lu ? 2 * bb - bs : 2 * bb) * nb + (this.omega === 1 ? 0 : 4 * n), 0));
      return w;
    };
    const total = vectorWork.fill(n);
    const reuse = this.prefix.length > 0;
    let first = true;
    for (let s = 0; s < this.sweeps; s++) {
      if (this.sweep !== 'backward') {
        addWork(total, pass(first ? visitedBefore : offDiagonal, first));
        if (reuse) addWork(total, kernel(0, 8 * n)); // the row prefixes stored
        first = false;
      }
      // with reused prefixes the backward pass reads only the blocks right of the diagonal
      if (this.sweep !== 'forward') { addWork(total, pass(first || reuse ? visitedAfter : offDiagonal, first)); first = false; }
    }
    return total;
  }

  work(): { setup: WorkCounts; apply: WorkCounts } {
    return { setup: { ...this.setupWork }, apply: { ...scaledWork(this.applyWork, this.applies), preconditionerApplies: this.applies } };
  }

  /**
   * One sweep over the block rows in visiting order (forward) or its reverse. On the first sweep
   * from x = 0 the blocks not yet visited are zero, so only the already-visited side of each row is
   * used (forward: earlier steps; backward: later steps).
   */
  private sweepOnce(rhs: Float64Array, x: Float64Array, forward: boolean, first: boolean, prefixMode: number): void {
    const { nBlockRows: nb, bs, rowPtr, colInd, values } = this.system.bsr;
    const bb = bs * bs;
    const t = this.t, f = this.diagFactors, piv = this.pivots, perm = this.perm, inv = this.inv;
    const omega = this.omega;
    const lu = this.mode === 'lu';
    const prefix = this.prefix;
    if (allInArena([rowPtr, colInd, values, rhs, x, t, f, piv, perm, inv, prefix])) {
      wasmFor(x)!.blockGsSweep(nb, bs, ptr(rowPtr), ptr(colInd), ptr(values), perm ? ptr(perm) : 0, inv ? ptr(inv) : 0,
        ptr(f), ptr(piv), lu ? 1 : 0, ptr(rhs), ptr(x), ptr(t), forward ? 1 : 0, first ? 1 : 0, omega,
        prefixMode === PREFIX_NONE ? 0 : ptr(prefix), prefixMode);
      return;
    }
    const tIn = lu ? 0 : bs; // with inverses, t[0..bs) holds the result and t[bs..2bs) the residual
    for (let i = 0; i < nb; i++) {
      const step = forward ? i : nb - 1 - i;
      const I = perm ? perm[step] : step;
      const xo = I * bs;
      let k = rowPtr[I];
      const end = rowPtr[I + 1];
      if (prefixMode === PREFIX_USE) {
        for (let q = 0; q < bs; q++) t[tIn + q] = prefix[xo + q];
        while (k < end && colInd[k] <= I) k++;
      } else {
        for (let q = 0; q < bs; q++) t[tIn + q] = rhs[xo + q];
        if (prefixMode === PREFIX_STORE) {
          for (; k < end && colInd[k] < I; k++) blockMatVecSub(values, k * bb, bs, x, colInd[k] * bs, t, tIn);
          for (let q = 0; q < bs; q++) prefix[xo + q] = t[tIn + q];
        }
      }
      for (; k < end; k++) {
        const J = colInd[k];
        if (J === I) continue;
        if (first) {
          const sJ = inv ? inv[J] : J;
          if (forward ? sJ > step : sJ < step) continue;
        }
        blockMatVecSub(values, k * bb, bs, x, J * bs, t, tIn);
      }
      if (lu) luSolve(f, step * bb, piv, step * bs, bs, t, 0);
      else blockMatVec(f, step * bb, bs, t, bs, t, 0);
      if (omega === 1) for (let q = 0; q < bs; q++) x[xo + q] = t[q];
      else for (let q = 0; q < bs; q++) x[xo + q] = (1 - omega) * x[xo + q] + omega * t[q];
    }
  }

  memory(): BufferBytes {
    const m: BufferBytes = {};
    m[this.mode === 'lu' ? 'factors (diagonal-block LU)' : 'inverse blocks'] = this.diagFactors.byteLength;
    if (this.mode === 'lu') m.pivots = this.pivots.byteLength;
    if (this.perm && this.inv) m['visiting order and its inverse'] = this.perm.byteLength + this.inv.byteLength;
    m.workspace = this.t.byteLength + (this.mode === 'lu' ? 0 : this.pivots.byteLength);
    if (this.prefix.length > 0) m['row prefixes (symmetric sweeps)'] = this.prefix.byteLength;
    return m;
  }

  stats(): Record<string, unknown> {
    const { nBlockRows: nb, bs } = this.system.bsr;
    return {
      sweep: this.sweep, sweeps: this.sweeps, omega: this.omega, ordering: this.ordering,
      blockInverse: this.mode, shift: this.shift, shiftedPivots: this.shift !== 0 ? nb * bs : 0,
      setupFlops: this.setupFlops,
    };
  }
}
