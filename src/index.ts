// Public library API of slabbench. Each area exports its own entry points; internal helpers stay
// unexported. See DEVELOPERS.md for the architecture.

// sparse core, Matrix Market, layout, structure
export * from './sparse/types.js';
export * from './sparse/csr.js';
export * from './sparse/bsr.js';
export * from './sparse/permute.js';
export * from './sparse/blocks.js';
export * from './sparse/structure.js';
export * from './sparse/matrix-market.js';
export * from './sparse/layout.js';
export { loadSystem, systemFromMatrix, type LoadedSystem, type BlockSizeSource } from './sparse/load.js';
export { blockOrdering, couplingWeights, type BlockOrderingOptions } from './sparse/orderings.js';

// reference simplex, mesh, DG generator
export * from './dg/quadrature.js';
export * from './dg/basis.js';
export * from './mesh/space-time.js';
export * from './mesh/geometry.js';
export { prepareFrontMap, MAX_FRONT_ASPECT_RATIO, MAX_FRONT_GRADING, type FrontMap, type FrontMapOptions, type FrontMapSummary } from './mesh/front-map.js';
export { meshQuality, simplexAspectRatio, checkElementOrientation, type ElementQuality } from './mesh/quality.js';
export { parseGeneratorParams, resolveGenerator, generateSystem, writeGeneratedCase, type GeneratorParams, type GeneratedSystem } from './dg/generate.js';
export { runRefinementStudy, type RefinementStudy, type RefinementRow } from './dg/refine.js';
export { PHYSICS, PHYSICS_NAMES } from './dg/physics/registry.js';
export type { Physics, PhysicsDefinition, PhysicsName } from './dg/physics/types.js';
export { ELEMENT_ORDERINGS, type ElementOrdering } from './dg/ordering.js';

// solvers
export * from './solvers/types.js';
export * from './solvers/recipe.js';
export * from './solvers/operator.js';
export { gmres } from './solvers/gmres.js';
export { bicgstab } from './solvers/bicgstab.js';
export { stationary } from './solvers/stationary.js';
export { krylovSolve } from './solvers/krylov.js';
export {
  prepareSolve, solveSystem, systemOperator,
  type PreparedSolve, type PreparedSolveOptions, type PrepareSolveOptions, type SolveSystemOptions,
} from './solvers/run-recipe.js';
export { krylovOptionsFromRecipe, type KrylovOptions } from './solvers/options.js';
export { combineVotes, residualVote, type Vote, type StopRule } from './solvers/stopping.js';
export { ritzValues } from './solvers/ritz.js';

// preconditioners
export * from './precond/types.js';
export { createPreconditioner, registerPreconditioner, preconditionerNames, type PreconditionerFactory } from './precond/registry.js';
export { PIVOT_RTOL, luFactor, luSolve, luInverse, blockMatVec, blockMatVecSub, blockGemm, blockGemmSub } from './precond/dense.js';

// sweeps, results, regression checks, memory estimate
export * from './run/results-types.js';
export { readSuite, loadSuite, parseSuite, selectFromSuite, type Suite, type SuiteMatrix } from './run/suite.js';
export { runSweep, type SweepOptions, type SweepOutcome } from './run/sweep.js';
export { parseShard, shardPairs, type ShardSpec } from './run/shard.js';
export { mergeResults } from './run/merge.js';
export { readResults, writeResults, resultsCsv } from './run/results.js';
export { appendHistory, readHistory, historyEntry } from './run/history.js';
export { compareWithBaseline, junitXml, renderCheckTable, readToleranceFile, DEFAULT_TOLERANCE, type Tolerance, type CheckOutcome } from './run/baseline.js';
export { estimateMemory, spaceTimeBasisSize, kuhnElements, peakBytes, type EstimateInput, type MemoryEstimate, type Footprint } from './run/estimate.js';

// reports
export { rankRuns, rankMatrix, rankOptionsFor, verdictLine, RANK_BY, type RankedRun, type RankBy, type RankOptions, type MatrixRanking } from './report/rank.js';
export { probeMachine, modeledSeconds, modelRates } from './run/probe.js';
export { timingNoise, summarizeRepeats, repeatDifferences } from './run/timing.js';
export { renderRankedTables, shouldUseColor } from './report/table.js';
export { blockPattern } from './report/pattern.js';
export { renderReport, writeReport, type ReportOptions, type ReportSvg } from './report/html.js';
export { LIMITS_STATEMENT } from './report/limits.js';
export { formatBytes } from './report/format.js';

export { UserError, EXIT } from './util/errors.js';
export { VERSION } from './version.js';
