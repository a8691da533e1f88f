import type { Preconditioner, SetupOutcome, SystemMatrix } from '../precond/types.js';
import { createPreconditioner } from '../precond/registry.js';
import { UserError, withPrefix } from '../util/errors.js';
import type { Recipe } from './recipe.js';
import type { SolveResult, WorkCounts } from './types.js';
import type { KrylovOptions } from './options.js';
import { bsrOperator, csrOperator, residualInto, type MatrixOperator } from './operator.js';
import { checkVariablePreconditioner, krylovSolve } from './krylov.js';
import { buildResult, meterPreconditioner, peakRssBytes, relative, secondsSince, sumBytes } from './result.js';
import { norm2 } from './vector.js';
import { isMatrixStore, type MatrixFormat } from '../sparse/system.js';
import type { Bsr, Csr } from '../sparse/types.js';
import { kernelChoiceFromEnv, planKernels, type KernelChoice } from './kernel-plan.js';
import { kernelF64 } from '../kernels-host/arena.js';
import { addWork, vectorWork, zeroWork } from './work.js';

export interface SolveSystemOptions {
  /** Initial guess (copied; default zeros). */
  x0?: Float64Array;
  /** Per-iteration monitor (see KrylovOptions.onIteration). */
  onIteration?: KrylovOptions['onIteration'];
  /** Recycled Krylov state carried across the solves of a sequence (see KrylovOptions.carry). */
  carry?: KrylovOptions['carry'];
  /**
   * The system will not be solved again (the `solve` command): a loaded system may then drop a
   * CSR whose blocks are partially filled, which it otherwise keeps to rebuild the exact pattern.
   */
  lastUse?: boolean;
  /** Kernel set (default: SLABBENCH_KERNELS, else auto = WebAssembly when it fits); see kernel-plan.ts. */
  kernels?: KernelChoice;
}

const notesShown = new Set<string>();

/** Preconditioners that run on the scalar CSR pattern; every other one reads the BSR view. */
const POINT_PRECONDITIONERS: ReadonlySet<string> = new Set(['jacobi', 'ilu0']);

/**
 * The one matrix format a recipe needs: CSR for the point methods (jacobi, ilu0), BSR for the
 * block methods (and for none when the block size is above 1). The operator uses the same format,
 * so a loaded system holds one copy of the matrix (a component asking for the other one gets it
 * built, and counted).
 */
export function matrixFormatFor(recipe: Recipe, bs: number): MatrixFormat {
  if (POINT_PRECONDITIONERS.has(recipe.preconditioner)) return 'csr';
  if (recipe.preconditioner === 'none') return bs > 1 ? 'bsr' : 'csr';
  return 'bsr';
}

function blockSizeOf(system: SystemMatrix): number {
  return system.bs ?? system.bsr.bs;
}

/** The operator solveSystem multiplies with: the recipe's format (default: BSR when the block size is above 1, else CSR). */
export function systemOperator(system: SystemMatrix, format?: MatrixFormat): MatrixOperator {
  const f = format ?? (blockSizeOf(system) > 1 ? 'bsr' : 'csr');
  return f === 'bsr' ? bsrOperator(system.bsr) : csrOperator(system.csr);
}

/**
 * Solve A x = b with a recipe: a loaded system first keeps only the format the recipe needs
 * (matrixFormatFor); create the preconditioner through the registry, set it up (timed), run the
 * recipe's method (timed), and fill the memory report (matrix bytes: every array a loaded system
 * holds at the end, else those of the operator used; preconditioner bytes from M.memory(); Krylov
 * basis; work vectors plus b and x; peak RSS) and the preconditioner's statistics.
 * Solver and preconditioner failures become causes; only an
 * invalid recipe (or a recipe the matrix cannot serve) throws a UserError. b is never modified.
 * The same as prepareSolve + one solve() + dispose().
 */
export function solveSystem(
  system: SystemMatrix, b: Float64Array, recipe: Recipe, opts: SolveSystemOptions = {},
): { result: SolveResult; x: Float64Array } {
  checkLength(b, opts.x0, sizeOf(system));
  const prepared = prepareSolve(system, recipe, { kernels: opts.kernels, lastUse: opts.lastUse });
  try {
    return prepared.solve(b, { x0: opts.x0, onIteration: opts.onIteration, carry: opts.carry });
  } finally {
    prepared.dispose();
  }
}

