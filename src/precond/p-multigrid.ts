/**
 * p-multigrid (polynomial multigrid) as a preconditioner: z ← one multigrid cycle for A z = r from
 * z = 0, over levels of decreasing polynomial degree q₀ = p > q₁ > … > q_L (default p, p−1, …, 0).
 *
 * Needs the layout section `modes` (system.modes): the number of equations, the arrangement inside
 * a block and the total degree of every mode in hierarchical order. Level l keeps, in every block,
 * the unknowns of the modes of degree ≤ q_l. Restriction R_l = truncation to those unknowns,
 * prolongation P_l = R_lᵀ, coarse operator A_{l+1} = R_l A_l P_l, which is the leading sub-block
 * of every block: built by extraction on the same block pattern (Rønquist & Patera 1987; Helenbrook,
 * Mavriplis & Atkins, AIAA 2003-3989; Nastase & Mavriplis, J. Comput. Phys. 213, 2006).
 *
 * The cycle mg(l, b, x) (x: initial guess in, result out):
 *   l = L: x ← coarse recipe's solve of A_L x = b from x (krylovSolve);
 *   else:  preSweeps times  x ← x + ω M_l⁻¹ (b − A_l x)      (smoother M_l on level l)
 *          b_{l+1} ← R_l (b − A_l x);  x_{l+1} ← 0;
 *          γ times mg(l+1, b_{l+1}, x_{l+1})                (γ = 1 V-cycle, 2 W-cycle)
 *          x ← x + P_l x_{l+1};
 *          postSweeps times  x ← x + ω M_l⁻¹ (b − A_l x).
 * apply(r, z) is mg(0, r, z) from z = 0. ω is smoother.omega, except for block-gs, whose ω is the
 * SOR factor inside its sweep and whose step is 1 (the convention of stationary iteration, krylov.ts).
 * A step from x = 0 skips its matrix product (x ← ω M⁻¹ b).
 *
 * variable: true when the coarse solve is a Krylov method, or a stationary iteration that may stop
 * early (pMultigridIsVariable): the outer method must then be FGMRES. apply() allocates the coarse
 * solver's workspace on every coarse solve (krylovSolve allocates its basis; the coarsest level is
 * the smallest) — the documented exception to "apply never allocates", as in slab.ts.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { PMultigridOptions, Recipe } from '../solvers/recipe.js';
import { DEFAULT_RECIPE, defaultPMultigrid, pMultigridIsVariable } from '../solvers/recipe.js';
import type { Bsr, Csr, ModalLayout } from '../sparse/types.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { addWork, kernel, sparseWork, vectorWork, zeroWork } from '../solvers/work.js';
import { UserError } from '../util/errors.js';
import { bsrResidual, bsrToCsr } from '../sparse/bsr.js';
import { kernelF64 } from '../kernels-host/arena.js';
import { bsrOperator, type MatrixOperator } from '../solvers/operator.js';
import { krylovSolve } from '../solvers/krylov.js';
import { checkApplyArgs, checkReady, totalBytes } from './common.js';
import { createPreconditioner } from './registry.js';
import { extractBlocksKernel, maxDegree, prolongAddKernel, restrictKernel, truncatedModes, truncationSelection } from './p-multigrid-levels.js';

export function createPMultigrid(system: SystemMatrix, recipe: Recipe): Preconditioner {
  const opts = recipe.pMultigrid ?? defaultPMultigrid();
  const modes = system.modes;
  const bs = system.bsr.bs;
  if (!modes) {
    throw new UserError(`recipe ${recipe.name}: p-multigrid needs the layout field "modes" ({ nEquations, arrangement, degrees }: how each block is built from a hierarchical basis), and this matrix's layout has none; add it to NAME.layout.json (README: "Layout section modes")`);
  }
  if (modes.nEquations * modes.degrees.length !== bs) {
    throw new UserError(`recipe ${recipe.name}: layout field modes describes ${modes.nEquations} × ${modes.degrees.length} = ${modes.nEquations * modes.degrees.length} unknowns per block, but the block size is ${bs}`);
  }
  const p = maxDegree(modes);
  let levels: number[];
  // degree 0 only: a property of the matrix, not of the recipe, so setup() fails politely (a sweep
  // over matrices of several orders records it as a result instead of stopping)
  if (p === 0) levels = [0];
  else if (opts.levels) {
    levels = opts.levels;
    if (levels[0] !== p) {
      throw new UserError(`recipe ${recipe.name}: pMultigrid.levels [${levels.join(', ')}] must start at the matrix's degree ${p} (the highest of layout field modes.degrees)`);
    }
  } else {
    levels = [];
    for (let q = p; q >= 0; q--) levels.push(q);
  }
  return new PMultigridPreconditioner(system, opts, levels, recipe.name);
}

interface Level {
  readonly degree: number;
  readonly bs: number;
  readonly a: Bsr;
  readonly modes: ModalLayout;
  /** Selection into the next finer level's block (null on level 0). */
  readonly sel: Int32Array | null;
  smoother?: Preconditioner;
  /** Right-hand side and iterate of this level (level 0: the caller's r and z, so empty here). */
  b: Float64Array;
  x: Float64Array;
  /** Residual and smoother correction. */
  res: Float64Array;
  cor: Float64Array;
  setupSeconds: number;
  /** Work-model call counts during applications (see work()). */
  nResiduals: number;
  nStepsFromZero: number;
  nSteps: number;
  nFills: number;
  nRestricts: number;
  nProlongs: number;
}

