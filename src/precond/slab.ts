/**
 * Slab solver: forward block substitution over time slabs. With slabs S_0, S_1, … in order,
 *   z_s = A_ss⁻¹ (r_s − Σ_{t<s} A_st z_t),
 * where each slab system is solved by an inner recipe (default DEFAULT_INNER_RECIPE: GMRES(30) +
 * block ILU(0) to rtol 1e-10). For a matrix that is block lower triangular over the slabs
 * (upwind coupling in time: a slab sees only earlier slabs) and exact inner solves this is
 * A⁻¹; couplings to later slabs, if any, are ignored (block Gauss–Seidel over slabs; counted in
 * stats as blocksAboveSlabDiagonal).
 *
 * recipe.shift > 0 is handed to the inner recipe when that one has no shift of its own.
 *
 * Slabs come from system.slabOffsets (the layout file) or, when absent, from the strongly
 * connected components of the block graph in topological order (stats.slabSource says which).
 *
 * Memory: only ONE slab's inner preconditioner exists at a time. It is set up when the sweep
 * reaches the slab and dropped after the slab is solved, in every apply(); memory() therefore
 * reports the PEAK single-slab figure (largest inner preconditioner + inner Krylov basis) beside
 * the slab buffers. Consequently apply() allocates (the inner preconditioner and the inner
 * solver's workspace) and repeats the inner setups on every application: the price of the
 * one-slab memory bound. setup() builds each slab's inner preconditioner once (one at a time)
 * so that a zero pivot anywhere fails politely before the outer solve starts.
 *
 * variable: the inner solve is a nonlinear function of its right-hand side unless it is a single
 * stationary step (inner krylov 'none' with maxIterations 1, i.e. z_s = M_s⁻¹ rhs); when variable
 * is true the outer method must be flexible (FGMRES).
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { Recipe } from '../solvers/recipe.js';
import { DEFAULT_INNER_RECIPE, defaultPMultigrid, pMultigridIsVariable } from '../solvers/recipe.js';
import type { Bsr, Csr } from '../sparse/types.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { addWork, kernel, vectorWork, zeroWork } from '../solvers/work.js';
import { UserError } from '../util/errors.js';
import { bsrToCsr } from '../sparse/bsr.js';
import { permuteBsr } from '../sparse/permute.js';
import { stronglyConnectedBlocks } from '../sparse/structure.js';
import { bsrOperator } from '../solvers/operator.js';
import { krylovSolve } from '../solvers/krylov.js';
import { kernelF64, kernelI32, withScratch } from '../kernels-host/arena.js';
import { checkApplyArgs, checkReady, totalBytes } from './common.js';
import { blockMatVecSub } from './dense.js';
import { gatherBlocks, scatterBlocks, validSlabOffsets } from './block-tools.js';
import { createPreconditioner } from './registry.js';

export function createSlab(system: SystemMatrix, recipe: Recipe): Preconditioner {
  const given = recipe.inner ?? DEFAULT_INNER_RECIPE;
  // an outer shift reaches the slab factorizations unless the inner recipe sets its own
  const inner = recipe.shift > 0 && given.shift === 0 ? { ...given, shift: recipe.shift } : given;
  if (inner.preconditioner === 'slab') {
    throw new UserError(`recipe ${recipe.name}: the slab inner recipe cannot itself use preconditioner slab`);
  }
  return new SlabPreconditioner(system, inner);
}

/** Per-slab inner-iteration figures are listed one by one up to this many slabs, summarized beyond. */
const MAX_LISTED_SLABS = 1000;

export class SlabPreconditioner implements Preconditioner {
  readonly name = 'slab';
  readonly n: number;
  readonly variable: boolean;
  private a: Bsr;
  private perm: Int32Array | null = null;
  private offsets: Int32Array = new Int32Array(0);
  private slabSource: 'layout' | 'strongly-connected-components' = 'layout';
  private aboveDiagonal = 0;
  // one-slab buffers, sized for the largest slab
  private sRowPtr: Int32Array = new Int32Array(0);
  private sColInd: Int32Array = new Int32Array(0);
  private sValues: Float64Array = new Float64Array(0);
  private rhs: Float64Array = new Float64Array(0);
  private sol: Float64Array = new Float64Array(0);
  private rp: Float64Array = new Float64Array(0);
  private xp: Float64Array = new Float64Array(0);
  private peakInnerBytes = 0;
  private peakInnerBuffers: BufferBytes = {};
  private peakKrylovBytes = 0;
  private ready = false;
  // statistics
  private applications = 0;
  private lastIterations: Int32Array = new Int32Array(0);
  private sumIterations: Float64Array = new Float64Array(0);
  private totalIterations = 0;
  private innerNotConverged = 0;
  private innerFailures: string[] = [];
  // work counts (README "Work model")
  private setupWork: WorkCounts = zeroWork();
  private applyWork: WorkCounts = zeroWork();
  /** Per apply, everything but the inner setups and solves (fixed by the pattern). */
  private applyFixed: WorkCounts = zeroWork();
  /** Per slab: bytes of extractSlab (the slab's column indices scanned, its diagonal part copied). */
  private extractBytes: Float64Array = new Float64Array(0);