function sizeOf(system: SystemMatrix): number {
  return system.n ?? system.bsr.nBlockRows * system.bsr.bs;
}

function checkLength(b: Float64Array, x0: Float64Array | undefined, n: number): void {
  if (b.length !== n) throw new UserError(`right-hand side has length ${b.length}, expected ${n} (the matrix size)`);
  if (x0 && x0.length !== n) throw new UserError(`initial guess has length ${x0.length}, expected ${n}`);
}

export interface PrepareSolveOptions {
  /** Kernel set (default: SLABBENCH_KERNELS, else auto); see kernel-plan.ts. */
  kernels?: KernelChoice;
  /** No solve on this system after dispose() (see SolveSystemOptions.lastUse). */
  lastUse?: boolean;
  /**
   * solve() will be given opts.matrix (a lagged preconditioner): plan kernel memory for that
   * matrix's values as well (address space only until used). Without it such a solve still runs;
   * values that do not fit are multiplied by the TypeScript kernels, and kernelsNote says so.
   */
  laggedMatrix?: boolean;
}

export interface PreparedSolveOptions {
  /** Initial guess (copied; default zeros). */
  x0?: Float64Array;
  onIteration?: KrylovOptions['onIteration'];
  carry?: KrylovOptions['carry'];
  /**
   * Another system with the same size and pattern (a later system of a sequence): the operator
   * uses its values while the preconditioner stays the one built from the prepared matrix (a
   * lagged preconditioner). Its values are copied into the prepared kernel memory for the solve
   * (the pattern arrays are shared with the prepared matrix). A different size, block size or
   * pattern is a UserError.
   */
  matrix?: SystemMatrix;
}

/** A preconditioner set up once, for several solves (right-hand sides, or systems of a sequence). */
export interface PreparedSolve {
  readonly recipe: Recipe;
  /** Setup outcome, seconds and exact setup work of the preconditioner built (zeros for none). */
  readonly setup: { ok: boolean; seconds: number; work: WorkCounts; message?: string };
  /**
   * Solve with the prepared preconditioner. The first solve's result carries the setup seconds and
   * work; every later one reports setupSeconds 0, zero setup work and setupReused: true. x is the
   * caller's own array. b (and opts.x0) are never modified.
   */
  solve(b: Float64Array, opts?: PreparedSolveOptions): { result: SolveResult; x: Float64Array };
  /** Release the kernel memory and the preconditioner; solve() afterwards throws. */
  dispose(): void;
  /** True after dispose(). */
  readonly disposed: boolean;
}

/**
 * Plan the kernels, build the operator, create and set up the recipe's preconditioner (timed),
 * once. A loaded system keeps only the format the recipe needs. The kernel memory (matrix,
 * factors) stays allocated until dispose(); each solve() allocates its basis and work vectors
 * above it and hands them back. An invalid recipe throws a UserError (nothing stays allocated);
 * a failed setup does not throw: setup.ok is false and every solve() reports the failure.
 */
