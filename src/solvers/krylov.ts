import type { Preconditioner } from '../precond/types.js';
import type { Recipe } from './recipe.js';
import type { LinearOperator, SolveResult } from './types.js';
import { krylovOptionsFromRecipe, type KrylovOptions } from './options.js';
import { gmres } from './gmres.js';
import { bicgstab } from './bicgstab.js';
import { stationary } from './stationary.js';
import { gmresDr } from './gmres-dr.js';
import { gcroDr } from './gcro-dr.js';
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
