/**
 * The timing protocol's arithmetic: statistics over timed repeats, the check that repeats computed
 * the same thing, and an explicit garbage collection between repeats.
 *
 * Protocol (run-task.ts runs it): one untimed warm-up solve (unless switched off), then R timed
 * repeats, each with a fresh preconditioner setup and a full GC before it. The stated figure is the
 * median; the minimum and maximum are kept, so a reader (and the ranking) sees the spread.
 */
import v8 from 'node:v8';
import vm from 'node:vm';
import type { SolveResult } from '../solvers/types.js';
import type { PhaseSeconds, RepeatTimes } from './results-types.js';

/** Median of a non-empty list (mean of the two middle values for an even count). */
export function median(xs: readonly number[]): number {
  if (xs.length === 0) return Number.NaN;
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 === 1 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Index of the repeat whose total is the median (the lower of the two middle ones for an even count). */
export function medianIndex(xs: readonly number[]): number {
  const order = xs.map((x, i) => [x, i] as const).sort((a, b) => a[0] - b[0] || a[1] - b[1]);
  return order[(order.length - 1) >> 1][1];
}

function phase(setup: number, solve: number, total: number): PhaseSeconds {
  return { setupSeconds: setup, solveSeconds: solve, totalSeconds: total };
}

/** Summary of the repeats' seconds; `stored` is the median-total repeat. */
export function summarizeRepeats(
  setupSeconds: number[], solveSeconds: number[], flags: { warmup: boolean; gc: boolean },
): Omit<RepeatTimes, 'consistent' | 'differences'> {
  const total = setupSeconds.map((s, i) => s + solveSeconds[i]);
  return {
    count: setupSeconds.length,
    warmup: flags.warmup,
    gc: flags.gc,
    setupSeconds: [...setupSeconds],
    solveSeconds: [...solveSeconds],
    median: phase(median(setupSeconds), median(solveSeconds), median(total)),
    min: phase(Math.min(...setupSeconds), Math.min(...solveSeconds), Math.min(...total)),
    max: phase(Math.max(...setupSeconds), Math.max(...solveSeconds), Math.max(...total)),
    stored: medianIndex(total),
  };
}

function stopText(r: SolveResult): string {
  return `${r.outcome}/${r.cause}`;
}

function sameNumber(a: number, b: number): boolean {
  return Object.is(a, b) || a === b;
}

/**
 * What differs between two repeats of one deterministic computation: stop outcome, iterations,
 * restarts, the residual history entry by entry (exactly), the final true residual. Empty when
 * they agree. `a` is repeat 1 (the reference), `b` repeat `k` (1-based).
 */
export function repeatDifferences(a: SolveResult, b: SolveResult, k: number): string[] {
  const out: string[] = [];
  const sa = stopText(a), sb = stopText(b);
  if (sa !== sb) out.push(`repeat ${k}: stopped ${sb}, repeat 1: ${sa}`);
  if (a.iterations !== b.iterations) out.push(`repeat ${k}: ${b.iterations} iterations, repeat 1: ${a.iterations}`);
  if (a.restarts !== b.restarts) out.push(`repeat ${k}: ${b.restarts} restarts, repeat 1: ${a.restarts}`);
  const n = Math.max(a.history.length, b.history.length);
  for (let i = 0; i < n; i++) {
    if (!sameNumber(a.history[i], b.history[i])) {
      out.push(`repeat ${k}: residual history differs from repeat 1 at entry ${i} (${b.history[i]} vs ${a.history[i]})`);
      break;
    }
  }
  if (!sameNumber(a.trueRelativeResidual, b.trueRelativeResidual)) {
    out.push(`repeat ${k}: true residual ${b.trueRelativeResidual}, repeat 1: ${a.trueRelativeResidual}`);
  }
  return out;
}

let gcFn: (() => void) | null | undefined;

/**
 * A function running a full garbage collection, or undefined when V8 refuses. Exposed at run time:
 * V8's --expose-gc flag set through v8.setFlagsFromString, then `gc` read from a fresh context
 * (common practice; works in the main thread, in worker threads and under vitest on Node 20).
 */
export function exposedGc(): (() => void) | undefined {
  if (gcFn === undefined) {
    gcFn = null;
    try {
      const g = (globalThis as { gc?: unknown }).gc;
      if (typeof g === 'function') {
        gcFn = g as () => void;
      } else {
        v8.setFlagsFromString('--expose-gc');
        const f = vm.runInNewContext('gc') as unknown;
        if (typeof f === 'function') gcFn = f as () => void;
      }
    } catch {
      gcFn = null;
    }
  }
  return gcFn ?? undefined;
}

/** Run a full GC when one is available; true when it ran. */
export function collectGarbage(): boolean {
  const gc = exposedGc();
  if (!gc) return false;
  gc();
  return true;
}

/**
 * Relative spread (max − min) / median of setup + solve seconds of one run's repeats; undefined
 * with fewer than two repeats or a zero median.
 */
export function relativeSpread(r: RepeatTimes | undefined): number | undefined {
  if (!r || r.count < 2) return undefined;
  const m = r.median.totalSeconds;
  if (!(m > 0)) return undefined;
  return (r.max.totalSeconds - r.min.totalSeconds) / m;
}

/**
 * The timing noise of a sweep: the median, over all runs with at least two repeats, of their
 * relative spread (max − min) / median of setup + solve seconds. Undefined when no run was repeated.
 */
export function timingNoise(runs: ReadonlyArray<{ repeats?: RepeatTimes }>): number | undefined {
  const spreads: number[] = [];
  for (const r of runs) {
    const s = relativeSpread(r.repeats);
    if (s !== undefined && Number.isFinite(s)) spreads.push(s);
  }
  return spreads.length ? median(spreads) : undefined;
}
