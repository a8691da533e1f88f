/** The real implementations behind SweepDeps (see deps.ts): the solver side plus suite parsers and the generator. */
export { loadSystem, readMatrixMarketVector, solveSystem, prepareSolve } from './solver-deps.js';
export { parseRecipe } from '../solvers/recipe.js';
export { parseGeneratorParams, writeGeneratedCase } from '../dg/generate.js';
export { parseSequenceSpec, writeGeneratedSequence } from '../dg/sequence.js';
