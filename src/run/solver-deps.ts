/**
 * The real RunDeps (see deps.ts) that sweep workers import: loader, vector reader and solver only.
 * Kept apart from real-deps.ts so a worker does not load the generator (and mathjs) it never uses.
 */
export { loadSystem } from '../sparse/load.js';
export { readMatrixMarketVector } from '../sparse/matrix-market.js';
export { solveSystem, prepareSolve } from '../solvers/run-recipe.js';
