// The sequence runner (src/run/sequence.ts): reuse policies rebuild exactly when they should, one
// Krylov carry goes through every solve, previous-solution x₀ pays on a slowly varying sequence,
// totals are the sums of the per-system figures, and a file whose pattern differs is named.
import { describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { rebuildSchedule, sequencePolicyOf, type SequencePolicy } from '../../src/solvers/sequence-policy.js';
import { aggregateResult, executeSequence, loadSequence, runSequencePass, sequenceRecord, type LoadedSequence } from '../../src/run/sequence.js';
import type { PreparedForRun, RunDeps } from '../../src/run/deps.js';
import { DEFAULT_RECIPE, type Recipe } from '../../src/solvers/recipe.js';
import type { SolveResult } from '../../src/solvers/types.js';
import type { KrylovCarry } from '../../src/solvers/options.js';
import { prepareSolve, solveSystem } from '../../src/solvers/run-recipe.js';
import { loadSystem } from '../../src/sparse/load.js';
import { readMatrixMarketVector, writeMatrixMarket, writeMatrixMarketVector } from '../../src/sparse/matrix-market.js';
import { convectionDiffusion } from '../sparse/model-matrices.js';
import { csrToBsr } from '../../src/sparse/bsr.js';
import type { Csr } from '../../src/sparse/types.js';
import * as fake from './fixtures/fake-deps.js';
import { tempDir } from './helpers.js';

const base: Recipe = { ...DEFAULT_RECIPE, name: 'r', krylov: 'gmres', preconditioner: 'block-jacobi' };

/** Which systems rebuild when the solve after a rebuild takes `its(lag)` iterations, lag = systems since that rebuild. */
function rebuildsOf(policy: Partial<SequencePolicy>, n: number, its: (lag: number) => number): boolean[] {
  const s = rebuildSchedule(sequencePolicyOf(policy));
  const out: boolean[] = [];
  let lag = 0;
  for (let k = 0; k < n; k++) {
    const rb = s.needsRebuild();
    if (rb) lag = 0;
    out.push(rb);
    s.solved(its(lag), rb);
    lag++;
  }
  return out;
}

describe('rebuild schedule', () => {
  const grow = (lag: number): number => 10 + 3 * lag; // 10, 13, 16, 19, …
  it('rebuild: every system', () => {
    expect(rebuildsOf({ reuse: 'rebuild' }, 5, grow)).toEqual([true, true, true, true, true]);
  });
  it('fixed: one set-up for k systems', () => {
    expect(rebuildsOf({ reuse: 'fixed', reuseSystems: 2 }, 5, grow)).toEqual([true, false, true, false, true]);
    expect(rebuildsOf({ reuse: 'fixed', reuseSystems: 3 }, 7, grow)).toEqual([true, false, false, true, false, false, true]);
    expect(rebuildsOf({ reuse: 'fixed', reuseSystems: 1 }, 3, grow)).toEqual([true, true, true]);
  });
  it('on-growth: after the first solve exceeding factor × the iterations right after the rebuild', () => {
    // factor 1.5: 13 > 15? no; 16 > 15: yes → the system after it rebuilds
    expect(rebuildsOf({ reuse: 'on-growth', refreshFactor: 1.5 }, 7, grow)).toEqual([true, false, false, true, false, false, true]);
    // factor 1.2: 13 > 12 already → every other system
    expect(rebuildsOf({ reuse: 'on-growth', refreshFactor: 1.2 }, 5, grow)).toEqual([true, false, true, false, true]);
    // no growth, no rebuild
    expect(rebuildsOf({ reuse: 'on-growth', refreshFactor: 1.01 }, 5, () => 10)).toEqual([true, false, false, false, false]);
  });
});

/** Deps whose iteration count is 10 + 3 · (systems since the set-up): records set-ups, matrices and carries. */
function craftedDeps(): { deps: RunDeps; setups: number[]; carries: Set<KrylovCarry | undefined>; reusedOn: number[] } {
  const tiny = fake.parseMtx(fake.mtxText(4, fake.tridiagonal(4, 4)));
  const sys = { csr: tiny, bsr: csrToBsr(tiny, 1) };
  const template = (): SolveResult => fake.solveSystem(sys, new Float64Array(4).fill(1), { ...base, krylov: 'none', preconditioner: 'jacobi' }).result;
  const setups: number[] = [];
  const reusedOn: number[] = [];
  const carries = new Set<KrylovCarry | undefined>();
  let solveIndex = 0;
  const result = (its: number): { result: SolveResult; x: Float64Array } => {
    const r = template();
    r.iterations = its;
    solveIndex++;
    return { result: r, x: new Float64Array(4).fill(solveIndex) };
  };
  const deps: RunDeps = {
    loadSystem: fake.loadSystem, readMatrixMarketVector: fake.readMatrixMarketVector,
    solveSystem(_s, _b, _r, opts) { carries.add(opts?.carry); setups.push(solveIndex); return result(10); },
    prepareSolve(): PreparedForRun {
      setups.push(solveIndex);
      let lag = 0;
      return {
        solve(_b, opts) {
          carries.add(opts?.carry);
          if (opts?.matrix) reusedOn.push(solveIndex);
          const out = result(10 + 3 * lag++);
          // as the real prepareSolve: only the first solve reports the set-up
          if (lag > 1) { out.result.timing.setupSeconds = 0; out.result.work.setup = { ...out.result.work.setup, flops: 0 }; }
          return out;
        },
        dispose() { /* nothing held */ },
      };
    },
  };
  return { deps, setups, carries, reusedOn };
}

const crafted = (n: number) => Array.from({ length: n }, (_v, k) => {
  const csr = fake.parseMtx(fake.mtxText(4, fake.tridiagonal(4, 4)));
  return { label: `system ${k + 1}`, system: { csr, bsr: csrToBsr(csr, 1), bs: 1 }, b: new Float64Array(4).fill(1) };
});

describe('runSequencePass on a crafted sequence', () => {
  it.each([
    ['rebuild', {}, [true, true, true, true, true, true]],
    ['fixed 2', { reuse: 'fixed', reuseSystems: 2 }, [true, false, true, false, true, false]],
    ['fixed 4', { reuse: 'fixed', reuseSystems: 4 }, [true, false, false, false, true, false]],
    ['on-growth 1.5', { reuse: 'on-growth', refreshFactor: 1.5 }, [true, false, false, true, false, false]],
  ] as const)('%s rebuilds exactly where it should; later systems reuse the set-up through `matrix`', (_name, policy, expected) => {
    const { deps, setups, carries, reusedOn } = craftedDeps();
    const pass = runSequencePass(crafted(6), { ...base, ...policy } as Recipe, deps, { gc: false });
    expect(pass.rebuilt).toEqual(expected);
    expect(setups).toHaveLength(expected.filter(Boolean).length);
    expect(reusedOn).toHaveLength(expected.filter((x) => !x).length);
    // one carry object for the whole sequence, passed to every solve
    expect(carries.size).toBe(1);
    expect([...carries][0]).toBeTypeOf('object');
    // a reused set-up costs nothing on the systems it serves
    pass.results.forEach((r, k) => { if (!expected[k]) { expect(r.timing.setupSeconds).toBe(0); expect(r.work.setup.flops).toBe(0); } });
  });

  it('x₀ "previous" hands each solve the solution of the one before', () => {
    const seen: Array<Float64Array | undefined> = [];
    const { deps } = craftedDeps();
    const solve = deps.solveSystem;
    deps.solveSystem = (s, b, r, o) => { seen.push(o?.x0); return solve(s, b, r, o); };
    const pass = runSequencePass(crafted(3), { ...base, initialGuess: 'previous' }, deps, { gc: false });
    expect(seen[0]).toBeUndefined();
    expect(Array.from(seen[1]!)).toEqual([1, 1, 1, 1]);
    expect(Array.from(seen[2]!)).toEqual([2, 2, 2, 2]);
    expect(pass.x0).toEqual(['zero', 'previous', 'previous']);
  });

  it('refuses reuse without prepareSolve in one line', () => {
    const { deps } = craftedDeps();
    delete deps.prepareSolve;
    expect(() => runSequencePass(crafted(2), { ...base, reuse: 'fixed', reuseSystems: 2 }, deps, { gc: false }))
      .toThrow('recipe r: reuse fixed needs a solver that can keep a preconditioner (prepareSolve)');
  });
});

/** A slowly varying sequence: convection–diffusion (MVMMCD form) with β growing by 2 % per system, rhs drifting. */
function slowSequence(n: number): Array<{ csr: Csr; b: Float64Array }> {
  return Array.from({ length: n }, (_v, k) => {
    const csr = convectionDiffusion(12, 0.5 * (1 + 0.02 * k), 0.3, 0);
    const b = Float64Array.from({ length: csr.nRows }, (_x, i) => 1 + 0.5 * Math.sin(i / 7) + 0.01 * k * Math.cos(i / 5));
    return { csr, b };
  });
}

const realDeps: RunDeps = { loadSystem, readMatrixMarketVector, solveSystem, prepareSolve };
const asLoaded = (seq: Array<{ csr: Csr; b: Float64Array }>) => seq.map((s, k) => ({
  label: `system ${k + 1}`, system: { csr: s.csr, bsr: csrToBsr(s.csr, 1), bs: 1 }, b: s.b,
}));

describe('sequence runs with the real solver', () => {
  const recipe: Recipe = { ...base, preconditioner: 'ilu0', rtol: 1e-8 };
  const systems = asLoaded(slowSequence(5));

  it('previous-solution x₀ needs fewer iterations than x₀ = 0 on a slowly varying sequence', () => {
    const zero = runSequencePass(systems, recipe, realDeps, { gc: false });
    const prev = runSequencePass(systems, { ...recipe, initialGuess: 'previous' }, realDeps, { gc: false });
    const its = (p: typeof zero): number[] => p.results.map((r) => r.iterations);
    expect(its(zero).every((x) => x > 0)).toBe(true);
    expect(its(prev)[0]).toBe(its(zero)[0]); // the first system starts from zero either way
    for (let k = 1; k < systems.length; k++) expect(its(prev)[k]).toBeLessThan(its(zero)[k]);
    expect(prev.results.every((r) => r.converged)).toBe(true);
  });

  it('a lagged preconditioner (reuse fixed 2) is set up on systems 1, 3, 5 and solves each later system itself', () => {
    const calls: string[] = [];
    const deps: RunDeps = { ...realDeps, prepareSolve: (sys, r, o) => { calls.push('prepare'); return prepareSolve(sys, r, o); } };
    const pass = runSequencePass(systems, { ...recipe, reuse: 'fixed', reuseSystems: 2 }, deps, { gc: false });
    expect(pass.rebuilt).toEqual([true, false, true, false, true]);
    expect(calls).toHaveLength(3);
    pass.results.forEach((r, k) => {
      expect(r.converged).toBe(true);
      expect(r.setupReused === true).toBe(!pass.rebuilt[k]);
      if (!pass.rebuilt[k]) { expect(r.timing.setupSeconds).toBe(0); expect(r.work.setup.flops).toBe(0); }
      else expect(r.work.setup.flops).toBeGreaterThan(0);
    });
    // the solution of system 2 (solved with system 1's ILU(0)) solves system 2, not system 1
    const { csr, b } = slowSequence(5)[1]!;
    const solved = (() => {
      const p = prepareSolve(systems[0]!.system, recipe, { laggedMatrix: true });
      try { p.solve(systems[0]!.b); return p.solve(b, { matrix: systems[1]!.system }).x; } finally { p.dispose(); }
    })();
    let rr = 0, bb = 0;
    for (let i = 0; i < csr.nRows; i++) {
      let ax = 0;
      for (let k = csr.rowPtr[i]; k < csr.rowPtr[i + 1]; k++) ax += csr.values[k] * solved[csr.colInd[k]];
      rr += (b[i] - ax) ** 2; bb += b[i] ** 2;
    }
    expect(Math.sqrt(rr / bb)).toBeLessThan(1e-7);
  });

  it('totals are exactly the sums of the per-system figures, and the aggregate result carries them', () => {
    const pass = runSequencePass(systems, { ...recipe, initialGuess: 'previous' }, realDeps, { gc: false });
    const rec = sequenceRecord('files', recipe, systems.map((s) => s.label), pass);
    const sum = (f: (s: (typeof rec.systems)[number]) => number): number => rec.systems.reduce((a, s) => a + f(s), 0);
    expect(rec.totals.systems).toBe(5);
    expect(rec.totals.iterations).toBe(sum((s) => s.iterations));
    expect(rec.totals.rebuilds).toBe(5);
    expect(rec.totals.setupSeconds).toBe(sum((s) => s.setupSeconds));
    expect(rec.totals.solveSeconds).toBe(sum((s) => s.solveSeconds));
    for (const ph of ['setup', 'solve'] as const) {
      for (const k of ['matvecs', 'preconditionerApplies', 'innerIterations', 'flops', 'bytes'] as const) {
        expect(rec.totals.work[ph][k]).toBe(sum((s) => s.work[ph][k]));
      }
    }
    const agg = aggregateResult(pass.results, rec.totals);
    expect(agg.iterations).toBe(rec.totals.iterations);
    expect(agg.work).toEqual(rec.totals.work);
    expect(agg.timing.setupSeconds).toBe(rec.totals.setupSeconds);
    expect(agg.trueRelativeResidual).toBe(Math.max(...rec.systems.map((s) => s.trueRelativeResidual)));
    expect(agg.history).toEqual(rec.systems[4].history);
  });

  it('repeats run the whole sequence: repeats hold sequence totals, identical passes are consistent', () => {
    const loaded: LoadedSequence = { key: 'k', systems, infoSent: false };
    const run = executeSequence(loaded, 'files', recipe, realDeps, { warmup: false, repeats: 2 });
    expect(run.repeats!.count).toBe(2);
    expect(run.repeats!.consistent).toBe(true);
    expect(run.repeats!.setupSeconds[run.repeats!.stored]).toBe(run.sequence!.totals.setupSeconds);
    expect(run.result!.iterations).toBe(run.sequence!.totals.iterations);
  });
});

describe('loadSequence', () => {
  it('names the file whose pattern differs from the first, in one line', async () => {
    const t = tempDir('slabbench-seqload-');
    try {
      const a = convectionDiffusion(4, 0.5, 0.3, 0);
      const b = convectionDiffusion(5, 0.5, 0.3, 0);
      const c = { ...a, values: Float64Array.from(a.values, (v) => 2 * v) };
      await writeMatrixMarket(join(t.dir, 'a.mtx'), a);
      await writeMatrixMarket(join(t.dir, 'b.mtx'), b);
      await writeMatrixMarket(join(t.dir, 'c.mtx'), c);
      await writeMatrixMarketVector(join(t.dir, 'r.mtx'), new Float64Array(a.nRows).fill(1));
      writeFileSync(join(t.dir, 'short.mtx'), `%%MatrixMarket matrix array real general\n3 1\n1\n1\n1\n`);
      const text = (e: unknown): string => (e as Error).message;
      const seq = (files: string[], rhs = 'r.mtx') => ({ kind: 'files' as const, systems: files.map((f, k) => ({ mtx: join(t.dir, f), rhs: join(t.dir, rhs), label: `file ${k + 1}` })) });
      const ok = await loadSequence(seq(['a.mtx', 'c.mtx']), realDeps, undefined, text);
      expect(ok.error).toBeUndefined();
      expect(ok.systems).toHaveLength(2);
      const bad = await loadSequence(seq(['a.mtx', 'c.mtx', 'b.mtx']), realDeps, undefined, text);
      expect(bad.error).toBe(`${join(t.dir, 'b.mtx')}: has size 25×25, other than ${join(t.dir, 'a.mtx')}; the systems of a sequence share one pattern`);
      const short = await loadSequence(seq(['a.mtx'], 'short.mtx'), realDeps, undefined, text);
      expect(short.error).toBe(`${join(t.dir, 'short.mtx')}: right-hand side has 3 entries; the matrix has 16 rows`);
    } finally {
      t.cleanup();
    }
  });
});

describe('Krylov recycling across a sequence (GCRO-DR through the carry)', () => {
  // GCRO-DR carries k harmonic Ritz vectors from one system to the next (Parks, de Sturler, Mackey,
  // Johnson & Maiti, SIAM J. Sci. Comput. 28(5), 2006): on repeated systems the later solves start
  // with the recycled space and need fewer iterations.
  const csr = convectionDiffusion(16, 0.5, 0.3, 0);
  const b = Float64Array.from({ length: csr.nRows }, (_x, i) => 1 + Math.sin(i));
  const same = Array.from({ length: 3 }, (_v, k) => ({ label: `system ${k + 1}`, system: { csr, bsr: csrToBsr(csr, 1), bs: 1 }, b }));
  const gcro: Recipe = { ...DEFAULT_RECIPE, name: 'gcro', krylov: 'gcro-dr', restart: 30, deflate: 10, preconditioner: 'none' };

  it('the second of identical systems needs clearly fewer iterations than the first', () => {
    const pass = runSequencePass(same, gcro, realDeps, { gc: false });
    const its = pass.results.map((r) => r.iterations);
    expect(pass.results.every((r) => r.converged)).toBe(true);
    expect(its[1]).toBeLessThan(0.8 * its[0]);
    expect(its[2]).toBeLessThan(0.8 * its[0]);
  });

  it('the saving comes from the carry: a fresh carry per solve repeats the first solve', () => {
    const forgetful: RunDeps = { ...realDeps, solveSystem: (s, bb, r, o) => solveSystem(s, bb, r, { ...o, carry: {} }) };
    const pass = runSequencePass(same, gcro, forgetful, { gc: false });
    const its = pass.results.map((r) => r.iterations);
    expect(its[1]).toBe(its[0]);
    expect(its[2]).toBe(its[0]);
  });

  it('on a slowly varying sequence recycling saves iterations in total', () => {
    // β grows by 2 % per system, the right-hand side drifts
    const varied = asLoaded(Array.from({ length: 4 }, (_v, k) => ({
      csr: convectionDiffusion(16, 0.5 * (1 + 0.02 * k), 0.3, 0),
      b: Float64Array.from({ length: 256 }, (_x, i) => 1 + Math.sin(i) + 0.01 * k * Math.cos(i / 3)),
    })));
    const recycled = runSequencePass(varied, gcro, realDeps, { gc: false });
    const plain = runSequencePass(varied, { ...gcro, name: 'gcro-no-carry' }, { ...realDeps, solveSystem: (s, bb, r, o) => solveSystem(s, bb, r, { ...o, carry: {} }) }, { gc: false });
    const total = (p: typeof recycled): number => p.results.reduce((a, r) => a + r.iterations, 0);
    expect(recycled.results.every((r) => r.converged)).toBe(true);
    expect(total(recycled)).toBeLessThan(0.9 * total(plain));
  });
});
