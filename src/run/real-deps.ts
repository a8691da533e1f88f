/** The real implementations behind SweepDeps (see deps.ts): the solver side plus suite parsers and the generator. */
export { loadSystem, readMatrixMarketVector, solveSystem, prepareSolve } from './solver-deps.js';
export { parseRecipe } from '../solvers/recipe.js';
export { parseGeneratorParams } from '../dg/generate.js';
import { writeGeneratedCase as writeCase, type GeneratorParams } from '../dg/generate.js';

/** The CaseBuilder shape of writeGeneratedCase (no progress sink). */
export function writeGeneratedCase(params: unknown, outDir: string, name: string, opts: { gzip?: boolean } = {}) {
  return writeCase(params as GeneratorParams, outDir, name, undefined, opts);
}
export { parseSequenceSpec, writeGeneratedSequence } from '../dg/sequence.js';
