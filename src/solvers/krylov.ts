import type { Preconditioner } from '../precond/types.js';
import type { Recipe } from './recipe.js';
import type { LinearOperator, SolveResult } from './types.js';
import { krylovOptionsFromRecipe, type KrylovOptions } from './options.js';
import { gmres } from './gmres.js';
import { bicgstab } from './bicgstab.js';
import { stationary } from './stationary.js';
import { gmresDr } from './gmres-dr.js';
import { gcroDr } from './gcro-dr.js';
import { defaultDeflate } from './options.js';
import { UserError } from '../util/errors.js';

/**
 * GMRES (and GMRES-DR, GCRO-DR) needs M to be the same linear map at every application; a variable preconditioner (inner
 * iterative solves) is refused with a one-line error naming the recipe. FGMRES takes it.
 */
export function checkVariablePreconditioner(recipe: Recipe, M?: Preconditioner): void {
  if (M?.variable && (recipe.krylov === 'gmres' || recipe.krylov === 'gmres-dr' || recipe.krylov === 'gcro-dr')) {
    throw new UserError(`recipe ${recipe.name}: preconditioner ${M.name} changes between applications (variable: it runs an inner iterative solve); ${recipe.krylov} needs a fixed preconditioner, use krylov fgmres`);
  }
}

/**
 * Run the recipe's iterative method on A x = b with an already set-up preconditioner M.
 * x holds x₀ on entry and the solution on return. Used by solveSystem and by the slab
 * preconditioner for its inner solves. Adding a Krylov method = one file + one case here.
 *
 * Stationary iteration (krylov 'none'): the step factor is recipe.omega, except with block-gs,
 * which applies ω inside its sweep (SOR), so the outer step is 1 (no double relaxation).
 */
export function krylovSolve(
  A: LinearOperator, b: Float64Array, x: Float64Array, recipe: Recipe, M?: Preconditioner,
  extra?: Pick<KrylovOptions, 'onIteration' | 'ritz' | 'carry'>,
): SolveResult {
  checkVariablePreconditioner(recipe, M);
  const opts: KrylovOptions = { ...krylovOptionsFromRecipe(recipe, M), ...extra };
  switch (recipe.krylov) {
    case 'gmres':
    case 'fgmres':
      return gmres(A, b, x, opts);
    case 'bicgstab':
      return bicgstab(A, b, x, opts);
    case 'gmres-dr':
      return gmresDr(A, b, x, opts);
    case 'gcro-dr':
      return gcroDr(A, b, x, opts);
    case 'none':
      return stationary(A, b, x, { ...opts, omega: recipe.preconditioner === 'block-gs' ? 1 : recipe.omega });
  }
}

/** The Krylov methods whose reserved basis `estimate` projects (every method but the stationary iteration). */
export const BASIS_KRYLOV = ['gmres', 'fgmres', 'gmres-dr', 'gcro-dr', 'bicgstab'] as const;
export type BasisKrylov = (typeof BASIS_KRYLOV)[number];

/**
 * The reserved basis of each method of BASIS_KRYLOV for n unknowns with the given restart, as
 * krylovWorkspaceBytes counts it for the cycle length a solve uses: m = min(restart, n) and, for
 * the deflated methods, k = min(deflate ?? defaultDeflate(restart), m − 1), as
 * checkDeflatedOptions resolves them. What `estimate` projects (its `krylov` rows).
 */
export function reservedBasisBytes(restart: number, n: number, deflate?: number): Record<BasisKrylov, number> {
  const m = Math.max(1, Math.min(restart, n));
  const k = Math.min(deflate ?? defaultDeflate(restart), m - 1);
  const out = {} as Record<BasisKrylov, number>;
  for (const krylov of BASIS_KRYLOV) out[krylov] = krylovWorkspaceBytes({ krylov, restart: m, deflate: k }, n);
  return out;
}

/**
 * Bytes the Krylov method of a recipe reserves for a solve of n unknowns (its basis and work
 * vectors at a full cycle): GMRES (restart + 1)·n·8, FGMRES (2·restart + 1)·n·8, GMRES-DR
 * (restart + k + 2)·n·8 ((restart + 1)·n·8 at k = 0), GCRO-DR (restart + 1 + 4k)·n·8 (k =
 * deflate, default defaultDeflate(restart), at most restart − 1), BiCGStab 8·n·8,
 * stationary 2·n·8. The inner solves of slab and p-multigrid's coarse solves report this figure.
 */
export function krylovWorkspaceBytes(r: Pick<Recipe, 'krylov' | 'restart' | 'deflate'>, n: number): number {
  // k as the deflated methods resolve it (checkDeflatedOptions); GMRES-DR keeps no second basis at k = 0
  const k = Math.max(0, Math.min(r.deflate ?? defaultDeflate(r.restart), r.restart - 1));
  switch (r.krylov) {
    case 'gmres': return (r.restart + 1) * n * 8;
    case 'fgmres': return (2 * r.restart + 1) * n * 8;
    case 'gmres-dr': return (r.restart + 1 + (k > 0 ? k + 1 : 0)) * n * 8;
    case 'gcro-dr': return (r.restart + 1 + 4 * k) * n * 8;
    case 'bicgstab': return 8 * n * 8;
    case 'none': return 2 * n * 8;
  }
}
