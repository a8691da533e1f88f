import { describe, expect, it, afterAll } from 'vitest';
import { existsSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { runSweep, caseFolder } from '../../src/run/sweep.js';
import { defaultCacheDir } from '../../src/run/cache-dir.js';
import { readResults } from '../../src/run/results.js';
import { readHistory } from '../../src/run/history.js';
import type { ResultsDoc } from '../../src/run/results-types.js';
import * as fake from './fixtures/fake-deps.js';
import { FAKE_DEPS_URL, readTinySuite, tempDir, writeTinySuite } from './helpers.js';

/** Everything but the machine-dependent numbers (timing, RSS, date). */
function stable(doc: ResultsDoc) {
  return doc.runs.map((r) => ({
    matrix: r.matrix, recipe: r.recipe, cause: r.result?.cause, iterations: r.result?.iterations,
    residual: r.result?.trueRelativeResidual, bytes: r.result?.memory.krylovBytes, error: r.error,
  }));
}

describe('runSweep', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());
  const suitePath = writeTinySuite(t.dir);
  const suite = readTinySuite(suitePath);

  it('runs every matrix × recipe in suite order (in-process) and writes results, CSV and history', async () => {
    const out = join(t.dir, 'inproc');
    const progress: Array<[number, number]> = [];
    // the default cache folder, fresh for this file (test files run in parallel processes)
    process.env.SLABBENCH_CACHE_DIR = join(t.dir, 'default-cache');
    const o = await runSweep({ suite, outDir: out, jobs: 1, builder: fake, inProcess: fake, onProgress: (d, n) => progress.push([d, n]) });
    expect(o.interrupted).toBe(false);
    expect(o.errors).toBe(0);
    expect(o.doc.runs.map((r) => `${r.matrix}/${r.recipe}`)).toEqual(['alpha/rich-1', 'alpha/rich-slow', 'beta/rich-1', 'beta/rich-slow']);
    expect(progress).toEqual([[0, 4], [1, 4], [2, 4], [3, 4], [4, 4]]);
    // ω = 0.8 needs more Richardson steps than ω = 1 on the same matrix.
    const it = Object.fromEntries(o.doc.runs.map((r) => [`${r.matrix}/${r.recipe}`, r.result!.iterations]));
    expect(it['alpha/rich-slow']).toBeGreaterThan(it['alpha/rich-1']);
    expect(o.doc.status).toBe('complete');
    expect(readResults(o.files.results)).toEqual(JSON.parse(JSON.stringify(o.doc)));
    expect(readFileSync(o.files.csv, 'utf8').trim().split('\n')).toHaveLength(5);
    expect(readHistory(join(out, 'history.jsonl'))).toHaveLength(1);
    // Matrix info for both matrices, in suite order; the generated one is built into the cache
    // folder (the default: outside the results folder), gzip-compressed.
    expect(o.doc.matrices.map((m) => [m.name, m.source, m.n])).toEqual([['alpha', 'file', 6], ['beta', 'generated', 9]]);
    expect(o.doc.matrices[0].path).toBe('../a.mtx');
    const beta = suite.matrices[1];
    expect(defaultCacheDir()).toBe(join(t.dir, 'default-cache'));
    expect(beta.kind === 'generate' && existsSync(join(caseFolder(defaultCacheDir(), beta), 'case.json'))).toBe(true);
    expect(existsSync(join(out, 'matrices'))).toBe(false);
    expect(fake.builtOptions.at(-1)).toEqual({ gzip: true });
  });

  it('reuses a generated case from the cache instead of building it again', async () => {
    const out = join(t.dir, 'inproc');
    const before = fake.built.length;
    await runSweep({ suite, outDir: out, jobs: 1, builder: fake, inProcess: fake, history: false });
    expect(fake.built.length).toBe(before);
    expect(readHistory(join(out, 'history.jsonl'))).toHaveLength(1); // history: false appended nothing
  });

  it('gives the same results in the same order with --jobs 1 and --jobs 2 on worker threads', async () => {
    const one = await runSweep({ suite, outDir: join(t.dir, 'j1'), jobs: 1, builder: fake, depsModule: FAKE_DEPS_URL });
    const two = await runSweep({ suite, outDir: join(t.dir, 'j2'), jobs: 2, builder: fake, depsModule: FAKE_DEPS_URL });
    const inproc = readResults(join(t.dir, 'inproc', 'results.json'));
    expect(stable(one.doc)).toEqual(stable(inproc));
    expect(stable(two.doc)).toEqual(stable(inproc));
    expect(two.doc.parameters.jobs).toBe(2);
    expect(one.doc.matrices).toEqual(two.doc.matrices);
  });

  it('a matrix that cannot be loaded is an error on its runs; the other runs still run', async () => {
    const dir = tempDir();
    try {
      const p = writeTinySuite(dir.dir, { extraMatrices: [{ name: 'gamma', file: 'broken.mtx' }] });
      const { writeFileSync } = await import('node:fs');
      writeFileSync(join(dir.dir, 'broken.mtx'), 'garbage');
      const o = await runSweep({ suite: readTinySuite(p), outDir: join(dir.dir, 'o'), jobs: 1, builder: fake, inProcess: fake });
      expect(o.errors).toBe(2);
      expect(o.doc.runs.filter((r) => r.error).map((r) => `${r.matrix}/${r.recipe}`)).toEqual(['gamma/rich-1', 'gamma/rich-slow']);
      expect(o.doc.runs[4].error).toMatch(/broken\.mtx:2: expected three numbers/);
      expect(o.doc.matrices.map((m) => m.name)).toEqual(['alpha', 'beta']);
    } finally {
      dir.cleanup();
    }
  });

  it('interrupted: finished runs stay on disk with status "interrupted", no history line', async () => {
    const out = join(t.dir, 'stop');
    const ac = new AbortController();
    const o = await runSweep({
      suite, outDir: out, jobs: 1, builder: fake, inProcess: fake, signal: ac.signal,
      onProgress: (d) => {
        if (d === 2) {
          // The partial file is already on disk when progress is reported.
          const partial = readResults(join(out, 'results.json'));
          expect(partial.status).toBe('partial');
          expect(partial.runs).toHaveLength(2);
          ac.abort();
        }
      },
    });
    expect(o.interrupted).toBe(true);
    const doc = readResults(join(out, 'results.json'));
    expect(doc.status).toBe('interrupted');
    expect(doc.runs.map((r) => r.recipe)).toEqual(['rich-1', 'rich-slow']);
    expect(existsSync(join(out, 'history.jsonl'))).toBe(false);
    expect(readdirSync(out).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });

  it('interrupting a worker pool keeps what finished', async () => {
    const out = join(t.dir, 'stop-workers');
    const ac = new AbortController();
    const o = await runSweep({
      suite, outDir: out, jobs: 1, builder: fake, depsModule: FAKE_DEPS_URL, signal: ac.signal,
      onProgress: (d) => { if (d === 1) ac.abort(); },
    });
    expect(o.interrupted).toBe(true);
    const doc = readResults(join(out, 'results.json'));
    expect(doc.status).toBe('interrupted');
    expect(doc.runs.map((r) => `${r.matrix}/${r.recipe}`)).toEqual(['alpha/rich-1']);
  });

  it('a shard runs only its share and records it', async () => {
    const o = await runSweep({ suite, outDir: join(t.dir, 's2'), jobs: 1, builder: fake, inProcess: fake, shard: { index: 2, count: 3 }, onlyRecipe: ['rich-slow', 'rich-1'] });
    // 4 pairs over 3 shards: [0,1), [1,2), [2,4) → shard 2 holds alpha × rich-slow only.
    expect(o.doc.runs.map((r) => `${r.matrix}/${r.recipe}`)).toEqual(['alpha/rich-slow']);
    expect(o.doc.parameters.shard).toEqual({ index: 2, count: 3 });
    expect(o.doc.suite.matrixNames).toEqual(['alpha', 'beta']);
    expect(o.doc.suite.recipeNames).toEqual(['rich-1', 'rich-slow']);
    expect(o.doc.matrices.map((m) => m.name)).toEqual(['alpha']);
  });

  it('warms up by default, then times 3 repeats per pair; --no-warmup and --repeats change that, and the parameters say so', async () => {
    let calls = 0;
    const counting = { ...fake, solveSystem: (...a: Parameters<typeof fake.solveSystem>) => { calls++; return fake.solveSystem(...a); } };
    const o = await runSweep({ suite, outDir: join(t.dir, 'warm'), jobs: 1, builder: fake, inProcess: counting, onlyMatrix: ['alpha'] });
    expect(calls).toBe(2 * (1 + 3));
    expect(o.doc.runs).toHaveLength(2);
    expect(o.doc.parameters).toMatchObject({ warmup: true, repeats: 3 });
    expect(o.doc.runs[0].repeats).toMatchObject({ count: 3, warmup: true, consistent: true });
    calls = 0;
    const q = await runSweep({ suite, outDir: join(t.dir, 'cold'), jobs: 1, builder: fake, inProcess: counting, onlyMatrix: ['alpha'], warmup: false, repeats: 2 });
    expect(calls).toBe(2 * 2);
    expect(q.doc.parameters).toMatchObject({ warmup: false, repeats: 2 });
    expect(q.doc.runs[0].repeats).toMatchObject({ count: 2, warmup: false });
    await expect(runSweep({ suite, outDir: join(t.dir, 'bad'), jobs: 1, builder: fake, inProcess: fake, repeats: 0 }))
      .rejects.toThrow('option --repeats: expected a positive integer, got 0');
  });

  it('a worker thread that dies mid-run becomes an error on that run; a fresh worker runs the rest', async () => {
    const dir = tempDir();
    try {
      const p = writeTinySuite(dir.dir, { extraRecipes: [{ name: 'crash', krylov: 'none', preconditioner: 'jacobi' }] });
      const o = await runSweep({ suite: readTinySuite(p), outDir: join(dir.dir, 'o'), jobs: 1, builder: fake, depsModule: FAKE_DEPS_URL });
      const died = 'worker thread exited during the run (out of memory?)';
      expect(o.doc.runs.map((r) => [r.matrix, r.recipe, r.error ?? r.result?.cause])).toEqual([
        ['alpha', 'rich-1', 'relative-target'], ['alpha', 'rich-slow', 'relative-target'], ['alpha', 'crash', died],
        ['beta', 'rich-1', 'relative-target'], ['beta', 'rich-slow', 'relative-target'], ['beta', 'crash', died]]);
      expect(o.errors).toBe(2);
      expect(o.doc.matrices.map((m) => m.name)).toEqual(['alpha', 'beta']);
    } finally {
      dir.cleanup();
    }
  });
});