export function prepareSolve(system: SystemMatrix, recipe: Recipe, opts: PrepareSolveOptions = {}): PreparedSolve {
  const format = matrixFormatFor(recipe, blockSizeOf(system));
  if (isMatrixStore(system)) system.keepOnly(format, { lastUse: opts.lastUse === true });
  const n0 = sizeOf(system);
  const choice = opts.kernels ?? kernelChoiceFromEnv();
  const extra = opts.laggedMatrix === true ? matrixOf(system, format).values.byteLength : 0;
  const plan = planKernels(system, recipe, choice, format, undefined, extra);
  if (plan.note !== undefined && !notesShown.has(plan.note)) {
    notesShown.add(plan.note);
    process.stderr.write(`slabbench: kernels: TypeScript (${plan.note})\n`);
  }
  let A: MatrixOperator;
  let M: Preconditioner | undefined;
  let outcome: SetupOutcome = { ok: true };
  let setupSeconds: number;
  try {
    A = systemOperator(system, format);
    const tSetup = performance.now();
    if (recipe.preconditioner !== 'none') {
      const created: Preconditioner = createPreconditioner(system, recipe);
      M = created;
      checkVariablePreconditioner(recipe, created); // before the setup work
      try {
        outcome = created.setup();
      } catch (e) {
        if (e instanceof UserError) throw e;
        outcome = { ok: false, reason: 'invalid', message: withPrefix(`${recipe.preconditioner} setup`, (e as Error).message) };
      }
    }
    setupSeconds = secondsSince(tSetup);
  } catch (e) {
    plan.finish();
    throw e;
  }
  plan.suspend();
  const setupWork = M ? { ...M.work().setup } : zeroWork();
  const setup: PreparedSolve['setup'] = { ok: outcome.ok, seconds: setupSeconds, work: setupWork };
  if (!outcome.ok) setup.message = outcome.message;
  const pattern = matrixOf(system, format);
  let solves = 0;
  let disposed = false;

  return {
    recipe,
    setup,
    get disposed() { return disposed; },
    solve(b, sopts = {}) {
      if (disposed) throw new Error('prepareSolve: solve() after dispose()');
      checkLength(b, sopts.x0, n0);
      const other = sopts.matrix !== undefined && sopts.matrix !== system ? sopts.matrix : undefined;
      const otherValues = other !== undefined ? laggedValues(other, pattern, format) : undefined;
      const leave = plan.scope();
      let spilled = 0;
      try {
        const bk = plan.adopt(b);
        const x = sopts.x0 ? plan.adopt(sopts.x0) : kernelF64(n0);
        let op = A;
        let operatorSpill = false;
        if (otherValues !== undefined) {
          const values = plan.adopt(otherValues);
          operatorSpill = plan.kernels === 'wasm' && values.buffer !== pattern.values.buffer;
          op = format === 'bsr' ? bsrOperator({ ...(pattern as Bsr), values }) : csrOperator({ ...(pattern as Csr), values });
        }
        const first = solves === 0;
        solves++;
        const result = solveOn(system, op, bk, x, recipe, M, outcome, sopts, first ? setup : undefined);
        if (otherValues !== undefined) {
          const mem = result.memory;
          mem.buffers.matrix['values (matrix solved, lagged preconditioner)'] = otherValues.byteLength;
          mem.matrixBytes = sumBytes(mem.buffers.matrix);
        }
        // the caller's copy of x: kernel memory is reused by the next solve
        const xOut = plan.memoryBytes > 0 ? Float64Array.from(x) : x;
        spilled = leave();
        result.kernels = plan.kernels;
        if (plan.note !== undefined) result.kernelsNote = plan.note;
        else if (operatorSpill) result.kernelsNote = `the values of the matrix solved (lagged preconditioner) did not fit kernel memory (prepare with laggedMatrix); its products ran in TypeScript${spilled > otherValues!.byteLength ? `, and ${spilled - otherValues!.byteLength} more bytes did not fit` : ''}`;
        else if (spilled > 0) result.kernelsNote = `${spilled} bytes did not fit kernel memory; kernels on those arrays ran in TypeScript`;
        if (plan.memoryBytes > 0) result.kernelMemoryBytes = plan.memoryBytes;
        return { result, x: xOut };
      } catch (e) {
        leave();
        throw e;
      }
    },
    dispose() {
      if (disposed) return;
      disposed = true;
      plan.finish();
      M = undefined;
    },
  };
}

/** The matrix in the format the operator multiplies with. */
function matrixOf(system: SystemMatrix, format: MatrixFormat): Bsr | Csr {
  return format === 'bsr' ? system.bsr : system.csr;
}

/**
 * The values of another system for the prepared operator's pattern: the same size, block size
 * and pattern (rowPtr and colInd) as the prepared matrix, else a one-line UserError.
 */
