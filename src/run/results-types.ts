import type { Recipe } from '../solvers/recipe.js';
import type { SolveResult } from '../solvers/types.js';

export const RESULTS_SCHEMA = 'slabbench-results/1' as const;
export const SUITE_SCHEMA = 'slabbench-suite/1' as const;

/** Coarse picture of the block pattern: counts of stored blocks per cell of a cells×cells grid. */
export interface BlockPattern {
  cells: number;
  /** cells·cells numbers, row-major: stored blocks falling in each cell. */
  counts: number[];
  /** Block rows represented by one cell (the last cell may hold fewer). */
  blockRowsPerCell: number;
  /** Slab boundaries, in block rows (0 and nBlockRows included). */
  slabOffsets: number[];
  nBlockRows: number;
}

export interface MatrixInfo {
  name: string;
  source: 'file' | 'generated';
  /** Path of the .mtx file the runs used (relative to the results file's folder when possible). */
  path: string;
  note?: string;
  n: number;
  nnz: number;
  bs: number;
  nBlockRows: number;
  nBlocks: number;
  nSlabs: number;
  pattern?: BlockPattern;
}

export interface RunRecord {
  matrix: string;
  recipe: string;
  recipeParams: Recipe;
  /** Absent when the run could not start (then error says why). */
  result?: SolveResult;
  error?: string;
}

export interface ResultsDoc {
  schema: typeof RESULTS_SCHEMA;
  slabbench: string;
  commit?: string;
  node: string;
  cpu: string;
  date: string;
  suite: { path?: string; description?: string };
  parameters: { jobs: number; shard?: { index: number; count: number } };
  matrices: MatrixInfo[];
  runs: RunRecord[];
}

/** One line of the history file (JSON lines), appended per run of a suite. */
export interface HistoryEntry {
  date: string;
  commit?: string;
  slabbench: string;
  runs: Array<{
    matrix: string;
    recipe: string;
    reason: string;
    iterations: number;
    trueRelativeResidual: number;
    setupSeconds: number;
    solveSeconds: number;
    peakBytes: number;
  }>;
}
