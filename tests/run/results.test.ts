import { describe, expect, it, afterAll } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { runSweep } from '../../src/run/sweep.js';
import { CSV_COLUMNS, gitCommit, readResults, resultsCsv, resultsJson, validateResults } from '../../src/run/results.js';
import { blockPattern } from '../../src/report/pattern.js';
import { RESULTS_SCHEMA } from '../../src/run/results-types.js';
import { csrToBsr } from '../../src/sparse/bsr.js';
import { VERSION } from '../../src/version.js';
import * as fake from './fixtures/fake-deps.js';
import { readTinySuite, tempDir, writeTinySuite } from './helpers.js';

describe('results document', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());

  it('holds every field: schema, versions, commit, machine, date, suite, parameters, matrices, runs', async () => {
    const suite = readTinySuite(writeTinySuite(t.dir));
    const o = await runSweep({ suite, outDir: join(t.dir, 'o'), jobs: 1, builder: fake, inProcess: fake, onlyRecipe: ['rich-1'] });
    const doc = readResults(o.files.results);
    expect(doc.schema).toBe(RESULTS_SCHEMA);
    expect(doc.slabbench).toBe(VERSION);
    expect(doc.node).toBe(process.version);
    expect(doc.cpu.length).toBeGreaterThan(0);
    expect(Number.isNaN(Date.parse(doc.date))).toBe(false);
    // The commit of this checkout when it is a git work tree (undefined in an unpacked tarball).
    expect(doc.commit).toBe(gitCommit());
    if (doc.commit !== undefined) expect(doc.commit).toMatch(/^[0-9a-f]{40}$/);
    // A folder outside any repository has no commit, and asking does not throw.
    expect(gitCommit(t.dir)).toBeUndefined();
    expect(doc.status).toBe('complete');
    expect(doc.suite).toEqual({
      path: suite.path, description: 'tiny test suite', fingerprint: suite.fingerprint,
      matrixNames: ['alpha', 'beta'], recipeNames: ['rich-1'],
    });
    expect(doc.parameters).toMatchObject({ jobs: 1, onlyRecipe: ['rich-1'], warmup: true, repeats: 3, gc: true });
    expect(doc.parameters.parallel).toMatchObject({ jobs: 1, cpus: expect.any(Number) });
    expect(doc.parameters.parallel?.loadAverageStart).toHaveLength(3);
    expect(doc.parameters.parallel?.loadAverageEnd).toHaveLength(3);
    expect(doc.machine).toMatchObject({ bandwidthGBs: expect.any(Number), flopRateGFLOPs: expect.any(Number), method: expect.stringContaining('triad') });
    expect(doc.machine!.bandwidthGBs).toBeGreaterThan(0);
    expect(doc.machine!.flopRateGFLOPs).toBeGreaterThan(0);
    const m = doc.matrices[0];
    expect(m).toMatchObject({ name: 'alpha', source: 'file', n: 6, nnz: 16, bs: 1, nBlockRows: 6, nBlocks: 16, nSlabs: 1, note: 'file matrix' });
    expect(m.pattern?.counts.reduce((a, b) => a + b, 0)).toBe(16);
    const run = doc.runs[0];
    expect(run.recipeParams).toMatchObject({ name: 'rich-1', krylov: 'none', preconditioner: 'jacobi', omega: 1, rtol: 1e-8 });
    // only the fields its methods read are recorded: stationary iteration has no restart
    expect(run.recipeParams).not.toHaveProperty('restart');
    const r = run.result!;
    for (const k of ['method', 'preconditioner', 'converged', 'outcome', 'cause', 'iterations', 'restarts', 'history', 'trueRelativeResidual', 'timing', 'memory'] as const) {
      expect(r[k], k).toBeDefined();
    }
    expect(r.history[0]).toBe(1);
    expect(r.history).toHaveLength(r.iterations + 1);
  });

  it('CSV: header plus one row per run, quoted where needed', async () => {
    const doc = readResults(join(t.dir, 'o', 'results.json'));
    const withError = { ...doc, runs: [...doc.runs, { matrix: 'x', recipe: 'y', recipeParams: doc.runs[0].recipeParams, error: 'bad "thing", here' }] };
    const lines = resultsCsv(withError).trim().split('\n');
    expect(lines[0]).toBe(CSV_COLUMNS.join(','));
    expect(lines).toHaveLength(withError.runs.length + 1);
    const first = lines[1].split(',');
    expect(first[CSV_COLUMNS.indexOf('iterations')]).toBe(String(doc.runs[0].result!.iterations));
    expect(first[CSV_COLUMNS.indexOf('outcome')]).toBe('solved');
    expect(first[CSV_COLUMNS.indexOf('cause')]).toBe('relative-target');
    // timing-protocol columns are at the end; empty when the run carries no repeats or modeled time
    expect(CSV_COLUMNS.slice(-2)).toEqual(['systems', 'rebuilds']);
    expect(CSV_COLUMNS.slice(-8, -2)).toEqual(['repeats', 'totalSecondsMedian', 'totalSecondsMin', 'totalSecondsMax', 'repeatsConsistent', 'modeledSeconds']);
    expect(first[CSV_COLUMNS.indexOf('repeats')]).toBe(doc.runs[0].repeats === undefined ? '' : String(doc.runs[0].repeats.count));
    expect(lines[lines.length - 1].endsWith(',"bad ""thing"", here",,,,,,,,')).toBe(true);
    expect(lines[lines.length - 1]).toContain(',error,false,');
  });

  it('non-finite numbers survive the JSON round trip', () => {
    const doc = readResults(join(t.dir, 'o', 'results.json'));
    doc.runs[0].result!.trueRelativeResidual = Number.NaN;
    doc.runs[0].result!.history.push(Number.POSITIVE_INFINITY);
    const p = join(t.dir, 'nan.json');
    writeFileSync(p, resultsJson(doc));
    const back = readResults(p);
    expect(back.runs[0].result!.trueRelativeResidual).toBeNaN();
    expect(back.runs[0].result!.history.at(-1)).toBe(Number.POSITIVE_INFINITY);
  });

  it('rejects documents that are not results, naming the field', () => {
    expect(() => validateResults([], 'r.json')).toThrow('r.json: expected a results document');
    expect(() => validateResults({ schema: 'x' }, 'r.json')).toThrow('r.json: schema "x" is not a results version this slabbench reads');
    const doc = JSON.parse(readFileSync(join(t.dir, 'o', 'results.json'), 'utf8'));
    delete doc.runs[0].result.iterations;
    expect(() => validateResults(doc, 'r.json')).toThrow('r.json: runs[0].result.iterations: expected a number');
    expect(() => readResults(join(t.dir, 'none.json'))).toThrow(/none\.json: no such results file/);
  });

  it('block pattern: counts per cell, slab offsets kept', () => {
    // 5×5 lower bidiagonal, bs 1, squeezed into cells of 2 block rows → 3×3 cells.
    const csr = { nRows: 5, nCols: 5, rowPtr: Int32Array.from([0, 1, 3, 5, 7, 9]), colInd: Int32Array.from([0, 0, 1, 1, 2, 2, 3, 3, 4]), values: new Float64Array(9).fill(1) };
    const p = blockPattern(csrToBsr(csr, 1), Int32Array.from([0, 2, 5]), 3);
    expect(p).toEqual({ cells: 3, blockRowsPerCell: 2, nBlockRows: 5, slabOffsets: [0, 2, 5], counts: [3, 0, 0, 1, 3, 0, 0, 1, 1] });
  });
});
