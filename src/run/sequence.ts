/**
 * One recipe on a sequence of systems sharing one pattern (a suite entry that is a sequence):
 * load every system, check the pattern, then solve them in order under the recipe's sequence
 * policy (src/solvers/sequence-policy.ts): rebuild the preconditioner or reuse an earlier set-up
 * (`prepareSolve` … `solve(b, { matrix })`: the lagged preconditioner), start from zero or from the
 * previous system's solution, and pass one Krylov carry object through every solve (a recycling
 * method such as GCRO-DR keeps its subspace there; the others ignore it).
 *
 * Timing protocol for a sequence: the unit is the whole sequence. The warm-up (unless off) runs
 * the whole sequence once untimed; each of the `repeats` timed repeats runs the whole sequence
 * again from scratch (new set-ups, a new carry, x₀ as the policy says), after a full garbage
 * collection (one per repeat, as for a single system; the systems then run back to back, as a
 * solver would run them). The stored repeat is
 * the one with the median total (setup + solve summed over the systems); `repeats` holds each
 * repeat's totals, and repeats that differ in any system (cause, iterations, history) flag the run.
 */
import type { KrylovCarry } from '../solvers/options.js';
import type { Recipe } from '../solvers/recipe.js';
import { rebuildSchedule, sequencePolicyOf } from '../solvers/sequence-policy.js';
import type { SolveResult, WorkCounts } from '../solvers/types.js';
import { addWork, zeroWork } from '../solvers/work.js';
import { isMatrixStore } from '../sparse/system.js';
import { UserError } from '../util/errors.js';
import type { LoadedForRun, PreparedForRun, RunDeps } from './deps.js';
import type { MatrixInfo, RunRecord, SequenceRecord, SequenceSystemRecord, SequenceTotals } from './results-types.js';
import { matrixInfo } from './results.js';
import { collectGarbage, repeatDifferences, summarizeRepeats } from './timing.js';
import type { SystemMatrix } from '../precond/types.js';

export interface TaskSequence {
  kind: SequenceRecord['kind'];
  /** Absolute paths, in order; label as shown per system. */
  systems: Array<{ mtx: string; rhs: string; label: string }>;
}

interface LoadedSystemOfSequence {
  label: string;
  system: LoadedForRun;
  b: Float64Array;
}

export interface LoadedSequence {
  key: string;
  systems?: LoadedSystemOfSequence[];
  error?: string;
  infoSent: boolean;
}

/** Cache key of a sequence (its files and block size). */
export function sequenceKey(seq: TaskSequence, blockSize?: number): string {
  return JSON.stringify([seq.systems.map((s) => [s.mtx, s.rhs]), blockSize ?? null]);
}

/**
 * Load every system of a sequence. Each must be square with a right-hand side of its size, and
 * share the first system's pattern (sizes, block size and stored entries); the first that does
 * not is named in a one-line error.
 */
export async function loadSequence(seq: TaskSequence, deps: RunDeps, blockSize: number | undefined, errorText: (e: unknown) => string): Promise<LoadedSequence> {
  const key = sequenceKey(seq, blockSize);
  try {
    const systems: LoadedSystemOfSequence[] = [];
    for (const s of seq.systems) {
      const system = await deps.loadSystem(s.mtx, blockSize !== undefined ? { blockSize } : undefined);
      const n = system.csr.nRows;
      if (system.csr.nCols !== n) throw new UserError(`${s.mtx}: matrix is ${n}×${system.csr.nCols}; a solve needs a square matrix`);
      const first = systems[0];
      if (first) {
        const why = patternDifference(first.system, system);
        if (why) throw new UserError(`${s.mtx}: ${why} than ${seq.systems[0]!.mtx}; the systems of a sequence share one pattern`);
      }
      const b = await deps.readMatrixMarketVector(s.rhs);
      if (b.length !== n) throw new UserError(`${s.rhs}: right-hand side has ${b.length} entries; the matrix has ${n} rows`);
      systems.push({ label: s.label, system, b });
    }
    return { key, systems, infoSent: false };
  } catch (e) {
    return { key, error: errorText(e), infoSent: false };
  }
}