export class PMultigridPreconditioner implements Preconditioner {
  readonly name = 'p-multigrid';
  readonly n: number;
  readonly variable: boolean;
  private levels: Level[] = [];
  private coarseM: Preconditioner | undefined;
  private coarseOp: MatrixOperator | undefined;
  private readonly smootherRecipe: Recipe;
  private readonly stepFactor: number;
  private readonly gamma: number;
  private ready = false;
  // statistics
  private applications = 0;
  private coarseSolves = 0;
  private coarseIterations = 0;
  private coarseNotConverged = 0;
  private coarseFailures: string[] = [];
  private setupWork: WorkCounts = zeroWork();
  /** Everything the coarse solves did (their products, vector work and preconditioner applies). */
  private coarseWork: WorkCounts = zeroWork();

  constructor(
    private readonly system: SystemMatrix,
    private readonly opts: PMultigridOptions,
    private readonly degrees: number[],
    private readonly recipeName: string,
  ) {
    this.n = system.bsr.nBlockRows * system.bsr.bs;
    this.variable = pMultigridIsVariable(opts);
    const s = opts.smoother;
    this.smootherRecipe = {
      ...DEFAULT_RECIPE, name: `${recipeName} smoother`, krylov: 'none', preconditioner: s.preconditioner,
      omega: s.preconditioner === 'block-gs' ? s.omega : 1, sweep: s.sweep, ordering: s.ordering,
      blockInverse: s.blockInverse, shift: s.shift, fillLevel: s.fillLevel, sweeps: 1,
    };
    this.stepFactor = s.preconditioner === 'block-gs' ? 1 : s.omega;
    this.gamma = opts.cycle === 'w' ? 2 : 1;
  }

