/**
 * Name → factory map for preconditioners. The names are the ones used by `--precond` and by
 * suite-file recipes. Adding a method = one file exporting a factory + one register line below.
 */
import type { Preconditioner, SystemMatrix } from './types.js';
import type { Recipe, RecipeField } from '../solvers/recipe.js';
import { UserError } from '../util/errors.js';
import { createNone } from './none.js';
import { createJacobi } from './jacobi.js';
import { createBlockJacobi } from './block-jacobi.js';
import { createBlockGs } from './block-gs.js';
import { createIlu0 } from './ilu0.js';
import { createBlockIluk } from './block-iluk.js';
import { createBlockIlu0 } from './block-ilu0.js';
import { createSlab } from './slab.js';
import { createSchwarz } from './schwarz.js';
import { createDirect } from './direct.js';
import { createAir } from './air.js';
import { createPMultigrid } from './p-multigrid.js';

/** Creates a preconditioner (cheap: checks options; the heavy work happens in setup()). */
export type PreconditionerFactory = (system: SystemMatrix, recipe: Recipe) => Preconditioner;

/** What a preconditioner declares about itself when it is registered. */
export interface PreconditionerInfo {
  /**
   * The recipe fields its factory and setup read, beyond the common ones every recipe uses
   * (krylov, preconditioner and the stopping rule: rtol, atol, maxIterations, divergence,
   * relativeTo). A field set explicitly in a recipe that neither this list nor the Krylov method's
   * list (KRYLOV_USES in recipe.ts) contains is rejected, and results record only used fields.
   * Leave it out only while unsure: then nothing is rejected and every field is recorded.
   */
  uses?: readonly RecipeField[];
}

const factories = new Map<string, PreconditionerFactory>();
const declaredUses = new Map<string, readonly RecipeField[]>();

/** Adds a method under a new name; a name can be registered once only. */
export function registerPreconditioner(name: string, factory: PreconditionerFactory, info: PreconditionerInfo = {}): void {
  if (factories.has(name)) throw new Error(`registerPreconditioner: '${name}' is already registered`);
  factories.set(name, factory);
  if (info.uses) declaredUses.set(name, [...info.uses]);
}

/** The recipe fields a registered preconditioner reads beyond the common ones ('all' when it did not say, or is unknown). */
export function preconditionerUses(name: string): readonly RecipeField[] | 'all' {
  return declaredUses.get(name) ?? 'all';
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
  // a loaded system (n given) is square by construction; otherwise only the BSR view is touched
  // here: a slab's CSR view is built lazily, for point methods only
  const bsr = system.n === undefined ? system.bsr : undefined;
  if (bsr && bsr.nBlockRows !== bsr.nBlockCols) {
    throw new UserError(`recipe ${recipe.name}: preconditioner ${recipe.preconditioner} needs a square matrix, got ${bsr.nBlockRows}×${bsr.nBlockCols} blocks`);
  }
  return factory(system, recipe);
}

registerPreconditioner('none', createNone, { uses: [] });
registerPreconditioner('jacobi', createJacobi, { uses: ['shift'] });
registerPreconditioner('block-jacobi', createBlockJacobi, { uses: ['blockInverse', 'shift'] });
registerPreconditioner('block-gs', createBlockGs, { uses: ['sweep', 'ordering', 'omega', 'sweeps', 'shift', 'blockInverse'] });
registerPreconditioner('ilu0', createIlu0, { uses: ['shift'] });
registerPreconditioner('block-ilu0', createBlockIlu0, { uses: ['ordering', 'shift'] });
registerPreconditioner('block-iluk', createBlockIluk, { uses: ['fillLevel', 'ordering', 'shift'] });
registerPreconditioner('slab', createSlab, { uses: ['inner', 'shift'] });
registerPreconditioner('schwarz', createSchwarz, { uses: ['parts', 'overlap', 'schwarzKind', 'subdomain', 'partitionSlabs', 'partitionMethod', 'shift', 'ordering', 'blockInverse', 'sweep', 'omega', 'sweeps', 'fillLevel'] });
registerPreconditioner('direct', createDirect, { uses: ['shift'] });
registerPreconditioner('air', createAir, { uses: ['air'] });
registerPreconditioner('p-multigrid', createPMultigrid, { uses: ['pMultigrid'] });
