import type { Preconditioner, SetupOutcome, SystemMatrix } from '../precond/types.js';
import { createPreconditioner } from '../precond/registry.js';
import { UserError, withPrefix } from '../util/errors.js';
import type { Recipe } from './recipe.js';
import type { SolveResult } from './types.js';
import type { KrylovOptions } from './options.js';
import { bsrOperator, csrOperator, residualInto, type MatrixOperator } from './operator.js';
import { checkVariablePreconditioner, krylovSolve } from './krylov.js';
import { buildResult, meterPreconditioner, peakRssBytes, relative, secondsSince, sumBytes } from './result.js';
import { norm2 } from './vector.js';
import { isMatrixStore, type MatrixFormat } from '../sparse/system.js';
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
 */
export function solveSystem(
  system: SystemMatrix, b: Float64Array, recipe: Recipe, opts: SolveSystemOptions = {},
): { result: SolveResult; x: Float64Array } {
  const format = matrixFormatFor(recipe, blockSizeOf(system));
  if (isMatrixStore(system)) system.keepOnly(format, { lastUse: opts.lastUse === true });
  const n0 = system.n ?? system.bsr.nBlockRows * system.bsr.bs;
  if (b.length !== n0) throw new UserError(`right-hand side has length ${b.length}, expected ${n0} (the matrix size)`);
  if (opts.x0 && opts.x0.length !== n0) throw new UserError(`initial guess has length ${opts.x0.length}, expected ${n0}`);
  const choice = opts.kernels ?? kernelChoiceFromEnv();
  const plan = planKernels(system, recipe, choice, format);
  if (plan.note !== undefined && !notesShown.has(plan.note)) {
    notesShown.add(plan.note);
    process.stderr.write(`slabbench: kernels: TypeScript (${plan.note})\n`);
  }
  try {
    const bk = plan.adopt(b);
    const x = opts.x0 ? plan.adopt(opts.x0) : kernelF64(n0);
    const result = solveOn(system, bk, x, recipe, opts, format);
    // the caller's copy of x: kernel memory is reused by the next solve
    const xOut = plan.memoryBytes > 0 ? Float64Array.from(x) : x;
    const used = plan.finish();
    result.kernels = plan.kernels;
    if (plan.note !== undefined) result.kernelsNote = plan.note;
    else if (used.spilledBytes > 0) result.kernelsNote = `${used.spilledBytes} bytes did not fit kernel memory; kernels on those arrays ran in TypeScript`;
    if (plan.memoryBytes > 0) result.kernelMemoryBytes = plan.memoryBytes;
    if (plan.movedBytes > 0) result.kernelMatrixMovedBytes = plan.movedBytes;
    return { result, x: xOut };
  } finally {
    plan.finish();
  }
}

/** The solve itself, on the kernel set planned by solveSystem (x holds x₀ and gets the solution). */
function solveOn(
  system: SystemMatrix, b: Float64Array, x: Float64Array, recipe: Recipe, opts: SolveSystemOptions, format: MatrixFormat,
): SolveResult {
  const A = systemOperator(system, format);

  let M: Preconditioner | undefined;
  let outcome: SetupOutcome = { ok: true };
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
  const setupSeconds = secondsSince(tSetup);

  let result: SolveResult;
  if (!outcome.ok) {
    result = setupFailure(A, b, x, recipe, M, outcome);
  } else {
    result = krylovSolve(A, b, x, recipe, M, { onIteration: opts.onIteration, carry: opts.carry });
  }
  result.timing.setupSeconds = setupSeconds;
  if (M) result.work.setup = { ...M.work().setup };
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