/** How system b's pattern differs from a's, as the start of a sentence ending in "than FILE"), or undefined. */
function patternDifference(a: LoadedForRun, b: LoadedForRun): string | undefined {
  const ca = a.csr, cb = b.csr;
  if (ca.nRows !== cb.nRows || ca.nCols !== cb.nCols) return `has size ${cb.nRows}×${cb.nCols}, other`;
  if (a.bs !== b.bs) return `has block size ${b.bs}, other`;
  if (ca.colInd.length !== cb.colInd.length) return `has ${cb.colInd.length} stored entries, other`;
  for (let i = 0; i <= ca.nRows; i++) {
    if (ca.rowPtr[i] !== cb.rowPtr[i]) return `has a different count of entries in row ${i}`;
  }
  for (let k = 0; k < ca.colInd.length; k++) {
    if (ca.colInd[k] !== cb.colInd[k]) return `has other columns in row ${rowOf(ca.rowPtr, k) + 1}`;
  }
  return undefined;
}

function rowOf(rowPtr: Int32Array, k: number): number {
  let lo = 0, hi = rowPtr.length - 2;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (rowPtr[mid] <= k) lo = mid; else hi = mid - 1;
  }
  return lo;
}

/** The system as solveSystem takes it (a loaded store as it is, so it can keep one format). */
function asSystem(sys: LoadedForRun): SystemMatrix {
  return isMatrixStore(sys) ? sys
    : { csr: sys.csr, bsr: sys.bsr, ...(sys.slabOffsets ? { slabOffsets: sys.slabOffsets } : {}), ...(sys.modes ? { modes: sys.modes } : {}) };
}

/** One pass over the sequence: per-system results and whether each system rebuilt. */
interface SequencePass {
  results: SolveResult[];
  rebuilt: boolean[];
  x0: Array<'zero' | 'previous'>;
  gc: boolean;
}

/**
 * Solve the systems in order under the recipe's policy. Reuse needs `deps.prepareSolve`; without
 * it (or for reuse "rebuild") every system gets its own `solveSystem`.
 */
export function runSequencePass(systems: LoadedSystemOfSequence[], recipe: Recipe, deps: RunDeps, opts: { gc?: boolean } = {}): SequencePass {
  const policy = sequencePolicyOf(recipe);
  const schedule = rebuildSchedule(policy);
  const carry: KrylovCarry = {};
  const reuse = policy.reuse !== 'rebuild' && recipe.preconditioner !== 'none';
  if (reuse && !deps.prepareSolve) throw new UserError(`recipe ${recipe.name}: reuse ${policy.reuse} needs a solver that can keep a preconditioner (prepareSolve)`);
  const out: SequencePass = { results: [], rebuilt: [], x0: [], gc: true };
  let prepared: PreparedForRun | undefined;
  let previous: Float64Array | undefined;
  if (opts.gc !== false) out.gc = collectGarbage();
  try {
    for (const s of systems) {
      const system = asSystem(s.system);
      const x0 = policy.initialGuess === 'previous' && previous ? previous : undefined;
      const rebuild = !reuse || schedule.needsRebuild();
      let solved: { result: SolveResult; x: Float64Array };
      if (!reuse) {
        solved = deps.solveSystem(system, s.b, recipe, { ...(x0 ? { x0 } : {}), carry });
      } else if (rebuild) {
        prepared?.dispose();
        prepared = undefined;
        // later systems of the sequence are solved with this set-up: plan kernel memory for their values
        prepared = deps.prepareSolve!(system, recipe, { laggedMatrix: true });
        solved = prepared.solve(s.b, { ...(x0 ? { x0 } : {}), carry });
      } else {
        // a reused set-up costs this system nothing (the prepared solve reports setup 0 and setupReused)
        solved = prepared!.solve(s.b, { ...(x0 ? { x0 } : {}), carry, matrix: system });
      }
      schedule.solved(solved.result.iterations, rebuild);
      out.results.push(solved.result);
      out.rebuilt.push(recipe.preconditioner !== 'none' && rebuild);
      out.x0.push(x0 ? 'previous' : 'zero');
      previous = solved.x;
    }
  } finally {
    prepared?.dispose();
  }
  return out;
}

function sumWork(ws: WorkCounts[]): WorkCounts {
  const total = zeroWork();
  for (const w of ws) addWork(total, w);
  return total;
}

/** Per-system records and totals of a pass (totals are the sums of the per-system figures). */
export function sequenceRecord(kind: SequenceRecord['kind'], recipe: Recipe, labels: string[], pass: SequencePass): SequenceRecord {
  const systems: SequenceSystemRecord[] = pass.results.map((r, k) => ({
    index: k + 1,
    label: labels[k] ?? `system ${k + 1}`,
    rebuilt: pass.rebuilt[k]!,
    x0: pass.x0[k]!,
    outcome: r.outcome,
    cause: r.cause,
    iterations: r.iterations,
    trueRelativeResidual: r.trueRelativeResidual,
    setupSeconds: r.timing.setupSeconds,
    solveSeconds: r.timing.solveSeconds,
    work: { setup: { ...r.work.setup }, solve: { ...r.work.solve } },
    history: [...r.history],
  }));
  return { kind, policy: sequencePolicyOf(recipe), systems, totals: sequenceTotals(systems) };
}

