import { describe, expect, it } from 'vitest';
import { Worker } from 'node:worker_threads';
import { collectGarbage, exposedGc, median, medianIndex, relativeSpread, repeatDifferences, summarizeRepeats, timingNoise } from '../../src/run/timing.js';
import type { SolveResult } from '../../src/solvers/types.js';
import { makeResults } from '../report/fixture.js';

function result(): SolveResult {
  return structuredClone(makeResults().runs[0].result!);
}

describe('timing protocol arithmetic', () => {
  it('median and the index of the median repeat (lower middle for an even count)', () => {
    expect(median([3, 1, 2])).toBe(2);
    expect(median([4, 1, 3, 2])).toBe(2.5);
    expect(median([])).toBeNaN();
    expect(medianIndex([0.3, 0.1, 0.2])).toBe(2);
    expect(medianIndex([0.4, 0.1, 0.3, 0.2])).toBe(3);
    expect(medianIndex([5])).toBe(0);
  });

  it('summarizes repeats: every value kept, median/min/max per phase, totals from per-repeat sums', () => {
    const s = summarizeRepeats([0.1, 0.3, 0.2], [1.0, 0.5, 2.0], { warmup: true, gc: true });
    expect(s.setupSeconds).toEqual([0.1, 0.3, 0.2]);
    expect(s.solveSeconds).toEqual([1.0, 0.5, 2.0]);
    expect(s.median).toEqual({ setupSeconds: 0.2, solveSeconds: 1.0, totalSeconds: 1.1 });
    expect(s.min).toEqual({ setupSeconds: 0.1, solveSeconds: 0.5, totalSeconds: 0.8 });
    expect(s.max.totalSeconds).toBeCloseTo(2.2, 12);
    expect(s.stored).toBe(0); // totals 1.1, 0.8, 2.2: the median is repeat 0
    expect(s).toMatchObject({ count: 3, warmup: true, gc: true });
    expect(relativeSpread({ ...s, consistent: true })).toBeCloseTo((2.2 - 0.8) / 1.1, 12);
    expect(relativeSpread(undefined)).toBeUndefined();
  });

  it('repeats that computed the same thing have no differences; any change in stop, iterations or history is named', () => {
    const a = result();
    expect(repeatDifferences(a, structuredClone(a), 2)).toEqual([]);
    const b = structuredClone(a);
    b.iterations += 1;
    b.history = [...b.history, 1e-12];
    expect(repeatDifferences(a, b, 3)).toEqual([
      `repeat 3: ${a.iterations + 1} iterations, repeat 1: ${a.iterations}`,
      `repeat 3: residual history differs from repeat 1 at entry ${a.history.length} (1e-12 vs undefined)`,
    ]);
    const c = structuredClone(a);
    c.cause = 'iteration-budget';
    c.outcome = 'unsolved';
    expect(repeatDifferences(a, c, 2)[0]).toBe(`repeat 2: stopped unsolved/iteration-budget, repeat 1: ${a.outcome}/${a.cause}`);
    const d = structuredClone(a);
    d.history[1] *= 1 + 1e-15; // exact comparison: one rounding difference is a difference
    expect(repeatDifferences(a, d, 2)).toHaveLength(1);
  });

  it('timing noise is undefined without repeated runs', () => {
    expect(timingNoise([])).toBeUndefined();
    expect(timingNoise([{}])).toBeUndefined();
  });
});

describe('garbage collection between repeats', () => {
  it('is exposed and runs under vitest', () => {
    expect(typeof exposedGc()).toBe('function');
    expect(collectGarbage()).toBe(true);
  });

  it('is exposed and runs in a worker thread', async () => {
    const w = new Worker(new URL('./fixtures/gc-worker.mjs', import.meta.url));
    const msg = await new Promise<{ ran: boolean }>((resolve, reject) => { w.once('message', resolve); w.once('error', reject); });
    await w.terminate();
    expect(msg.ran).toBe(true);
  });
});
