/**
 * Cross-checks against scipy.io (Debian python3-scipy): the committed fixtures made by
 * tests/fixtures/make_mm_fixtures.py always, and scipy itself live when /usr/bin/python3 has it.
 */
import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { spawnSync } from 'node:child_process';
import type { Csr } from '../../src/sparse/types.js';
import { readMatrixMarket, readMatrixMarketVector, writeMatrixMarket, writeMatrixMarketColumns, writeMatrixMarketVector } from '../../src/sparse/matrix-market.js';
import { tempDir, expectValidCsr } from './matrix-market-helpers.js';
import { mulberry32 } from '../../src/util/random.js';

const here = dirname(fileURLToPath(import.meta.url));
const fixtures = join(here, '..', 'fixtures', 'mm');
const script = join(here, '..', 'fixtures', 'make_mm_fixtures.py');
const PY = '/usr/bin/python3';
const hasScipy = spawnSync(PY, ['-c', 'import scipy.io'], { encoding: 'utf8' }).status === 0;

interface DenseCase { shape: [number, number]; dense: number[][] }

/** Dense copy that keeps the sign of stored zeros (entries are unique in a CSR). */
function dense(a: Csr): number[][] {
  const d = Array.from({ length: a.nRows }, () => new Array<number>(a.nCols).fill(0));
  for (let i = 0; i < a.nRows; i++) for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) d[i][a.colInd[k]] = a.values[k];
  return d;
}

/**
 * Exact comparison. scipy densifies coordinate files by summing into zeros, which turns a stored
 * -0 into +0, so the sign of zero is compared only where scipy keeps it (array files).
 */
function expectSameDense(got: number[][], want: number[][], what: string, signedZero = false): void {
  expect(got.length, what).toBe(want.length);
  for (let i = 0; i < want.length; i++) {
    for (let j = 0; j < want[i].length; j++) {
      const same = signedZero ? Object.is(got[i][j], want[i][j]) : got[i][j] === want[i][j];
      if (!same) expect(got[i][j], `${what} (${i + 1}, ${j + 1})`).toBe(want[i][j]);
    }
  }
}

function checkAgainst(cases: Record<string, DenseCase>, dir: string) {
  return Promise.all(Object.entries(cases).map(async ([name, c]) => {
    const { csr } = await readMatrixMarket(join(dir, name));
    expectValidCsr(csr);
    expect([csr.nRows, csr.nCols], name).toEqual(c.shape);
    expectSameDense(dense(csr), c.dense, name, name.startsWith('array') || name.startsWith('vector'));
  }));
}

describe('Matrix Market against scipy.io fixtures (committed)', () => {
  const expected = JSON.parse(readFileSync(join(fixtures, 'expected.json'), 'utf8')) as { scipy: string; cases: Record<string, DenseCase> };

  it('has every fixture listed in expected.json, one per kind', () => {
    const files = readdirSync(fixtures).filter((f) => f.endsWith('.mtx')).sort();
    expect(files).toEqual(Object.keys(expected.cases).sort());
    expect(files).toEqual(expect.arrayContaining(['general.mtx', 'symmetric.mtx', 'skew.mtx', 'pattern.mtx', 'integer.mtx', 'array.mtx', 'vector.mtx']));
  });

  it('reads each fixture to exactly what scipy.io.mmread reads', async () => {
    await checkAgainst(expected.cases, fixtures);
  });

  it('keeps the explicit zeros scipy wrote and the stored entries of symmetric files', async () => {
    const g = (await readMatrixMarket(join(fixtures, 'general.mtx'))).csr;
    expect(g.rowPtr[g.nRows]).toBe(14); // every line of general.mtx, zeros included
    expect(Object.is(dense(g)[5][2], -0)).toBe(true); // line "6 3 -0.000000000000000e+00" keeps its sign
    const s = await readMatrixMarket(join(fixtures, 'symmetric.mtx'));
    let diag = 0;
    for (let i = 0; i < s.csr.nRows; i++) for (let k = s.csr.rowPtr[i]; k < s.csr.rowPtr[i + 1]; k++) if (s.csr.colInd[k] === i) diag++;
    expect(s.csr.rowPtr[6]).toBe(2 * s.header.nEntries - diag);
  });

  it('reads the n×1 right-hand side fixture as a vector', async () => {
    const v = await readMatrixMarketVector(join(fixtures, 'vector.mtx'));
    expect(Array.from(v)).toEqual(expected.cases['vector.mtx'].dense.map((r) => r[0]));
  });
});

