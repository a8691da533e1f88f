/** The real implementations behind RunDeps (see deps.ts). Imported by the CLI and by sweep workers. */
export { loadSystem } from '../sparse/load.js';
export { readMatrixMarketVector } from '../sparse/matrix-market.js';
export { solveSystem } from '../solvers/run-recipe.js';
export { parseRecipe } from '../solvers/recipe.js';
export { parseGeneratorParams, writeGeneratedCase } from '../dg/generate.js';
