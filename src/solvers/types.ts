/**
 * The one operator interface: anything that maps a vector to a vector "into a caller-owned y".
 * Matrices, preconditioners and whole solvers all fit it. Implementations never allocate in apply.
 */
export interface LinearOperator {
  /** Operator is n×n. */
  readonly n: number;
  /** y ← A x. x and y must be different arrays of length n; x is never modified. */
  apply(x: Float64Array, y: Float64Array): void;
}

/** Why a solve stopped. Exactly one per run. */
export type StopReason =
  | 'converged-rtol'
  | 'converged-atol'
  | 'max-iterations'
  | 'diverged'
  | 'breakdown'
  | 'non-finite'
  | 'preconditioner-failed';

export const STOP_REASONS: readonly StopReason[] = [
  'converged-rtol', 'converged-atol', 'max-iterations', 'diverged', 'breakdown', 'non-finite',
  'preconditioner-failed',
];

export function isConverged(reason: StopReason): boolean {
  return reason === 'converged-rtol' || reason === 'converged-atol';
}

/** Which residual the stopping test watched. */
export type MonitoredNorm = 'true' | 'preconditioned';
/** What the relative residual is relative to. */
export type ResidualBaseline = 'rhs' | 'initial-residual';

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
  estimate: number; // relative, as monitored
  trueValue: number; // ‖b − A x‖ / baseline norm
  /** Left preconditioning only: the recomputed monitored residual ‖M⁻¹(b − A x)‖ / baselineNorm. */
  monitoredValue?: number;
}

export interface SolveResult {
  /** 'gmres' | 'fgmres' | 'bicgstab' | 'stationary' */
  method: string;
  preconditioner: string;
  converged: boolean;
  reason: StopReason;
  /** Inner iterations in total (one per Krylov vector / stationary step). */
  iterations: number;
  /** Completed restart cycles (GMRES); 0 for non-restarted methods. */
  restarts: number;
  /** Relative residual norms, history[0] = 1 at iteration 0, then one per iteration. */
  history: number[];
  monitored: MonitoredNorm;
  baseline: ResidualBaseline;
  /** ‖b‖ or ‖r0‖, the norm the relative numbers divide by. */
  baselineNorm: number;
  /** ‖b − A x‖ / baselineNorm at the end, recomputed from scratch. */
  trueRelativeResidual: number;
  /**
   * The unpreconditioned norm trueRelativeResidual divides by (‖b‖ or ‖r0‖). Equals baselineNorm
   * except under left preconditioning, where baselineNorm is ‖M⁻¹b‖ or ‖M⁻¹r0‖.
   */
  trueBaselineNorm?: number;
  residualChecks: ResidualCheck[];
  /** true when a recursive estimate and the true residual disagreed by more than a factor 10 (and above rtol). */
  residualMismatch: boolean;
  timing: SolveTiming;
  memory: SolveMemory;
  /** Ritz values from the first GMRES cycle's Hessenberg matrix (preconditioned spectrum estimate). */
  ritz?: { re: number[]; im: number[] };
  /** When reason is 'preconditioner-failed' or 'breakdown': what and where. */
  failure?: { message: string; blockRow?: number };
  /** Preconditioner-specific statistics, e.g. inner iterations per slab. */
  preconditionerStats?: Record<string, unknown>;
  /** Kernel set the solve ran on (set by solveSystem; absent in results written before it existed). */
  kernels?: 'wasm' | 'typescript';
  /** Why the TypeScript kernels ran under --kernels auto, or what did not fit kernel memory. */
  kernelsNote?: string;
  /** Bytes of the WebAssembly memory reserved for the solve (address space; pages never written use no RAM). */
  kernelMemoryBytes?: number;
}