/** Seeded random CSR with values spread over many magnitudes, negative zeros and explicit zeros. */
function randomCsr(nRows: number, nCols: number, density: number, seed: number, symmetric = false): Csr {
  const r = mulberry32(seed);
  const d = Array.from({ length: nRows }, () => new Array<number | undefined>(nCols).fill(undefined));
  for (let i = 0; i < nRows; i++) {
    for (let j = 0; j < (symmetric ? i + 1 : nCols); j++) {
      if (r() >= density) continue;
      const u = r();
      const v = u < 0.05 ? 0 : u < 0.1 ? -0 : (r() - 0.5) * 10 ** Math.floor(r() * 40 - 20);
      d[i][j] = v;
      if (symmetric) d[j][i] = v;
    }
  }
  const rowPtr = new Int32Array(nRows + 1);
  const cols: number[] = [], vals: number[] = [];
  for (let i = 0; i < nRows; i++) {
    for (let j = 0; j < nCols; j++) if (d[i][j] !== undefined) { cols.push(j); vals.push(d[i][j]!); }
    rowPtr[i + 1] = cols.length;
  }
  return { nRows, nCols, rowPtr, colInd: Int32Array.from(cols), values: Float64Array.from(vals) };
}

describe.runIf(hasScipy)('Matrix Market against scipy.io, live', () => {
  it('scipy reads what slabbench writes, bit for bit (general, symmetric, gzip, right-hand sides)', async () => {
    const dir = tempDir('slabbench-scipy-');
    const g = randomCsr(9, 7, 0.4, 11);
    const s = randomCsr(8, 8, 0.4, 12, true);
    const rhs = Float64Array.from([0.1, -0, 1e-300, 12345.678, -1 / 3]);
    const files: Record<string, number[][]> = {
      [join(dir, 'g.mtx')]: dense(g),
      [join(dir, 'g.mtx.gz')]: dense(g),
      [join(dir, 's.mtx')]: dense(s),
      [join(dir, 'b.mtx')]: Array.from(rhs, (x) => [x]),
      // an n×k array (several right-hand sides or solutions): column-major on file
      [join(dir, 'x3.mtx')]: Array.from(rhs, (x, i) => [x, 2 * i + 0.5, -x]),
    };
    await writeMatrixMarketColumns(join(dir, 'x3.mtx'), [rhs, Float64Array.from(rhs, (_, i) => 2 * i + 0.5), Float64Array.from(rhs, (x) => -x)]);
    await writeMatrixMarket(join(dir, 'g.mtx'), g);
    await writeMatrixMarket(join(dir, 'g.mtx.gz'), g);
    await writeMatrixMarket(join(dir, 's.mtx'), s, { symmetric: true });
    await writeMatrixMarketVector(join(dir, 'b.mtx'), rhs);
    const out = spawnSync(PY, [script, 'read', ...Object.keys(files)], { encoding: 'utf8' });
    expect(out.stderr).toBe('');
    const got = JSON.parse(out.stdout) as Record<string, DenseCase>;
    for (const [f, want] of Object.entries(files)) expectSameDense(got[f].dense, want, f, f.endsWith('b.mtx') || f.endsWith('x3.mtx'));
  });

  it('slabbench reads what scipy writes now, to what scipy reads back', async () => {
    const dir = tempDir('slabbench-scipy-fresh-');
    const out = spawnSync(PY, [script, 'write', dir], { encoding: 'utf8' });
    expect(out.status, out.stderr).toBe(0);
    const expected = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as { cases: Record<string, DenseCase> };
    await checkAgainst(expected.cases, dir);
  });
});
