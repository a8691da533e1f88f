import { mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL, fileURLToPath } from 'node:url';
import * as fake from './fixtures/fake-deps.js';
import { readSuite, type Suite } from '../../src/run/suite.js';

export const FAKE_DEPS_URL = pathToFileURL(fileURLToPath(new URL('./fixtures/fake-deps.ts', import.meta.url))).href;

export function tempDir(prefix = 'slabbench-run-'): { dir: string; cleanup(): void } {
  const dir = mkdtempSync(join(tmpdir(), prefix));
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

/**
 * Two tiny matrices (one file with its rhs, one "generated" by the fake generator) and two recipes
 * (omega 1 and 0.8 Richardson in the fake solver).
 */
export function writeTinySuite(dir: string, opts: { omegaSecond?: number; extraRecipes?: object[]; extraMatrices?: object[] } = {}): string {
  writeFileSync(join(dir, 'a.mtx'), fake.mtxText(6, fake.tridiagonal(6, 4)));
  writeFileSync(join(dir, 'a.rhs.mtx'), '%%MatrixMarket matrix array real general\n6 1\n1\n2\n3\n4\n5\n6\n');
  const suite = {
    schema: 'slabbench-suite/1',
    description: 'tiny test suite',
    matrices: [
      { name: 'alpha', file: 'a.mtx', rhs: 'a.rhs.mtx', note: 'file matrix' },
      { name: 'beta', generate: { size: 9, diag: 5 } },
      ...(opts.extraMatrices ?? []),
    ],
    recipes: [
      { name: 'rich-1', krylov: 'none', preconditioner: 'jacobi', omega: 1, rtol: 1e-8 },
      { name: 'rich-slow', krylov: 'none', preconditioner: 'jacobi', omega: opts.omegaSecond ?? 0.8, rtol: 1e-8 },
      ...(opts.extraRecipes ?? []),
    ],
  };
  const p = join(dir, 'suite.json');
  writeFileSync(p, JSON.stringify(suite, null, 1));
  return p;
}

export function readTinySuite(path: string): Suite {
  return readSuite(path, fake);
}
