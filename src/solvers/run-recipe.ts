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
import { addWork, vectorWork, zeroWork } from './work.js';

export interface SolveSystemOptions {
  /** Initial guess (copied; default zeros). */
  x0?: Float64Array;
  /** Per-iteration monitor (see KrylovOptions.onIteration). */
  onIteration?: KrylovOptions['onIteration'];
}

/** The operator solveSystem multiplies with: BSR when the block size is above 1, else CSR. */
export function systemOperator(system: SystemMatrix): MatrixOperator {
  return system.bsr.bs > 1 ? bsrOperator(system.bsr) : csrOperator(system.csr);
}

/**
 * Solve A x = b with a recipe: create the preconditioner through the registry, set it up (timed),
 * run the recipe's method (timed), and fill the memory report (matrix bytes of the operator actually
 * used, preconditioner bytes from M.memory(), Krylov basis and work vectors, peak RSS) and the
 * preconditioner's statistics. Solver and preconditioner failures become causes; only an
 * invalid recipe (or a recipe the matrix cannot serve) throws a UserError. b is never modified.
 */
export function solveSystem(
  system: SystemMatrix, b: Float64Array, recipe: Recipe, opts: SolveSystemOptions = {},
): { result: SolveResult; x: Float64Array } {
  const A = systemOperator(system);
  const n = A.n;
  if (b.length !== n) throw new UserError(`right-hand side has length ${b.length}, expected ${n} (the matrix size)`);
  if (opts.x0 && opts.x0.length !== n) throw new UserError(`initial guess has length ${opts.x0.length}, expected ${n}`);
  const x = opts.x0 ? Float64Array.from(opts.x0) : new Float64Array(n);

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
    result = krylovSolve(A, b, x, recipe, M, { onIteration: opts.onIteration });
  }
  result.timing.setupSeconds = setupSeconds;
  if (M) result.work.setup = { ...M.work().setup };
  const mem = result.memory;
  mem.buffers.matrix = { ...A.bytes };
  mem.matrixBytes = sumBytes(A.bytes);
  if (M) {
    mem.buffers.preconditioner = M.memory();
    mem.preconditionerBytes = sumBytes(mem.buffers.preconditioner);
    const stats = M.stats?.();
    if (stats) result.preconditionerStats = stats;
  }
  mem.peakBytes = Math.max(mem.peakBytes, peakRssBytes());
  return { result, x };
}

/** Result of a run whose preconditioner setup failed: no iterations, x = x₀, the residual of x₀. */
function setupFailure(
  A: MatrixOperator, b: Float64Array, x: Float64Array, recipe: Recipe, M: Preconditioner | undefined,
  outcome: Extract<SetupOutcome, { ok: false }>,
): SolveResult {
  const n = A.n;
  const r = new Float64Array(n);
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
