/**
 * The one operator interface: anything that maps a vector to a vector "into a caller-owned y".
 * Matrices, preconditioners and whole solvers all fit it. Implementations never allocate in apply.
 */
export interface LinearOperator {
  /** Operator is n×n. */
  readonly n: number;
  /** y ← A x. x and y must be different arrays of length n; x is never modified. */
  apply(x: Float64Array, y: Float64Array): void;
  /**
   * The cost of ONE apply by the work model (src/solvers/work.ts), matvecs 1; a constant formula of
   * the matrix, not a running count. Solvers add it per apply they make. Absent for an operator
   * that does not know its cost: its applications are still counted (matvecs), its flops and
   * bytes are not.
   */
  readonly applyWork?: WorkCounts;
}

/**
 * Exact, machine-independent work of one phase (README "Work model"): operator applications,
 * preconditioner applications, iterations of nested (inner) solves, floating-point operations and
 * bytes moved, each from its kernel's formula. Nested solves add all their work to the phase that
 * ran them (an FGMRES + slab solve counts the inner GMRES products in matvecs).
 */
export interface WorkCounts {
  matvecs: number;
  preconditionerApplies: number;
  innerIterations: number;
  flops: number;
  bytes: number;
}

/**
 * Why a solve stopped: exactly one cause per run.
 * - relative-target: the watched ‖r‖ ≤ rtol · reference norm
 * - absolute-target: the watched ‖r‖ ≤ atol
 * - iteration-budget: the total inner-iteration limit was reached (or a caller's monitor asked to stop)
 * - residual-growth: ‖r‖ > divergence · reference norm
 * - method-breakdown: the method cannot continue (singular Hessenberg, BiCGStab's (r̂, r) = 0 …)
 * - non-finite-value: NaN or Inf in b, the matrix, a preconditioner output or a residual
 * - preconditioner-error: setup failed (zero pivot …) or an apply threw
 */
export type Cause =
  | 'relative-target'
  | 'absolute-target'
  | 'iteration-budget'
  | 'residual-growth'
  | 'method-breakdown'
  | 'non-finite-value'
  | 'preconditioner-error';

export const CAUSES: readonly Cause[] = [
  'relative-target', 'absolute-target', 'iteration-budget', 'residual-growth', 'method-breakdown',
  'non-finite-value', 'preconditioner-error',
];

/** The cause, coarsely: solved (a target met), unsolved (budget spent), failed (anything else). */
export type Outcome = 'solved' | 'unsolved' | 'failed';

export const OUTCOMES: readonly Outcome[] = ['solved', 'unsolved', 'failed'];

export function outcomeOf(cause: Cause): Outcome {
  if (cause === 'relative-target' || cause === 'absolute-target') return 'solved';
  if (cause === 'iteration-budget') return 'unsolved';
  return 'failed';
}

export function isSolved(cause: Cause): boolean {
  return outcomeOf(cause) === 'solved';
}

/**
 * Which residual norm the stopping test watched: 'plain' = ‖b − Ax‖, 'left-preconditioned' =
 * ‖M⁻¹(b − Ax)‖ (GMRES with side left).
 */
export type WatchedNorm = 'plain' | 'left-preconditioned';
/** What relative residuals are relative to: ‖b‖ ('rhs') or ‖r₀‖ ('start-residual'). */
export type RelativeTo = 'rhs' | 'start-residual';

/** Bytes by named buffer. Keys are free-form names such as "values", "factors", "basis". */
export type BufferBytes = Record<string, number>;

export interface SolveMemory {
  matrixBytes: number;
  preconditionerBytes: number;
  krylovBytes: number;
  workBytes: number;
  /** Peak resident set size of the process during setup + solve (process.resourceUsage().maxRSS). */
  peakBytes: number;
  buffers: { matrix: BufferBytes; preconditioner: BufferBytes; krylov: BufferBytes; work: BufferBytes };
}

export interface SolveTiming {
  setupSeconds: number;
  solveSeconds: number;
  preconditionerApplications: number;
  /** solve-phase seconds spent inside preconditioner apply, divided by applications (0 if none). */
  secondsPerPreconditionerApply: number;
}

/** A true-residual check (at each restart and at the end) beside the recursive estimate. */
export interface ResidualCheck {
  iteration: number;
  estimate: number; // relative, as watched
  trueValue: number; // ‖b − A x‖ / trueReferenceNorm
  /** Left preconditioning only: the recomputed watched residual ‖M⁻¹(b − A x)‖ / referenceNorm. */
  watchedValue?: number;
}

export interface SolveResult {
  /** 'gmres' | 'fgmres' | 'bicgstab' | 'stationary' */
  method: string;
  preconditioner: string;
  /** outcome === 'solved'. */
  converged: boolean;
  outcome: Outcome;
  cause: Cause;
  /** Inner iterations in total (one per Krylov vector / stationary step). */
  iterations: number;
  /** Completed restart cycles (GMRES); 0 for non-restarted methods. */
  restarts: number;
  /** Relative residual norms, history[0] = 1 at iteration 0, then one per iteration. */
  history: number[];
  watched: WatchedNorm;
  relativeTo: RelativeTo;
  /** ‖b‖ or ‖r0‖ (‖M⁻¹b‖ or ‖M⁻¹r0‖ when left-preconditioned), the norm the history divides by. */
  referenceNorm: number;
  /** ‖b − A x‖ / trueReferenceNorm at the end, recomputed from scratch. */
  trueRelativeResidual: number;
  /**
   * The plain norm trueRelativeResidual divides by (‖b‖ or ‖r0‖). Equals referenceNorm except
   * under left preconditioning, where referenceNorm is ‖M⁻¹b‖ or ‖M⁻¹r0‖.
   */
  trueReferenceNorm?: number;
  residualChecks: ResidualCheck[];
  /** true when a recursive estimate and the true residual disagreed by more than a factor 10 (and above rtol). */
  residualMismatch: boolean;
  timing: SolveTiming;
  memory: SolveMemory;
  /**
   * Work counts by phase: setup = the preconditioner's setup (zeros without one); solve = the
   * iterations, start and true-residual checks included, with every preconditioner application.
   * Ritz values are a report and not counted. Results converted from schema version 1 lack it.
   */
  work: { setup: WorkCounts; solve: WorkCounts };
  /** Ritz values from the first GMRES cycle's Hessenberg matrix (preconditioned spectrum estimate). */
  ritz?: { re: number[]; im: number[] };
  /** When cause is 'preconditioner-error' or 'method-breakdown' (or a monitor stop): what and where. */
  failure?: { message: string; blockRow?: number };
  /** Preconditioner-specific statistics, e.g. inner iterations per slab. */
  preconditionerStats?: Record<string, unknown>;
  /**
   * True when the solve used a preconditioner set up for an earlier solve (prepareSolve: a later
   * right-hand side, or a later system of a sequence with a lagged preconditioner): this solve did
   * no setup work, so timing.setupSeconds is 0 and work.setup is zeros. Absent: the setup reported
   * is this solve's own (or there is no preconditioner).
   */
  setupReused?: boolean;
  /** Kernel set the solve ran on (set by solveSystem; absent in results written before it existed). */
  kernels?: 'wasm' | 'typescript';
  /** Why the TypeScript kernels ran under --kernels auto, or what did not fit kernel memory. */
  kernelsNote?: string;
  /** Bytes of the WebAssembly memory reserved for the solve (address space; pages never written use no RAM). */
  kernelMemoryBytes?: number;
}