  setup(): SetupOutcome {
    if (this.degrees.length < 2) {
      return { ok: false, reason: 'invalid', message: 'p-multigrid: layout field modes.degrees has degree 0 only (a piecewise-constant basis), so there is no lower degree to coarsen to' };
    }
    const fine = this.system.bsr;
    const nb = fine.nBlockRows;
    const nBlocks = fine.rowPtr[nb];
    const L = this.degrees.length - 1;
    this.levels = [];
    this.setupWork = zeroWork();
    this.coarseWork = zeroWork();
    this.applications = 0; this.coarseSolves = 0; this.coarseIterations = 0; this.coarseNotConverged = 0; this.coarseFailures = [];
    let modes = this.system.modes as ModalLayout;
    let prev: Level | undefined;
    for (let l = 0; l <= L; l++) {
      const t0 = performance.now();
      const q = this.degrees[l];
      let a: Bsr, sel: Int32Array | null = null;
      if (l === 0) {
        a = fine;
      } else {
        sel = truncationSelection(modes, q);
        modes = truncatedModes(modes, q);
        const bsC = sel.length;
        // coarse matrices and level vectors in kernel memory when the solve has one (WebAssembly kernels)
        const values = kernelF64(nBlocks * bsC * bsC);
        extractBlocksKernel(nBlocks, (prev as Level).bs, (prev as Level).a.values, sel, values);
        addWork(this.setupWork, kernel(0, 2 * values.length * 8)); // the kept entries read, the coarse blocks written
        a = { nBlockRows: nb, nBlockCols: nb, bs: bsC, rowPtr: fine.rowPtr, colInd: fine.colInd, values };
      }
      const n = nb * a.bs;
      const coarsest = l === L;
      const level: Level = {
        degree: q, bs: a.bs, a, modes, sel,
        b: kernelF64(l === 0 ? 0 : n), x: kernelF64(l === 0 ? 0 : n),
        res: kernelF64(coarsest ? 0 : n), cor: kernelF64(coarsest ? 0 : n),
        setupSeconds: 0, nResiduals: 0, nStepsFromZero: 0, nSteps: 0, nFills: 0, nRestricts: 0, nProlongs: 0,
      };
      const sys = levelSystem(a, l === 0 ? this.system.csr : undefined, this.system.slabOffsets, modes);
      const M = createPreconditioner(sys, coarsest ? this.opts.coarse : this.smootherRecipe);
      let out: SetupOutcome;
      try {
        out = M.setup();
      } catch (e) {
        if (e instanceof UserError) throw e;
        out = { ok: false, reason: 'invalid', message: (e as Error).message };
      }
      if (!out.ok) {
        const role = coarsest ? `coarse ${this.opts.coarse.preconditioner}` : `smoother ${this.opts.smoother.preconditioner}`;
        return { ...out, message: `p-multigrid level ${l} (degree ${q}) ${role}: ${out.message}` };
      }
      addWork(this.setupWork, M.work().setup);
      if (coarsest) { this.coarseM = M; this.coarseOp = bsrOperator(a); } else level.smoother = M;
      level.setupSeconds = (performance.now() - t0) / 1000;
      this.levels.push(level);
      prev = level;
    }
    this.ready = true;
    return { ok: true };
  }

  /** The levels after setup, finest first (read-only view for benchmarks and tests). */
  levelView(): ReadonlyArray<{ degree: number; a: Bsr; smoother?: Preconditioner; coarse?: Preconditioner }> {
    const L = this.levels.length - 1;
    return this.levels.map((lev, l) => ({ degree: lev.degree, a: lev.a, ...(l === L ? { coarse: this.coarseM } : { smoother: lev.smoother }) }));
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    this.applications++;
    z.fill(0);
    this.levels[0].nFills++;
    this.cycle(0, r, z, true);
  }

  /** mg(l, b, x) of the header; xZero: x is known to be zero on entry. */
  private cycle(l: number, b: Float64Array, x: Float64Array, xZero: boolean): void {
    const L = this.levels.length - 1;
    if (l === L) { this.coarseSolve(b, x); return; }
    const lev = this.levels[l];
    const next = this.levels[l + 1];
    const nb = lev.a.nBlockRows;
    let zero = xZero;
    for (let s = 0; s < this.opts.preSweeps; s++) { this.smooth(lev, b, x, zero); zero = false; }
    if (zero) restrictKernel(nb, lev.bs, next.sel as Int32Array, b, next.b);
    else {
      this.residual(lev, b, x);
      restrictKernel(nb, lev.bs, next.sel as Int32Array, lev.res, next.b);
    }
    next.nRestricts++;
    next.x.fill(0);
    next.nFills++;
    for (let g = 0; g < this.gamma; g++) this.cycle(l + 1, next.b, next.x, g === 0);
    prolongAddKernel(nb, lev.bs, next.sel as Int32Array, next.x, x);
    next.nProlongs++;
    for (let s = 0; s < this.opts.postSweeps; s++) this.smooth(lev, b, x, false);
  }

  /** res ← b − A x on level lev. */
  private residual(lev: Level, b: Float64Array, x: Float64Array): void {
    const a = lev.a;
    bsrResidual(a, x, b, lev.res);
    lev.nResiduals++;
  }