  constructor(private readonly system: SystemMatrix, readonly inner: Recipe) {
    this.a = system.bsr;
    this.n = system.bsr.nBlockRows * system.bsr.bs;
    // a single stationary step is fixed only when the inner preconditioner is (p-multigrid may not be)
    this.variable = !(inner.krylov === 'none' && inner.maxIterations <= 1)
      || (inner.preconditioner === 'p-multigrid' && pMultigridIsVariable(inner.pMultigrid ?? defaultPMultigrid()));
  }

  setup(): SetupOutcome {
    const a0 = this.system.bsr;
    const nb = a0.nBlockRows;
    if (validSlabOffsets(this.system.slabOffsets, nb)) {
      this.offsets = Int32Array.from(this.system.slabOffsets);
      this.slabSource = 'layout';
      this.perm = null;
      this.a = a0;
    } else {
      const comp = stronglyConnectedBlocks(a0);
      this.offsets = Int32Array.from(comp.componentOffsets);
      this.slabSource = 'strongly-connected-components';
      let identity = true;
      for (let i = 0; i < nb; i++) if (comp.order[i] !== i) { identity = false; break; }
      this.perm = identity ? null : comp.order;
      this.a = this.perm ? permuteBsr(a0, this.perm) : a0;
    }
    this.setupWork = zeroWork();
    this.applyWork = zeroWork();
    // the permuted copy: values and indices read and written once
    if (this.perm) addWork(this.setupWork, kernel(0, 2 * (8 * a0.bs * a0.bs + 4) * a0.colInd.length + 2 * 4 * (nb + 1)));
    const { bs, rowPtr, colInd } = this.a;
    const bb = bs * bs;
    const nSlabs = this.offsets.length - 1;
    let maxRows = 0, maxBlocks = 0, above = 0;
    this.extractBytes = new Float64Array(nSlabs);
    const fixed = this.perm ? addWork(vectorWork.permute(nb, bs), vectorWork.permute(nb, bs)) : zeroWork();
    for (let s = 0; s < nSlabs; s++) {
      const lo = this.offsets[s], hi = this.offsets[s + 1];
      let blocks = 0, left = 0;
      for (let I = lo; I < hi; I++) {
        for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
          const J = colInd[k];
          if (J >= lo && J < hi) blocks++;
          else if (J >= hi) above++;
          else left++;
        }
      }
      const rowBlocks = rowPtr[hi] - rowPtr[lo], len = (hi - lo) * bs;
      this.extractBytes[s] = 4 * rowBlocks + 4 * (hi - lo + 1) + (16 * bb + 8) * blocks;
      // per apply: rhs ← r_s; rhs −= A_st z_t over the blocks left of the slab (their values, every
      // column index of the slab's rows, rhs read and written, the earlier part of z read); the slab
      // extracted; sol ← 0; z_s ← sol
      addWork(fixed, vectorWork.copy(len));
      addWork(fixed, kernel(2 * bb * left, 8 * bb * left + 4 * rowBlocks + 4 * (hi - lo + 1) + 16 * len + 8 * lo * bs));
      addWork(fixed, kernel(0, this.extractBytes[s]));
      addWork(fixed, vectorWork.fill(len));
      addWork(fixed, vectorWork.copy(len));
      maxRows = Math.max(maxRows, hi - lo);
      maxBlocks = Math.max(maxBlocks, blocks);
    }
    this.applyFixed = fixed;
    this.aboveDiagonal = above;
    // kernel memory when the solve has one (src/kernels-host); each slab's inner factors and Krylov
    // buffers are scratch, handed back after the slab (withScratch)
    this.sRowPtr = kernelI32(maxRows + 1);
    this.sColInd = kernelI32(maxBlocks);
    this.sValues = kernelF64(maxBlocks * bb);
    this.rhs = kernelF64(maxRows * bs);
    this.sol = kernelF64(maxRows * bs);
    this.rp = kernelF64(this.perm ? this.n : 0);
    this.xp = kernelF64(this.perm ? this.n : 0);
    this.lastIterations = new Int32Array(nSlabs);
    this.sumIterations = new Float64Array(nSlabs);
    // numeric check: every slab's inner preconditioner, one at a time
    this.peakInnerBytes = 0;
    this.peakInnerBuffers = {};
    for (let s = 0; s < nSlabs; s++) {
      const slab = this.extractSlab(s);
      const { out, mem } = withScratch(() => {
        const M = createPreconditioner(slabSystem(slab, this.system.modes), this.inner);
        const o = M.setup();
        addWork(this.setupWork, kernel(0, this.extractBytes[s]));
        addWork(this.setupWork, M.work().setup);
        return { out: o, mem: o.ok ? M.memory() : {} };
      });
      if (!out.ok) {
        const local = out.blockRow ?? 0;
        const blockRow = this.originalBlockRow(this.offsets[s] + local);
        const what = out.reason === 'zero-pivot' ? 'zero or tiny pivot' : out.reason === 'non-finite' ? 'non-finite value' : out.reason;
        return { ok: false, reason: out.reason, blockRow,
          message: `slab: ${what} in block row ${blockRow} (slab ${s}, its local block row ${local}) in the inner ` +
            `${this.inner.preconditioner} setup` + (out.reason === 'zero-pivot' ? '; a diagonal shift (recipe shift > 0) avoids it' : '') };
      }
      const bytes = totalBytes(mem);
      if (bytes > this.peakInnerBytes) { this.peakInnerBytes = bytes; this.peakInnerBuffers = mem; }
    }
    this.peakKrylovBytes = innerKrylovBytes(this.inner, maxRows * bs);
    this.ready = true;
    return { ok: true };
  }

  private originalBlockRow(I: number): number { return this.perm ? this.perm[I] : I; }

  /** Copy slab s's diagonal part into the one-slab buffers (block columns renumbered from 0). */
  private extractSlab(s: number): Bsr {
    const { bs, rowPtr, colInd, values } = this.a;
    const bb = bs * bs;
    const lo = this.offsets[s], hi = this.offsets[s + 1];
    const m = hi - lo;
    let p = 0;
    this.sRowPtr[0] = 0;
    for (let I = lo; I < hi; I++) {
      for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
        const J = colInd[k];
        if (J < lo || J >= hi) continue;
        this.sColInd[p] = J - lo;
        this.sValues.set(values.subarray(k * bb, (k + 1) * bb), p * bb);
        p++;
      }
      this.sRowPtr[I - lo + 1] = p;
    }
    return {
      nBlockRows: m, nBlockCols: m, bs,
      rowPtr: this.sRowPtr.subarray(0, m + 1),
      colInd: this.sColInd.subarray(0, p),
      values: this.sValues.subarray(0, p * bb),
    };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    const { bs, rowPtr, colInd, values } = this.a;
    const bb = bs * bs;
    let rr = r, x = z;
    if (this.perm) { gatherBlocks(r, this.perm, bs, this.rp); rr = this.rp; x = this.xp; }
    this.applications++;
    addWork(this.applyWork, this.applyFixed);
    this.applyWork.preconditionerApplies++;
    const nSlabs = this.offsets.length - 1;
    for (let s = 0; s < nSlabs; s++) {
      const lo = this.offsets[s], hi = this.offsets[s + 1];
      const len = (hi - lo) * bs;
      const rhs = this.rhs.subarray(0, len);
      const sol = this.sol.subarray(0, len);
      // rhs = r_s − Σ_{t<s} A_st z_t (blocks left of the slab); blocks right of it are ignored
      rhs.set(rr.subarray(lo * bs, hi * bs));
      for (let I = lo; I < hi; I++) {
        for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
          const J = colInd[k];
          if (J < lo) blockMatVecSub(values, k * bb, bs, x, J * bs, rhs, (I - lo) * bs);
        }
      }
      const slab = this.extractSlab(s);
      withScratch(() => this.solveSlab(s, slab, rhs, sol));
      x.set(sol, lo * bs);
    }
    if (this.perm) scatterBlocks(x, this.perm, bs, z);
  }

  /** Slab s: its inner preconditioner from the current values, then the inner solve into sol. */
  private solveSlab(s: number, slab: Bsr, rhs: Float64Array, sol: Float64Array): void {
    const M = createPreconditioner(slabSystem(slab, this.system.modes), this.inner);
    const out = M.setup();
    addWork(this.applyWork, M.work().setup);
    sol.fill(0);
    if (!out.ok) {
      // cannot happen after a successful setup() on the same values; poison the result so the
      // outer solver stops with 'non-finite-value' rather than continuing on a wrong correction
      this.noteFailure(`slab ${s}: ${out.message}`);
      sol.fill(NaN);
    } else {
      const res = krylovSolve(bsrOperator(slab), rhs, sol, this.inner, M, { ritz: false });
      // the inner solve's work (its products, vector operations, preconditioner applies), and its iterations
      addWork(this.applyWork, res.work.solve);
      this.applyWork.innerIterations += res.iterations;
      this.lastIterations[s] = res.iterations;
      this.sumIterations[s] += res.iterations;
      this.totalIterations += res.iterations;
      if (!res.converged && this.variable) {
        this.innerNotConverged++;
        if (res.cause !== 'iteration-budget') this.noteFailure(`slab ${s}: inner ${res.method} stopped with ${res.cause}`);
      }
    }
  }

  /**
   * Work model: setup = the permuted copy (when reordered), and per slab the extraction of its
   * diagonal part and its inner preconditioner's setup; apply = per application the gather and
   * scatter (when reordered) and per slab the right-hand side with the blocks left of the slab,
   * the extraction, the inner setup and the inner solve (all of its work; innerIterations counts its
   * iterations). Building the CSR view a point inner preconditioner asks for is not counted.
   */
  work(): { setup: WorkCounts; apply: WorkCounts } {
    return { setup: { ...this.setupWork }, apply: { ...this.applyWork } };
  }

  private noteFailure(msg: string): void {
    if (this.innerFailures.length < 10) this.innerFailures.push(msg);
  }

  memory(): BufferBytes {
    const m: BufferBytes = {};
    m['inner preconditioner (peak, one slab at a time)'] = this.peakInnerBytes;
    m['inner Krylov basis (peak, one slab at a time)'] = this.peakKrylovBytes;
    m['slab matrix buffer'] = this.sRowPtr.byteLength + this.sColInd.byteLength + this.sValues.byteLength;
    m['slab vectors'] = this.rhs.byteLength + this.sol.byteLength;
    if (this.perm) {
      m.permutation = this.perm.byteLength;
      m['permuted matrix'] = this.a.rowPtr.byteLength + this.a.colInd.byteLength + this.a.values.byteLength;
      m.workspace = this.rp.byteLength + this.xp.byteLength;
    }
    return m;
  }

  stats(): Record<string, unknown> {
    const nSlabs = this.offsets.length - 1;
    const it = Array.from(this.lastIterations);
    let largest = 0;
    for (let s = 0; s < nSlabs; s++) largest = Math.max(largest, this.offsets[s + 1] - this.offsets[s]);
    const out: Record<string, unknown> = {
      slabSource: this.slabSource,
      nSlabs,
      largestSlabBlockRows: largest,
      blocksAboveSlabDiagonal: this.aboveDiagonal,
      inner: { name: this.inner.name, krylov: this.inner.krylov, preconditioner: this.inner.preconditioner,
        rtol: this.inner.rtol, restart: this.inner.restart, maxIterations: this.inner.maxIterations, shift: this.inner.shift },
      variable: this.variable,
      applications: this.applications,
      innerIterationsTotal: this.totalIterations,
      innerNotConverged: this.innerNotConverged,
      memoryNote: 'preconditioner bytes are the peak single-slab figure: one slab\'s inner preconditioner is held at a time',
      peakInnerPreconditionerBuffers: this.peakInnerBuffers,
    };
    if (nSlabs <= MAX_LISTED_SLABS) {
      out.innerIterationsPerSlab = it; // last application
      out.innerIterationsPerSlabAllApplications = Array.from(this.sumIterations);
    } else {
      let min = Infinity, max = 0, sum = 0;
      for (const v of it) { min = Math.min(min, v); max = Math.max(max, v); sum += v; }
      out.innerIterationsPerSlabSummary = { min, mean: sum / Math.max(1, nSlabs), max };
    }
    if (this.innerFailures.length) out.innerFailures = this.innerFailures;
    return out;
  }
}

/**
 * A slab as a SystemMatrix; its CSR view is built only if a point method asks for it. The blocks
 * are the whole matrix's, so the layout's `modes` section holds for them too (p-multigrid inside).
 */
function slabSystem(bsr: Bsr, modes: SystemMatrix['modes']): SystemMatrix {
  let csr: Csr | undefined;
  return {
    bsr,
    ...(modes ? { modes } : {}),
    get csr(): Csr { return (csr ??= bsrToCsr(bsr)); },
  };
}

/** Bytes of the inner solver's basis for a system of n unknowns (estimate from the recipe). */
function innerKrylovBytes(inner: Recipe, n: number): number {
  switch (inner.krylov) {
    case 'gmres': return (inner.restart + 1) * n * 8;
    case 'fgmres': return (2 * inner.restart + 1) * n * 8;
    case 'gmres-dr': return (inner.restart + (inner.deflate ?? 0) + 2) * n * 8;
    case 'gcro-dr': return (inner.restart + 1 + 4 * (inner.deflate ?? 0)) * n * 8;
    case 'bicgstab': return 8 * n * 8;
    case 'none': return 2 * n * 8;
  }
}
