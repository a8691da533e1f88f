/** The identity preconditioner: z ← r. Lets every solver run through one code path. */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { Recipe } from '../solvers/recipe.js';
import type { BufferBytes } from '../solvers/types.js';
import { checkApplyArgs } from './common.js';

export function createNone(system: SystemMatrix, _recipe: Recipe): Preconditioner {
  return new NonePreconditioner(system.n ?? system.csr.nRows);
}

class NonePreconditioner implements Preconditioner {
  readonly name = 'none';
  readonly variable = false;
  constructor(readonly n: number) {}
  setup(): SetupOutcome { return { ok: true }; }
  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    z.set(r);
  }
  memory(): BufferBytes { return {}; }
}