  /** One smoothing step x ← x + ω M⁻¹(b − A x); from x = 0 it is x ← ω M⁻¹ b. */
  private smooth(lev: Level, b: Float64Array, x: Float64Array, xZero: boolean): void {
    const M = lev.smoother as Preconditioner;
    const w = this.stepFactor;
    const c = lev.cor;
    const n = c.length;
    if (xZero) {
      M.apply(b, c);
      for (let i = 0; i < n; i++) x[i] = w * c[i];
      lev.nStepsFromZero++;
    } else {
      this.residual(lev, b, x);
      M.apply(lev.res, c);
      for (let i = 0; i < n; i++) x[i] += w * c[i];
      lev.nSteps++;
    }
  }

  private coarseSolve(b: Float64Array, x: Float64Array): void {
    const res = krylovSolve(this.coarseOp as MatrixOperator, b, x, this.opts.coarse, this.coarseM, { ritz: false });
    this.coarseSolves++;
    this.coarseIterations += res.iterations;
    addWork(this.coarseWork, res.work.solve);
    this.coarseWork.innerIterations += res.iterations;
    if (!res.converged) {
      this.coarseNotConverged++;
      if (res.cause !== 'iteration-budget' && this.coarseFailures.length < 10) {
        this.coarseFailures.push(`coarse solve ${this.coarseSolves}: ${res.method} stopped with ${res.cause}`);
      }
    }
  }

  /**
   * Work model (README "Work model"; p-multigrid section): setup = extraction of every coarse level
   * (kept entries read, coarse blocks written) + every smoother's and the coarse preconditioner's
   * setup. apply = per level its residual products r = b − A x (BSR product + 2n flops, b read),
   * smoothing updates (x ← ω c: n flops, 16n bytes; x ← x + ω c: an axpy), smoother applies (their
   * own work), restrictions (gather: 16·n_c bytes), prolongations (scatter-add: n_c flops, 24·n_c
   * bytes), zero fills, plus all the work of the coarse solves (innerIterations = their iterations);
   * preconditionerApplies = apply() calls + smoother applies + the coarse solves' applies.
   */
  work(): { setup: WorkCounts; apply: WorkCounts } {
    const w = zeroWork();
    for (const lev of this.levels) {
      const a = lev.a;
      const nb = a.nBlockRows, bs = a.bs, n = nb * bs, k = a.rowPtr[nb];
      if (lev.nResiduals) addWork(w, addWork(sparseWork.bsrSpmv(nb, bs, k), kernel(2 * n, 8 * n)), lev.nResiduals);
      if (lev.nStepsFromZero) addWork(w, kernel(n, 16 * n), lev.nStepsFromZero);
      if (lev.nSteps) addWork(w, vectorWork.axpy(n), lev.nSteps);
      if (lev.nFills) addWork(w, vectorWork.fill(n), lev.nFills);
      if (lev.nRestricts) addWork(w, kernel(0, 16 * n), lev.nRestricts);
      if (lev.nProlongs) addWork(w, kernel(n, 24 * n), lev.nProlongs);
      if (lev.smoother) addWork(w, lev.smoother.work().apply);
    }
    addWork(w, this.coarseWork);
    w.preconditionerApplies += this.applications;
    return { setup: { ...this.setupWork }, apply: w };
  }

  /** Bytes by named buffer, per level (the finest matrix and the shared block pattern are the input's, not counted). */
  memory(): BufferBytes {
    const m: BufferBytes = {};
    for (let l = 0; l < this.levels.length; l++) {
      const lev = this.levels[l];
      const tag = `level ${l} (degree ${lev.degree})`;
      if (l > 0) m[`${tag} matrix values`] = lev.a.values.byteLength;
      if (lev.sel) m[`${tag} selection`] = lev.sel.byteLength;
      const vec = lev.b.byteLength + lev.x.byteLength + lev.res.byteLength + lev.cor.byteLength;
      if (vec > 0) m[`${tag} vectors`] = vec;
      const M = l === this.levels.length - 1 ? this.coarseM : lev.smoother;
      const role = l === this.levels.length - 1 ? 'coarse preconditioner' : 'smoother';
      if (M) for (const [k, v] of Object.entries(M.memory())) m[`${tag} ${role}: ${k}`] = v;
      if (l === this.levels.length - 1) {
        const kb = coarseKrylovBytes(this.opts.coarse, lev.a.nBlockRows * lev.bs);
        if (kb > 0) m[`${tag} coarse Krylov workspace (allocated per coarse solve)`] = kb;
      }
    }
    return m;
  }

