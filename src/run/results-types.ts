import type { RecordedRecipe } from '../solvers/recipe.js';
import type { SolveResult, WorkCounts } from '../solvers/types.js';
import type { SequencePolicy } from '../solvers/sequence-policy.js';

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
  /** A sequence of systems sharing this pattern (the other fields describe the first system). */
  sequence?: { kind: 'files' | 'newton' | 'slabs'; systems: number; labels: string[] };
}

export interface RunRecord {
  matrix: string;
  recipe: string;
  /** The recipe's name and only the fields its methods read (recordedRecipe). */
  recipeParams: RecordedRecipe;
  /** Absent when the run could not start (then error says why). */
  result?: SolveResult;
  error?: string;
  /** Timed repeats of this pair (timing protocol); absent in results written before repeats existed
   *  (then result.timing holds the one timed solve). */
  repeats?: RepeatTimes;
  /** Modeled seconds = bytes / bandwidth + flops / flop rate per phase, with the document's `model`
   *  rates; absent when the result carries no work counters or the sweep ran no probe. */
  modeled?: PhaseSeconds;
  /**
   * Present when the matrix is a sequence: per system and in total (src/run/sequence.ts). `result`
   * then holds the whole sequence: iterations, timing and work are the totals, cause and outcome
   * those of the first system that was not solved (else of the last), trueRelativeResidual the
   * largest over the systems, history, memory and statistics the last system's. `repeats` repeat
   * the whole sequence (their seconds are sequence totals); this is the stored repeat's detail.
   */
  sequence?: SequenceRecord;
}

/** One recipe on a sequence of systems: what happened at each system, and the totals. */
export interface SequenceRecord {
  /** 'files' (a list in the suite), 'newton' (generated Newton steps) or 'slabs' (generated slab marching). */
  kind: 'files' | 'newton' | 'slabs';
  /** The recipe's reuse policy and initial guess (defaults filled in). */
  policy: SequencePolicy;
  systems: SequenceSystemRecord[];
  totals: SequenceTotals;
}

export interface SequenceSystemRecord {
  /** Position in the sequence, from 1. */
  index: number;
  /** "newton 2", "slab 3", "file 1". */
  label: string;
  /** The preconditioner was set up for this system; false: the set-up of an earlier system was reused. */
  rebuilt: boolean;
  /** The initial guess this solve started from. */
  x0: 'zero' | 'previous';
  outcome: SolveResult['outcome'];
  cause: SolveResult['cause'];
  iterations: number;
  trueRelativeResidual: number;
  /** 0 when the preconditioner was reused. */
  setupSeconds: number;
  solveSeconds: number;
  /** Work counters; setup is all zeros when the preconditioner was reused. */
  work: { setup: WorkCounts; solve: WorkCounts };
  /** Relative residual history of this solve. */
  history: number[];
}

/** Sums over the systems (exactly the sums of the per-system figures). */
export interface SequenceTotals {
  systems: number;
  /** Systems that reached the tolerance. */
  solved: number;
  /** Preconditioner set-ups (the first system always has one, unless the recipe has no preconditioner). */
  rebuilds: number;
  iterations: number;
  setupSeconds: number;
  solveSeconds: number;
  totalSeconds: number;
  work: { setup: WorkCounts; solve: WorkCounts };
}

/** Seconds of one run split by phase. */
export interface PhaseSeconds {
  setupSeconds: number;
  solveSeconds: number;
  /** setup + solve. */
  totalSeconds: number;
}

/** Every timed repeat of one matrix × recipe pair, and their summary (src/run/timing.ts). */
export interface RepeatTimes {
  /** Number of timed repeats, each with a fresh preconditioner setup. */
  count: number;
  /** An untimed warm-up solve ran before the repeats. */
  warmup: boolean;
  /** A full garbage collection ran before each timed repeat. */
  gc: boolean;
  /** Per repeat, in order. */
  setupSeconds: number[];
  solveSeconds: number[];
  /** Median, minimum and maximum over the repeats; each field on its own (totalSeconds from the per-repeat totals). */
  median: PhaseSeconds;
  min: PhaseSeconds;
  max: PhaseSeconds;
  /** Index of the repeat whose SolveResult is stored in `result` (the one with the median total time). */
  stored: number;
  /** False when iterations, stop reason or residual history differed between repeats (a flagged run). */
  consistent: boolean;
  /** What differed, e.g. "repeat 2: iterations 11, repeat 1: 10" (only when not consistent). */
  differences?: string[];
}

/** The machine probe run at the start of a sweep (src/run/probe.ts). */
export interface MachineProbe {
  /** Streaming bandwidth, 10⁹ bytes per second (triad, STREAM byte counting). */
  bandwidthGBs: number;
  /** Dense block flop rate, 10⁹ floating-point operations per second. */
  flopRateGFLOPs: number;
  /** Wall time the probe took. */
  probeSeconds: number;
  /** What was measured, in words. */
  method: string;
}

/** Rates the modeled times of a document were computed with. */
export interface ModelRates {
  bandwidthGBs: number;
  flopRateGFLOPs: number;
  /** 'probe': this machine's probe; 'target': --target-bandwidth / --target-flops. */
  bandwidthFrom: 'probe' | 'target';
  flopRateFrom: 'probe' | 'target';
}

/** What ran beside the sweep: its own worker count, the machine's CPUs and load average (1, 5, 15 min). */
export interface ParallelNote {
  jobs: number;
  cpus: number;
  loadAverageStart: number[];
  loadAverageEnd?: number[];
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
    /** Each pair was solved once untimed before the timed repeats (default; `--no-warmup` turns it off). */
    warmup?: boolean;
    /** Timed repeats per pair (absent: one). */
    repeats?: number;
    /** A full garbage collection ran before each timed repeat. */
    gc?: boolean;
    /** How `sweep` ranked the recipes (absent: time). */
    rankBy?: 'time' | 'modeled' | 'work' | 'iterations';
    /** --target-bandwidth / --target-flops, when given. */
    target?: { bandwidthGBs?: number; flopRateGFLOPs?: number };
    /** What ran in parallel with the sweep. */
    parallel?: ParallelNote;
  };
  /** Machine probe of this sweep (absent: no probe ran, e.g. a merged or older document). */
  machine?: MachineProbe;
  /** Rates behind every run's `modeled` seconds. */
  model?: ModelRates;
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
    /** setupSeconds/solveSeconds are medians over this many timed repeats (absent: one solve). */
    repeats?: number;
    /** Range of setup + solve seconds over the repeats. */
    totalSecondsMin?: number;
    totalSecondsMax?: number;
    /** Bytes moved and flops, setup + solve (work counters; absent when the result has none). */
    bytesMoved?: number;
    flops?: number;
    /** Modeled setup + solve seconds (document rates). */
    modeledSeconds?: number;
  }>;
  /** Suite description and fingerprint, so the history view can tell suites apart. */
  suite?: { description?: string; fingerprint?: string };
  /** The user's label for this run: --label, else the commit from the CI environment (labelFrom says which). */
  label?: string;
  /** 'option' (--label) or the environment variable the label came from (GITHUB_SHA, CI_COMMIT_SHA, …). */
  labelFrom?: string;
  /** True when the suite fingerprint differs from the previous entry's (matrices or recipes edited in between). */
  suiteChanged?: boolean;
}
