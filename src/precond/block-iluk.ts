/**
 * Block ILU(k): incomplete block LU with level-of-fill k on the block graph (Saad 2003, §10.3.3;
 * the level rule is in src/sparse/fill-levels.ts). Numerically it is block ILU(0) on the level-k
 * pattern: A's blocks scattered into that pattern, fill positions starting as zero blocks, then
 * the same IKJ elimination (block-ilu0.ts), whose pattern-restricted updates are then exactly
 * the level-k factorization. k = 0 is block ILU(0).
 *
 * Setup holds, for a moment, A in the chosen ordering (when it is not natural) and the extended
 * matrix on the level-k pattern; both are dropped once the factors are built, so what stays is the
 * factors (sweep order, as block-ilu0 keeps them), the permutation and two work vectors.
 */
import { totalmem } from 'node:os';
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { OrderingName, Recipe } from '../solvers/recipe.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { addWork, kernel, scaledWork, vectorWork, zeroWork } from '../solvers/work.js';
import { kernelCopyI32, kernelF64 } from '../kernels-host/arena.js';
import type { Bsr } from '../sparse/types.js';
import { permuteBsr } from '../sparse/permute.js';
import { fillPattern } from '../sparse/fill-levels.js';
import { checkApplyArgs, checkReady } from './common.js';
import { BlockIlu0Preconditioner } from './block-ilu0.js';
import { gatherBlocks, orderingPermutation, scatterBlocks } from './block-tools.js';

export function createBlockIluk(system: SystemMatrix, recipe: Recipe): Preconditioner {
  return new BlockIlukPreconditioner(system, recipe.ordering, recipe.shift, recipe.fillLevel);
}

export class BlockIlukPreconditioner implements Preconditioner {
  readonly name = 'block-iluk';
  readonly variable = false;
  readonly n: number;
  private readonly bs: number;
  private perm: Int32Array | null = null;
  private inner: BlockIlu0Preconditioner | null = null;
  private rp: Float64Array = new Float64Array(0);
  private zp: Float64Array = new Float64Array(0);
  private ready = false;
  private blocksPerLevel: number[] = [];
  private nFactorBlocks = 0;
  private copyWork: WorkCounts = zeroWork();
  private applies = 0;

  constructor(
    private readonly system: SystemMatrix, private readonly ordering: OrderingName,
    private readonly shift: number, private readonly fillLevel: number,
  ) {
    this.bs = system.bsr.bs;
    this.n = system.bsr.nBlockRows * this.bs;
  }

  setup(): SetupOutcome {
    const a = this.system.bsr;
    const bs = a.bs, bb = bs * bs;
    this.applies = 0;
    this.inner = null;
    this.ready = false;
    const perm = orderingPermutation(a, this.ordering, this.system.slabOffsets);
    this.perm = perm;
    const ap = perm ? permuteBsr(a, perm) : a;
    // the factors must fit: at most half the machine's memory for their values (our limit)
    const maxBlocks = Math.floor(totalmem() / 2 / (8 * bb));
    const pat = fillPattern(ap, this.fillLevel, maxBlocks);
    if ('tooBig' in pat) {
      return {
        ok: false, reason: 'invalid', blockRow: perm ? perm[pat.tooBig]! : pat.tooBig,
        message: `block-iluk: the level-${this.fillLevel} pattern outgrows ${maxBlocks} blocks (half the machine's memory) by block row ${pat.tooBig}; use a lower fill level`,
      };
    }
    // A's blocks scattered into the level-k pattern (both sorted by column in each row)
    const values = kernelF64(pat.rowPtr[ap.nBlockRows]! * bb);
    for (let I = 0; I < ap.nBlockRows; I++) {
      let q = pat.rowPtr[I]!;
      for (let p = ap.rowPtr[I]!; p < ap.rowPtr[I + 1]!; p++) {
        while (pat.colInd[q] !== ap.colInd[p]) q++;
        values.set(ap.values.subarray(p * bb, (p + 1) * bb), q * bb);
      }
    }
    // data movement of setup (the elimination itself is block-ilu0's count): the reordered copy
    // of A (read + write), and zero-filling then scattering into the extended pattern
    const nA = a.rowPtr[a.nBlockRows]!;
    this.copyWork = kernel(0, (perm ? 2 * nA * bb * 8 : 0) + values.length * 8 + 2 * nA * bb * 8);
    // the pattern in kernel memory too, so the factorization and sweeps run on the WebAssembly kernels
    const extended: Bsr = { nBlockRows: ap.nBlockRows, nBlockCols: ap.nBlockCols, bs, rowPtr: kernelCopyI32(pat.rowPtr), colInd: kernelCopyI32(pat.colInd), values };
    // block-ilu0 reads only the block view
    const inner = new BlockIlu0Preconditioner({ bsr: extended } as SystemMatrix, 'natural', this.shift);
    const out = inner.setup();
    this.inner = inner;
    this.blocksPerLevel = pat.blocksPerLevel;
    this.nFactorBlocks = pat.rowPtr[ap.nBlockRows]!;
    if (!out.ok) {
      // name the block row in the caller's numbering, and this method
      const blockRow = out.blockRow !== undefined && perm ? perm[out.blockRow]! : out.blockRow;
      return { ...out, blockRow, message: out.message.replace(/^block-ilu0/, 'block-iluk').replace(/block row (\d+)/, () => `block row ${blockRow}`) };
    }
    this.rp = kernelF64(perm ? this.n : 0);
    this.zp = kernelF64(perm ? this.n : 0);
    this.ready = true;
    return { ok: true };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    this.applies++;
    const inner = this.inner!;
    if (this.perm === null) { inner.apply(r, z); return; }
    gatherBlocks(r, this.perm, this.bs, this.rp);
    inner.apply(this.rp, this.zp);
    scatterBlocks(this.zp, this.perm, this.bs, z);
  }

  work(): { setup: WorkCounts; apply: WorkCounts } {
    const inner = this.inner?.work() ?? { setup: zeroWork(), apply: zeroWork() };
    const setup = addWork({ ...inner.setup }, this.copyWork);
    const apply = { ...inner.apply };
    if (this.perm) addWork(apply, scaledWork(vectorWork.permute(this.system.bsr.nBlockRows, this.bs), 2 * this.applies));
    // the inner applies are this method's own
    apply.preconditionerApplies = this.applies;
    return { setup, apply };
  }

  /** Factors on the (renumbered) level-k pattern, row by row, as block-ilu0's factorValues(). */
  factorValues(): Float64Array {
    return this.inner ? this.inner.factorValues() : new Float64Array(0);
  }

  memory(): BufferBytes {
    const m: BufferBytes = { ...(this.inner?.memory() ?? {}) };
    if (this.perm) m.permutation = this.perm.byteLength;
    m.workspace = (m.workspace ?? 0) + this.rp.byteLength + this.zp.byteLength;
    return m;
  }

  stats(): Record<string, unknown> {
    const nA = this.system.bsr.rowPtr[this.system.bsr.nBlockRows]!;
    return {
      ...(this.inner?.stats() ?? {}),
      fillLevel: this.fillLevel,
      /** Blocks of the factor pattern by level (index = level; level 0 = A's own blocks). */
      blocksPerLevel: this.blocksPerLevel,
      factorBlocks: this.nFactorBlocks,
      /** Factor blocks / A's blocks. */
      fillRatio: nA === 0 ? 1 : this.nFactorBlocks / nA,
    };
  }
}
