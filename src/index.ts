// Public library API. Each area re-exports its own entry points.
export * from './sparse/types.js';
export * from './sparse/csr.js';
export * from './sparse/bsr.js';
export * from './solvers/types.js';
export * from './solvers/recipe.js';
export * from './precond/types.js';
export { UserError, EXIT } from './util/errors.js';
