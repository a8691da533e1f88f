/**
 * Name → factory map for preconditioners. The names are the ones used by `--precond` and by
 * suite-file recipes. Adding a method = one file exporting a factory + one register line below.
 */
import type { Preconditioner, SystemMatrix } from './types.js';
import type { Recipe } from '../solvers/recipe.js';
import { UserError } from '../util/errors.js';
import { createNone } from './none.js';
import { createJacobi } from './jacobi.js';
import { createBlockJacobi } from './block-jacobi.js';
import { createBlockGs } from './block-gs.js';
import { createIlu0 } from './ilu0.js';
import { createBlockIluk } from './block-iluk.js';
import { createBlockIlu0 } from './block-ilu0.js';
import { createSlab } from './slab.js';

/** Creates a preconditioner (cheap: checks options; the heavy work happens in setup()). */
export type PreconditionerFactory = (system: SystemMatrix, recipe: Recipe) => Preconditioner;

const factories = new Map<string, PreconditionerFactory>();

/** Adds a method under a new name; a name can be registered once only. */
export function registerPreconditioner(name: string, factory: PreconditionerFactory): void {
  if (factories.has(name)) throw new Error(`registerPreconditioner: '${name}' is already registered`);
  factories.set(name, factory);
}

/** Registered names, in registration order. */
export function preconditionerNames(): string[] {
  return [...factories.keys()];
}

/**
 * The preconditioner a recipe asks for, not yet set up. Throws UserError for an unknown name or
 * an option the matrix cannot serve; numerical trouble is reported later by setup().
 */
export function createPreconditioner(system: SystemMatrix, recipe: Recipe): Preconditioner {
  const factory = factories.get(recipe.preconditioner);
  if (!factory) {
    throw new UserError(`recipe ${recipe.name}: unknown preconditioner '${String(recipe.preconditioner)}', expected one of ${preconditionerNames().join(', ')}`);
  }
  // only the BSR view is touched here: a slab's CSR view is built lazily, for point methods only
  const { bsr } = system;
  if (bsr.nBlockRows !== bsr.nBlockCols) {
    throw new UserError(`recipe ${recipe.name}: preconditioner ${recipe.preconditioner} needs a square matrix, got ${bsr.nBlockRows}×${bsr.nBlockCols} blocks`);
  }
  return factory(system, recipe);
}

registerPreconditioner('none', createNone);
registerPreconditioner('jacobi', createJacobi);
registerPreconditioner('block-jacobi', createBlockJacobi);
registerPreconditioner('block-gs', createBlockGs);
registerPreconditioner('ilu0', createIlu0);
registerPreconditioner('block-ilu0', createBlockIlu0);
registerPreconditioner('block-iluk', createBlockIluk);
registerPreconditioner('slab', createSlab);
