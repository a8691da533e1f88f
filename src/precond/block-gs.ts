/**
 * Block Gauss–Seidel / block SOR as a preconditioner: z ← (result of `sweeps` sweeps of
 *   x_I ← (1 − ω) x_I + ω (A_II + shift·I)⁻¹ (r_I − Σ_{J≠I} A_IJ x_J)
 * from x = 0), forward (I ascending), backward (descending) or symmetric (forward then backward
 * in each sweep), in the block order given by recipe.ordering. One forward sweep from zero is
 * M = D/ω + L (Saad 2003, §4.1: block SOR); its inverse applied to r.
 *
 * The ordering is applied once in setup (the matrix is permuted); apply() gathers r into the
 * permuted order and scatters the result back, so callers never see the permutation.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { BlockInverse, OrderingName, Recipe, SweepDirection } from '../solvers/recipe.js';
import type { Bsr } from '../sparse/types.js';
import type { BufferBytes } from '../solvers/types.js';
import { UserError } from '../util/errors.js';
import { checkApplyArgs, checkReady, factorBlock } from './common.js';
import { blockMatVec, blockMatVecSub, denseFlops, luInverse, luSolve } from './dense.js';
import { diagonalIndex, gatherBlocks, orderedMatrix, scatterBlocks } from './block-tools.js';

export function createBlockGs(system: SystemMatrix, recipe: Recipe): Preconditioner {
  if (!(recipe.omega > 0 && recipe.omega < 2)) {
    throw new UserError(`recipe ${recipe.name}: block-gs omega ${recipe.omega} is outside (0, 2)`);
  }
  if (!Number.isInteger(recipe.sweeps) || recipe.sweeps < 1) {
    throw new UserError(`recipe ${recipe.name}: block-gs sweeps ${recipe.sweeps} is not a positive integer`);
  }
  return new BlockGsPreconditioner(system, recipe);
}

class BlockGsPreconditioner implements Preconditioner {
  readonly name = 'block-gs';
  readonly variable = false;
  readonly n: number;
  private a: Bsr;
  private perm: Int32Array | null = null;
  private diagFactors: Float64Array = new Float64Array(0);
  private pivots: Int32Array = new Int32Array(0);
  private rp: Float64Array = new Float64Array(0);
  private xp: Float64Array = new Float64Array(0);
  private t: Float64Array = new Float64Array(0);
  private ready = false;
  private setupFlops = 0;
  private readonly sweep: SweepDirection;
  private readonly ordering: OrderingName;
  private readonly omega: number;
  private readonly sweeps: number;
  private readonly shift: number;
  private readonly mode: BlockInverse;

  constructor(private readonly system: SystemMatrix, recipe: Recipe) {
    this.a = system.bsr;
    this.n = system.bsr.nBlockRows * system.bsr.bs;
    this.sweep = recipe.sweep;
    this.ordering = recipe.ordering;
    this.omega = recipe.omega;
    this.sweeps = recipe.sweeps;
    this.shift = recipe.shift;
    this.mode = recipe.blockInverse;
  }

  setup(): SetupOutcome {
    const ord = orderedMatrix(this.system.bsr, this.ordering, this.system.slabOffsets);
    this.a = ord.a;
    this.perm = ord.perm;
    const { nBlockRows: nb, bs, values } = this.a;
    const bb = bs * bs;
    const diag = diagonalIndex(this.a);
    this.diagFactors = new Float64Array(nb * bb);
    this.pivots = new Int32Array(this.mode === 'lu' ? nb * bs : bs);
    this.t = new Float64Array(this.mode === 'lu' ? bs : 2 * bs + bb);
    for (let I = 0; I < nb; I++) {
      const fo = I * bb;
      const lu = this.mode === 'lu';
      const dst = lu ? this.diagFactors : this.t;
      const so = lu ? fo : 2 * bs;
      if (diag[I] >= 0) dst.set(values.subarray(diag[I] * bb, diag[I] * bb + bb), so);
      else dst.fill(0, so, so + bb);
      const fail = factorBlock(this.name, this.blockRowName(I), dst, so, bs, this.pivots, lu ? I * bs : 0, this.shift);
      if (fail) return fail;
      if (!lu) luInverse(this.t, so, this.pivots, 0, bs, this.diagFactors, fo);
    }
    this.setupFlops = nb * (this.mode === 'lu' ? denseFlops.lu(bs) : denseFlops.inverse(bs));
    this.rp = this.perm ? new Float64Array(this.n) : new Float64Array(0);
    this.xp = this.perm ? new Float64Array(this.n) : new Float64Array(0);
    this.ready = true;
    return { ok: true };
  }

  /** Block row in the caller's (original) numbering. */
  private blockRowName(I: number): number { return this.perm ? this.perm[I] : I; }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    const bs = this.a.bs;
    let rhs = r, x = z;
    if (this.perm) {
      gatherBlocks(r, this.perm, bs, this.rp);
      rhs = this.rp; x = this.xp;
    }
    x.fill(0);
    let first = true;
    for (let s = 0; s < this.sweeps; s++) {
      if (this.sweep !== 'backward') { this.sweepOnce(rhs, x, true, first); first = false; }
      if (this.sweep !== 'forward') { this.sweepOnce(rhs, x, false, first); first = false; }
    }
    if (this.perm) scatterBlocks(x, this.perm, bs, z);
  }

  /**
   * One sweep. On the first sweep from x = 0 the blocks not yet visited are zero, so only the
   * already-visited side of each row is used (forward: J < I; backward: J > I).
   */
  private sweepOnce(rhs: Float64Array, x: Float64Array, forward: boolean, first: boolean): void {
    const { nBlockRows: nb, bs, rowPtr, colInd, values } = this.a;
    const bb = bs * bs;
    const t = this.t, f = this.diagFactors, piv = this.pivots;
    const omega = this.omega;
    const lu = this.mode === 'lu';
    const tIn = lu ? 0 : bs; // with inverses, t[0..bs) holds the result and t[bs..2bs) the residual
    for (let step = 0; step < nb; step++) {
      const I = forward ? step : nb - 1 - step;
      const xo = I * bs;
      for (let i = 0; i < bs; i++) t[tIn + i] = rhs[xo + i];
      for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
        const J = colInd[k];
        if (J === I) continue;
        if (first && (forward ? J > I : J < I)) continue;
        blockMatVecSub(values, k * bb, bs, x, J * bs, t, tIn);
      }
      if (lu) luSolve(f, I * bb, piv, I * bs, bs, t, 0);
      else blockMatVec(f, I * bb, bs, t, bs, t, 0);
      if (omega === 1) for (let i = 0; i < bs; i++) x[xo + i] = t[i];
      else for (let i = 0; i < bs; i++) x[xo + i] = (1 - omega) * x[xo + i] + omega * t[i];
    }
  }

  memory(): BufferBytes {
    const m: BufferBytes = {};
    m[this.mode === 'lu' ? 'factors (diagonal-block LU)' : 'inverse blocks'] = this.diagFactors.byteLength;
    if (this.mode === 'lu') m.pivots = this.pivots.byteLength;
    if (this.perm) {
      m.permutation = this.perm.byteLength;
      m['permuted matrix'] = this.a.rowPtr.byteLength + this.a.colInd.byteLength + this.a.values.byteLength;
    }
    m.workspace = this.rp.byteLength + this.xp.byteLength + this.t.byteLength + (this.mode === 'lu' ? 0 : this.pivots.byteLength);
    return m;
  }

  stats(): Record<string, unknown> {
    const { nBlockRows: nb, bs } = this.a;
    return {
      sweep: this.sweep, sweeps: this.sweeps, omega: this.omega, ordering: this.ordering,
      blockInverse: this.mode, shift: this.shift, shiftedPivots: this.shift !== 0 ? nb * bs : 0,
      setupFlops: this.setupFlops,
    };
  }
}
