/** The identity preconditioner: z ← r. Lets every solver run through one code path. */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { Recipe } from '../solvers/recipe.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { scaledWork, vectorWork, zeroWork } from '../solvers/work.js';
import { checkApplyArgs } from './common.js';

export function createNone(system: SystemMatrix, _recipe: Recipe): Preconditioner {
  return new NonePreconditioner(system.csr.nRows);
}

class NonePreconditioner implements Preconditioner {
  readonly name = 'none';
  readonly variable = false;
  private applies = 0;
  constructor(readonly n: number) {}
  setup(): SetupOutcome { this.applies = 0; return { ok: true }; }
  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    z.set(r);
    this.applies++;
  }
  /** Work model: one copy of n doubles per apply. */
  work(): { setup: WorkCounts; apply: WorkCounts } {
    return { setup: zeroWork(), apply: { ...scaledWork(vectorWork.copy(this.n), this.applies), preconditionerApplies: this.applies } };
  }
  memory(): BufferBytes { return {}; }
}