export function sequenceTotals(systems: SequenceSystemRecord[]): SequenceTotals {
  const setupSeconds = systems.reduce((a, s) => a + s.setupSeconds, 0);
  const solveSeconds = systems.reduce((a, s) => a + s.solveSeconds, 0);
  return {
    systems: systems.length,
    solved: systems.filter((s) => s.outcome === 'solved').length,
    rebuilds: systems.filter((s) => s.rebuilt).length,
    iterations: systems.reduce((a, s) => a + s.iterations, 0),
    setupSeconds,
    solveSeconds,
    totalSeconds: setupSeconds + solveSeconds,
    work: { setup: sumWork(systems.map((s) => s.work.setup)), solve: sumWork(systems.map((s) => s.work.solve)) },
  };
}

/**
 * The whole sequence as one SolveResult (what ranking, tables, history and `check` read): totals
 * for iterations, restarts, timing and work; the first unsolved system's cause (else the last's);
 * the largest true relative residual; the last system's history, memory (peak: the largest) and statistics.
 */
export function aggregateResult(results: SolveResult[], totals: SequenceTotals): SolveResult {
  const last = results[results.length - 1]!;
  const stop = results.find((r) => !r.converged) ?? last;
  return {
    ...last,
    converged: stop.converged,
    outcome: stop.outcome,
    cause: stop.cause,
    ...(stop.failure ? { failure: stop.failure } : {}),
    iterations: totals.iterations,
    restarts: results.reduce((a, r) => a + r.restarts, 0),
    trueRelativeResidual: Math.max(...results.map((r) => r.trueRelativeResidual)),
    residualMismatch: results.some((r) => r.residualMismatch),
    timing: { ...last.timing, setupSeconds: totals.setupSeconds, solveSeconds: totals.solveSeconds },
    work: { setup: { ...totals.work.setup }, solve: { ...totals.work.solve } },
    memory: { ...last.memory, peakBytes: Math.max(...results.map((r) => r.memory.peakBytes)) },
  };
}

/** Differences between two passes (any system), for the repeat consistency flag. */
function passDifferences(a: SequencePass, b: SequencePass, k: number, labels: string[]): string[] {
  const out: string[] = [];
  a.results.forEach((ra, i) => {
    const rb = b.results[i];
    if (rb) for (const d of repeatDifferences(ra, rb, k)) out.push(`${labels[i] ?? `system ${i + 1}`}: ${d}`);
  });
  return out;
}

/** Matrix information of a sequence: the first system's, plus the sequence's kind, length and labels. */
export function sequenceInfo(base: { name: string; source: 'file' | 'generated'; path: string; note?: string }, loaded: LoadedSequence, kind: SequenceRecord['kind']): MatrixInfo {
  const systems = loaded.systems!;
  const info = matrixInfo(base, systems[0]!.system);
  return { ...info, sequence: { kind, systems: systems.length, labels: systems.map((s) => s.label) } };
}

/** Run one recipe on a loaded sequence with the timing protocol above. */
export function executeSequence(
  loaded: LoadedSequence, kind: SequenceRecord['kind'], recipe: Recipe, deps: RunDeps, timing: { warmup: boolean; repeats: number },
): Pick<RunRecord, 'result' | 'repeats' | 'sequence'> {
  const systems = loaded.systems!;
  const labels = systems.map((s) => s.label);
  if (timing.warmup) runSequencePass(systems, recipe, deps, { gc: false });
  const passes: SequencePass[] = [];
  const records: SequenceRecord[] = [];
  for (let r = 0; r < Math.max(1, timing.repeats); r++) {
    const pass = runSequencePass(systems, recipe, deps);
    passes.push(pass);
    records.push(sequenceRecord(kind, recipe, labels, pass));
  }
  const summary = summarizeRepeats(
    records.map((s) => s.totals.setupSeconds), records.map((s) => s.totals.solveSeconds),
    { warmup: timing.warmup, gc: passes.every((p) => p.gc) },
  );
  const differences = passes.slice(1).flatMap((p, k) => passDifferences(passes[0]!, p, k + 2, labels));
  const stored = records[summary.stored]!;
  return {
    result: aggregateResult(passes[summary.stored]!.results, stored.totals),
    repeats: { ...summary, consistent: differences.length === 0, ...(differences.length ? { differences } : {}) },
    sequence: stored,
  };
}
