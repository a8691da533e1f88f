import type { RecordedRecipe } from '../solvers/recipe.js';
import type { SolveResult } from '../solvers/types.js';

export const RESULTS_SCHEMA = 'slabbench-results/2' as const;
/** The earlier schema, still read (converted on reading by validateResults). */
export const RESULTS_SCHEMA_V1 = 'slabbench-results/1' as const;
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
  /** How the block size was found (loadSystem's blockSizeSource), when known. */
  blockSizeSource?: string;
}

export interface RunRecord {
  matrix: string;
  recipe: string;
  /** The recipe's name and only the fields its methods read (recordedRecipe). */
  recipeParams: RecordedRecipe;
  /** Absent when the run could not start (then error says why). */
  result?: SolveResult;
  error?: string;
}

export interface ResultsDoc {
  schema: typeof RESULTS_SCHEMA;
  /** Set on reading a version-1 document (converted in memory; such runs carry no `work` counts). */
  convertedFrom?: typeof RESULTS_SCHEMA_V1;
  slabbench: string;
  commit?: string;
  node: string;
  cpu: string;
  date: string;
  suite: {
    path?: string;
    description?: string;
    /** sha256 (hex, first 16 digits) of the suite's matrices and recipes as parsed: merge refuses to mix suites. */
    fingerprint?: string;
    /** Matrix and recipe names of the whole sweep after --only-matrix/--only-recipe, in suite order
     *  (before sharding): the pairs a complete set of shards must cover. */
    matrixNames?: string[];
    recipeNames?: string[];
  };
  parameters: {
    jobs: number;
    shard?: { index: number; count: number };
    onlyMatrix?: string[];
    onlyRecipe?: string[];
    /** Number of shard files combined by `slabbench merge`. */
    mergedShards?: number;
    /** Each pair was solved once untimed before the measured solve (`sweep --warmup`). */
    warmup?: boolean;
  };
  /** 'partial' while a sweep is running (written after each finished run), 'interrupted' after Ctrl-C.
   *  Absent in documents written before this field existed: read as 'complete'. */
  status?: 'complete' | 'partial' | 'interrupted';
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
    /** SolveResult.outcome. Lines written before it existed are upgraded from `reason` on reading. */
    outcome: string;
    /** SolveResult.cause (was `reason`). */
    cause: string;
    iterations: number;
    trueRelativeResidual: number;
    setupSeconds: number;
    solveSeconds: number;
    peakBytes: number;
    /** matrix + preconditioner + krylov + work bytes (buffer byte counts, not RSS). */
    bufferBytes?: number;
  }>;
  /** Suite description and fingerprint, so the history view can tell suites apart. */
  suite?: { description?: string; fingerprint?: string };
}