function laggedValues(other: SystemMatrix, pattern: Bsr | Csr, format: MatrixFormat): Float64Array {
  const what = 'lagged preconditioner: the matrix to solve';
  const n = sizeOf(other);
  const n0 = 'bs' in pattern ? pattern.nBlockRows * pattern.bs : pattern.nRows;
  if (n !== n0) throw new UserError(`${what} has size ${n}, the prepared matrix ${n0} (a reused preconditioner needs the same size and pattern)`);
  if (isMatrixStore(other)) other.keepOnly(format, { lastUse: false });
  const m = matrixOf(other, format);
  if ('bs' in pattern && (m as Bsr).bs !== pattern.bs) {
    throw new UserError(`${what} has block size ${(m as Bsr).bs}, the prepared matrix ${pattern.bs}`);
  }
  const rows = pattern.rowPtr.length - 1;
  for (let i = 1; i <= rows; i++) {
    if (m.rowPtr[i] !== pattern.rowPtr[i]) {
      throw new UserError(`${what}: its pattern differs from the prepared matrix's in ${format === 'bsr' ? 'block row' : 'row'} ${i - 1} (number of stored entries), a reused preconditioner needs the same pattern`);
    }
  }
  for (let i = 0; i < rows; i++) {
    for (let k = pattern.rowPtr[i]; k < pattern.rowPtr[i + 1]; k++) {
      if (m.colInd[k] !== pattern.colInd[k]) {
        throw new UserError(`${what}: its pattern differs from the prepared matrix's in ${format === 'bsr' ? 'block row' : 'row'} ${i} (column indices), a reused preconditioner needs the same pattern`);
      }
    }
  }
  return m.values;
}

/**
 * One solve on the prepared operator and preconditioner (x holds x₀ and gets the solution).
 * setup: the preconditioner's setup when this solve is the first, else undefined (reused: this
 * solve did no setup work).
 */
function solveOn(
  system: SystemMatrix, A: MatrixOperator, b: Float64Array, x: Float64Array, recipe: Recipe,
  M: Preconditioner | undefined, outcome: SetupOutcome, opts: PreparedSolveOptions,
  setup: PreparedSolve['setup'] | undefined,
): SolveResult {
  let result: SolveResult;
  if (!outcome.ok) {
    result = setupFailure(A, b, x, recipe, M, outcome);
  } else {
    result = krylovSolve(A, b, x, recipe, M, { onIteration: opts.onIteration, carry: opts.carry });
  }
  if (setup !== undefined) {
    result.timing.setupSeconds = setup.seconds;
    result.work.setup = { ...setup.work };
  } else {
    result.timing.setupSeconds = 0;
    result.work.setup = zeroWork();
    if (M) result.setupReused = true;
  }
  const mem = result.memory;
  mem.buffers.matrix = isMatrixStore(system) ? system.heldBytes() : { ...A.bytes };
  mem.matrixBytes = sumBytes(mem.buffers.matrix);
  // the right-hand side and the solution live as long as the solve
  mem.buffers.work['right-hand side'] = b.byteLength;
  mem.buffers.work.solution = x.byteLength;
  mem.workBytes = sumBytes(mem.buffers.work);
  if (M) {
    mem.buffers.preconditioner = M.memory();
    mem.preconditionerBytes = sumBytes(mem.buffers.preconditioner);
    const stats = M.stats?.();
    if (stats) result.preconditionerStats = stats;
  }
  mem.peakBytes = Math.max(mem.peakBytes, peakRssBytes());
  return result;
}

/** Result of a run whose preconditioner setup failed: no iterations, x = x₀, the residual of x₀. */
function setupFailure(
  A: MatrixOperator, b: Float64Array, x: Float64Array, recipe: Recipe, M: Preconditioner | undefined,
  outcome: Extract<SetupOutcome, { ok: false }>,
): SolveResult {
  const n = A.n;
  const r = kernelF64(n);
  const counts = zeroWork();
  const rNorm = residualInto(A, b, x, r, counts);
  const base = recipe.relativeTo === 'rhs' ? norm2(n, b) : rNorm;
  if (recipe.relativeTo === 'rhs') addWork(counts, vectorWork.norm2(n));
  const failure: { message: string; blockRow?: number } = { message: outcome.message };
  if (outcome.blockRow !== undefined) failure.blockRow = outcome.blockRow;
  return buildResult({
    method: recipe.krylov === 'none' ? 'stationary' : recipe.krylov,
    M, cause: outcome.reason === 'non-finite' ? 'non-finite-value' : 'preconditioner-error',
    iterations: 0, restarts: 0, history: [relative(rNorm, base)],
    watched: recipe.side === 'left' && recipe.krylov === 'gmres' ? 'left-preconditioned' : 'plain',
    relativeTo: recipe.relativeTo, referenceNorm: base, trueReferenceNorm: base, trueResidualNorm: rNorm,
    residualChecks: [], residualMismatch: false, solveSeconds: 0, meter: meterPreconditioner(undefined),
    krylov: {}, work: {}, counts, failure,
  });
}
