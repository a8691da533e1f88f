import { withPrefix } from '../util/errors.js';
import type { Preconditioner } from '../precond/types.js';
import type {
  BufferBytes, Cause, RelativeTo, ResidualCheck, SolveMemory, SolveResult, WatchedNorm,
} from './types.js';
import { isSolved, outcomeOf, type WorkCounts } from './types.js';
import { addWork, workDifference, zeroWork } from './work.js';

/** Peak resident set size of this process so far, in bytes (maxRSS is reported in kilobytes). */
export function peakRssBytes(): number {
  return process.resourceUsage().maxRSS * 1024;
}

export function sumBytes(b: BufferBytes): number {
  let s = 0;
  for (const k of Object.keys(b)) s += b[k];
  return s;
}

/** Seconds since an earlier performance.now() reading. */
export function secondsSince(t0: number): number {
  return (performance.now() - t0) / 1000;
}

/**
 * Counts and times preconditioner applications during a solve. The solver calls apply()
 * instead of M.apply(); timing each call costs two clock reads, small beside any real apply.
 */
export interface PreconditionerMeter {
  applications: number;
  seconds: number;
  /** Set when M.apply threw: the run then ends as 'preconditioner-error' with this message. */
  failure?: string;
  /** M.work().apply when the meter was made (the solve's share is the difference at the end). */
  readonly applyWorkAtStart: WorkCounts;
  /** M.work().apply now minus at start: the preconditioner's work during this solve. */
  applyWorkSinceStart(): WorkCounts;
  apply(r: Float64Array, z: Float64Array): void;
}

/**
 * An apply() that throws (an inner solve gone wrong, say) must not escape to the user as a stack
 * trace: the meter records the message and fills z with NaN, so the solver stops at once as
 * non-finite, and buildResult reports 'preconditioner-error' with the message.
 */
export function meterPreconditioner(M: Preconditioner | undefined): PreconditionerMeter {
  const applyWorkAtStart = M ? { ...M.work().apply } : zeroWork();
  const meter: PreconditionerMeter = {
    applications: 0,
    seconds: 0,
    applyWorkAtStart,
    applyWorkSinceStart: () => (M ? workDifference(M.work().apply, applyWorkAtStart) : zeroWork()),
    apply(r, z) {
      if (!M) { z.set(r); return; }
      const t0 = performance.now();
      try {
        M.apply(r, z);
      } catch (e) {
        meter.failure ??= withPrefix(`${M.name}.apply`, (e as Error)?.message ?? String(e));
        z.fill(NaN);
      }
      meter.seconds += (performance.now() - t0) / 1000;
      meter.applications++;
    },
  };
  return meter;
}

export function emptyMemory(): SolveMemory {
  return {
    matrixBytes: 0, preconditionerBytes: 0, krylovBytes: 0, workBytes: 0, peakBytes: 0,
    buffers: { matrix: {}, preconditioner: {}, krylov: {}, work: {} },
  };
}

/** Everything a solver knows at its end; solveSystem adds matrix/preconditioner bytes and setup time. */
export interface SolverOutcome {
  method: string;
  M?: Preconditioner;
  cause: Cause;
  iterations: number;
  restarts: number;
  history: number[];
  watched: WatchedNorm;
  relativeTo: RelativeTo;
  referenceNorm: number;
  trueReferenceNorm: number;
  /** ‖b − A x‖ for the x returned. */
  trueResidualNorm: number;
  residualChecks: ResidualCheck[];
  residualMismatch: boolean;
  solveSeconds: number;
  meter: PreconditionerMeter;
  krylov: BufferBytes;
  /** Basis bytes of a full cycle when the method allocates its basis as it goes (GMRES, FGMRES). */
  basisReserved?: number;
  /** Work-vector bytes (memory report). */
  work: BufferBytes;
  /** The solver's own work (its products, vector operations, start and checks), preconditioner excluded. */
  counts: WorkCounts;
  ritz?: { re: number[]; im: number[] };
  failure?: { message: string; blockRow?: number };
}

/** Relative value with 0/0 = 0 (a zero residual against a zero reference is exact). */
export function relative(value: number, base: number): number {
  if (base === 0) return value === 0 ? 0 : Infinity;
  return value / base;
}

export function buildResult(o: SolverOutcome): SolveResult {
  if (o.meter.failure !== undefined) {
    o = { ...o, cause: 'preconditioner-error', failure: { message: o.meter.failure } };
  }
  const memory = emptyMemory();
  memory.buffers.krylov = o.krylov;
  memory.buffers.work = o.work;
  memory.krylovBytes = sumBytes(o.krylov);
  // methods that allocate every vector up front reserve what they hold
  memory.basisReservedBytes = o.basisReserved ?? sumBytes(o.krylov);
  memory.workBytes = sumBytes(o.work);
  memory.peakBytes = peakRssBytes();
  const result: SolveResult = {
    method: o.method,
    preconditioner: o.M ? o.M.name : 'none',
    converged: isSolved(o.cause),
    outcome: outcomeOf(o.cause),
    cause: o.cause,
    iterations: o.iterations,
    restarts: o.restarts,
    history: o.history,
    watched: o.watched,
    relativeTo: o.relativeTo,
    referenceNorm: o.referenceNorm,
    trueRelativeResidual: relative(o.trueResidualNorm, o.trueReferenceNorm),
    trueReferenceNorm: o.trueReferenceNorm,
    residualChecks: o.residualChecks,
    residualMismatch: o.residualMismatch,
    timing: {
      setupSeconds: 0,
      solveSeconds: o.solveSeconds,
      preconditionerApplications: o.meter.applications,
      secondsPerPreconditionerApply: o.meter.applications > 0 ? o.meter.seconds / o.meter.applications : 0,
    },
    memory,
    work: { setup: zeroWork(), solve: addWork({ ...o.counts }, o.meter.applyWorkSinceStart()) },
  };
  if (o.ritz) result.ritz = o.ritz;
  if (o.failure) result.failure = o.failure;
  return result;
}

/** Bytes of named typed arrays. */
export function bytesOf(arrays: Record<string, { byteLength: number } | undefined>): BufferBytes {
  const out: BufferBytes = {};
  for (const k of Object.keys(arrays)) {
    const a = arrays[k];
    if (a) out[k] = a.byteLength;
  }
  return out;
}