  /** Bytes of one level: its matrix values (not on level 0), vectors, selection and smoother or coarse preconditioner. */
  private levelBytes(l: number): number {
    const lev = this.levels[l];
    const M = l === this.levels.length - 1 ? this.coarseM : lev.smoother;
    return (l > 0 ? lev.a.values.byteLength : 0) + (lev.sel?.byteLength ?? 0) + lev.b.byteLength + lev.x.byteLength
      + lev.res.byteLength + lev.cor.byteLength + (M ? totalBytes(M.memory()) : 0);
  }

  stats(): Record<string, unknown> {
    const fineNnz = this.levels.length ? this.levels[0].a.rowPtr[this.levels[0].a.nBlockRows] * this.levels[0].bs ** 2 : 0;
    let sumNnz = 0;
    let setupFlops = 0;
    const levels = this.levels.map((lev, l) => {
      const nBlocks = lev.a.rowPtr[lev.a.nBlockRows];
      const nnz = nBlocks * lev.bs * lev.bs;
      sumNnz += nnz;
      const M = l === this.levels.length - 1 ? this.coarseM : lev.smoother;
      const f = M?.stats?.().setupFlops;
      if (typeof f === 'number') setupFlops += f;
      return {
        level: l, degree: lev.degree, blockSize: lev.bs, rows: lev.a.nBlockRows * lev.bs, blockRows: lev.a.nBlockRows,
        nonzeroBlocks: nBlocks, storedEntries: nnz, setupSeconds: lev.setupSeconds, bytes: this.levelBytes(l),
      };
    });
    const c = this.opts.coarse;
    const out: Record<string, unknown> = {
      levels, degrees: [...this.degrees], cycle: this.opts.cycle, preSweeps: this.opts.preSweeps, postSweeps: this.opts.postSweeps,
      smoother: { ...this.opts.smoother },
      coarse: { name: c.name, krylov: c.krylov, preconditioner: c.preconditioner, rtol: c.rtol, maxIterations: c.maxIterations, restart: c.restart },
      operatorComplexity: fineNnz > 0 ? sumNnz / fineNnz : 1,
      variable: this.variable,
      applications: this.applications,
      coarseSolves: this.coarseSolves,
      coarseIterationsTotal: this.coarseIterations,
      coarseNotConverged: this.coarseNotConverged,
      setupFlops,
    };
    if (this.coarseFailures.length) out.coarseFailures = this.coarseFailures;
    return out;
  }
}

/** A level as a SystemMatrix (CSR view built only when a point smoother asks for it). */
function levelSystem(bsr: Bsr, csr0: Csr | undefined, slabOffsets: Int32Array | undefined, modes: ModalLayout): SystemMatrix {
  let csr = csr0;
  return {
    bsr, modes,
    ...(slabOffsets ? { slabOffsets } : {}),
    get csr(): Csr { return (csr ??= bsrToCsr(bsr)); },
  };
}

/** Bytes the coarse solver allocates per solve (its basis and work vectors; estimate from the recipe). */
function coarseKrylovBytes(r: Recipe, n: number): number {
  switch (r.krylov) {
    case 'gmres': return (r.restart + 1) * n * 8;
    case 'fgmres': return (2 * r.restart + 1) * n * 8;
    case 'gmres-dr': return (r.restart + (r.deflate ?? 0) + 2) * n * 8;
    case 'gcro-dr': return (r.restart + 1 + 4 * (r.deflate ?? 0)) * n * 8;
    case 'bicgstab': return 8 * n * 8;
    case 'none': return 2 * n * 8;
  }
}
