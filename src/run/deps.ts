/**
 * What the sweep needs from other areas, as one replaceable module.
 *
 * The real implementation is `real-deps.ts` (loader, generator, recipe parser, solver). A worker thread
 * cannot receive functions, so the worker is told a module URL and imports it; tests point that URL at a
 * small double. Keep this interface to the few calls the sweep makes.
 */
import type { Bsr, Csr } from '../sparse/types.js';
import type { Recipe } from '../solvers/recipe.js';
import type { SolveResult } from '../solvers/types.js';
import type { SystemMatrix } from '../precond/types.js';
import type { KrylovCarry } from '../solvers/options.js';

/** The part of loadSystem's LoadedSystem the sweep reads. */
export interface LoadedForRun {
  csr: Csr;
  bsr: Bsr;
  bs: number;
  blockSizeSource?: string;
  slabOffsets?: Int32Array;
  /** Layout section `modes` (p-multigrid reads it). */
  modes?: SystemMatrix['modes'];
  /** Layout field `centroids` (the coordinate partitioner reads it). */
  centroids?: SystemMatrix['centroids'];
}

/** What a sequence run passes to a solve: initial guess and the Krylov carry (see KrylovOptions.carry). */
export interface SolveOptionsForRun {
  x0?: Float64Array;
  carry?: KrylovCarry;
}

/** A recipe's preconditioner set up once, solving this system or later ones of the same pattern. */
export interface PreparedForRun {
  /** `matrix`: a later system of the same pattern, solved with this set-up (the lagged preconditioner). */
  solve(b: Float64Array, opts?: SolveOptionsForRun & { matrix?: SystemMatrix }): { result: SolveResult; x: Float64Array };
  dispose(): void;
}

export interface RunDeps {
  loadSystem(mtxPath: string, opts?: { blockSize?: number }): Promise<LoadedForRun>;
  readMatrixMarketVector(path: string): Promise<Float64Array>;
  solveSystem(system: SystemMatrix, b: Float64Array, recipe: Recipe, opts?: SolveOptionsForRun): { result: SolveResult; x: Float64Array };
  /** Set up a recipe's preconditioner for reuse across a sequence (absent: reuse policies other than rebuild cannot run). */
  prepareSolve?(system: SystemMatrix, recipe: Recipe, opts?: { laggedMatrix?: boolean }): PreparedForRun;
}

export interface SuiteParsers {
  parseRecipe(obj: unknown, where: string): Recipe;
  /** Validates generator parameters; the sweep treats the result as opaque JSON. */
  parseGeneratorParams(obj: unknown, where: string): unknown;
  /** Validates a generated sequence (`"sequence": { "kind": … }` beside `generate`); absent: not supported. */
  parseSequenceSpec?(obj: unknown, where: string, params: unknown): unknown;
}

export interface CaseBuilder {
  writeGeneratedCase(params: unknown, outDir: string, name: string): Promise<{ mtx: string; rhs: string; layout: string }>;
  /** Builds the systems of a generated sequence in order (absent: sequences not supported). */
  writeGeneratedSequence?(params: unknown, spec: unknown, outDir: string, name: string): Promise<{ systems: Array<{ mtx: string; rhs: string; layout: string; label: string }> }>;
}

export type SweepDeps = RunDeps & SuiteParsers & CaseBuilder;

/** URL of a sibling module of this file, with this file's extension (.ts under tsx/vitest, .js in dist/). */
export function siblingModuleUrl(baseName: string): URL {
  const here = import.meta.url;
  const ext = here.endsWith('.ts') ? '.ts' : '.js';
  return new URL(`./${baseName}${ext}`, here);
}
