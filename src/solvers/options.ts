import type { Preconditioner } from '../precond/types.js';
import { UserError } from '../util/errors.js';
import type { Orthogonalization, PreconditionSide, Recipe } from './recipe.js';
import type { RelativeTo } from './types.js';

/** Options shared by every iterative solver (gmres, bicgstab, stationary). */
export interface KrylovOptions {
  /** Preconditioner, already set up (setup() returned ok). Absent = identity. */
  M?: Preconditioner;
  /** GMRES/FGMRES basis size per cycle (ignored by BiCGStab and stationary). */
  restart: number;
  /** GMRES only: 'right' (watches the plain residual ‖b − Ax‖) or 'left' (watches ‖M⁻¹(b − Ax)‖). */
  side: PreconditionSide;
  orthogonalization: Orthogonalization;
  /** Solved when the watched ‖r‖ ≤ rtol · reference norm … */
  rtol: number;
  /** … or when ‖r‖ ≤ atol (0 disables). */
  atol: number;
  /** Total inner iterations, whatever the restart. */
  maxIterations: number;
  /** Stops on residual growth when ‖r‖ > divergence · reference norm. */
  divergence: number;
  relativeTo: RelativeTo;
  /** GMRES: flexible variant (FGMRES, right preconditioning only, stores Z = M⁻¹V). */
  flexible?: boolean;
  /** Stationary iteration step factor ω in x ← x + ω M⁻¹(b − A x). Default 1. */
  omega?: number;
  /**
   * GMRES-DR and GCRO-DR: harmonic Ritz vectors kept at each restart (and, GCRO-DR, carried to the
   * next solve), 0 ≤ deflate < restart. Default defaultDeflate(restart).
   */
  deflate?: number;
  /** GMRES: compute Ritz values of the first cycle (default true). */
  ritz?: boolean;
  /**
   * Called at iteration 0 and after every iteration with the watched relative residual.
   * Returning true asks the solver to stop: the run ends with cause 'iteration-budget' and
   * failure.message "stopped by the onIteration monitor".
   */
  onIteration?(iteration: number, relativeResidual: number): boolean | void;
  /**
   * State a Krylov method carries from one solve to the next of a sequence (a recycled subspace):
   * the caller keeps one KrylovCarry per recipe and sequence and passes the same object to every
   * solve; methods that do not recycle ignore it.
   */
  carry?: KrylovCarry;
}

/** Per-sequence state of a recycling method, owned by the caller and filled by the method. */
export interface KrylovCarry {
  /** Method-specific recycled space (GCRO-DR: the deflation basis); absent before the first solve. */
  recycle?: unknown;
}

/** Solver options from a recipe (the preconditioner is passed separately, already set up). */
export function krylovOptionsFromRecipe(recipe: Recipe, M?: Preconditioner): KrylovOptions {
  return {
    M,
    restart: recipe.restart,
    side: recipe.side,
    orthogonalization: recipe.orthogonalization,
    rtol: recipe.rtol,
    atol: recipe.atol,
    maxIterations: recipe.maxIterations,
    divergence: recipe.divergence,
    relativeTo: recipe.relativeTo,
    flexible: recipe.krylov === 'fgmres',
    omega: recipe.omega,
    deflate: recipe.deflate,
  };
}

function bad(method: string, field: string, what: string): UserError {
  return new UserError(`${method}: option ${field}: ${what}`);
}

/** Check option values (a programming or recipe error becomes a one-line UserError). */
export function checkKrylovOptions(method: string, o: KrylovOptions): void {
  if (!Number.isInteger(o.restart) || o.restart < 1) throw bad(method, 'restart', `expected an integer ≥ 1, got ${o.restart}`);
  if (o.side !== 'right' && o.side !== 'left') throw bad(method, 'side', `expected right or left, got ${String(o.side)}`);
  if (o.orthogonalization !== 'mgs' && o.orthogonalization !== 'cgs2') {
    throw bad(method, 'orthogonalization', `expected mgs or cgs2, got ${String(o.orthogonalization)}`);
  }
  if (!(o.rtol >= 0) || !Number.isFinite(o.rtol)) throw bad(method, 'rtol', `expected a finite number ≥ 0, got ${o.rtol}`);
  if (!(o.atol >= 0) || !Number.isFinite(o.atol)) throw bad(method, 'atol', `expected a finite number ≥ 0, got ${o.atol}`);
  if (!Number.isInteger(o.maxIterations) || o.maxIterations < 0) {
    throw bad(method, 'maxIterations', `expected an integer ≥ 0, got ${o.maxIterations}`);
  }
  if (!(o.divergence > 1)) throw bad(method, 'divergence', `expected a number > 1, got ${o.divergence}`);
  if (o.relativeTo !== 'rhs' && o.relativeTo !== 'start-residual') {
    throw bad(method, 'relativeTo', `expected rhs or start-residual, got ${String(o.relativeTo)}`);
  }
  if (o.omega !== undefined && (!(o.omega > 0) || !Number.isFinite(o.omega))) {
    throw bad(method, 'omega', `expected a finite number > 0, got ${o.omega}`);
  }
}

/** Most harmonic Ritz vectors kept when a recipe or caller gives no deflate. */
export const DEFAULT_DEFLATE = 10;

/** The deflation dimension when none is given: 10, or ⌊restart/3⌋ when smaller (k well below m; common practice). */
export function defaultDeflate(restart: number): number {
  return Math.min(DEFAULT_DEFLATE, Math.floor(restart / 3));
}

/**
 * The checks of the deflated GMRES variants (gmres-dr, gcro-dr) beyond checkKrylovOptions: right
 * preconditioning with a fixed M only, and 0 ≤ deflate < restart. Returns the cycle length m
 * (restart capped at n) and the deflation dimension k (capped at m − 1).
 */
export function checkDeflatedOptions(method: string, o: KrylovOptions, n: number): { m: number; k: number } {
  checkKrylovOptions(method, o);
  if (o.flexible) throw bad(method, 'flexible', 'not supported (the deflated methods need a fixed preconditioner)');
  if (o.side === 'left' && o.M) throw bad(method, 'side', `${method} preconditions on the right only`);
  if (o.M?.variable) {
    throw new UserError(`${method}: preconditioner ${o.M.name} changes between applications (variable: it runs an inner iterative solve); ${method} needs a fixed preconditioner, use krylov fgmres`);
  }
  const kReq = o.deflate ?? defaultDeflate(o.restart);
  if (!Number.isInteger(kReq) || kReq < 0 || kReq >= o.restart) {
    throw bad(method, 'deflate', `expected an integer from 0 to restart − 1 = ${o.restart - 1}, got ${kReq}`);
  }
  const m = Math.max(1, Math.min(o.restart, n));
  return { m, k: Math.min(kReq, m - 1) };
}

/** Check b and x against the operator size; b and x must be different arrays. */
export function checkVectors(method: string, n: number, b: Float64Array, x: Float64Array, M?: Preconditioner): void {
  if (b.length !== n) throw new UserError(`${method}: right-hand side has length ${b.length}, expected ${n}`);
  if (x.length !== n) throw new UserError(`${method}: x has length ${x.length}, expected ${n}`);
  if (b === x) throw new UserError(`${method}: b and x must be different arrays`);
  if (M && M.n !== n) throw new UserError(`${method}: preconditioner ${M.name} has size ${M.n}, expected ${n}`);
}
