// Suite entries that are sequences (files or generated) and the recipes' sequence fields: parsing and
// the one-line errors, with the real recipe, generator and sequence parsers.
import { describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import * as real from '../../src/run/real-deps.js';
import { parseSuite, readSuite, isSequenceEntry, type GeneratedMatrixEntry, type SequenceFilesEntry } from '../../src/run/suite.js';
import { planSweep } from '../../src/run/plan.js';
import { caseFolder } from '../../src/run/sweep.js';
import { UserError } from '../../src/util/errors.js';
import { tempDir } from './helpers.js';

const burgers = { physics: 'burgers', dim: 1, order: 1, cells: [8], slabs: 2, periodic: [true], initial: '0.6 + 0.2*sin(2*pi*x)' };

const valid = (): Record<string, any> => ({
  schema: 'slabbench-suite/1',
  matrices: [
    { name: 'steps', sequence: [{ file: 'J1.mtx', rhs: 'r1.mtx' }, { file: 'J2.mtx.gz', rhs: 'r2.mtx' }], blockSize: 2 },
    { name: 'bore', generate: burgers, sequence: { kind: 'newton', steps: 3 } },
    { name: 'march', generate: { physics: 'advection', dim: 1, cells: [6], slabs: 3 }, sequence: { kind: 'slabs' } },
  ],
  recipes: [
    { name: 'lagged', krylov: 'gmres', preconditioner: 'block-ilu0', reuse: 'fixed', reuseSystems: 2, initialGuess: 'previous' },
    { name: 'growth', krylov: 'gmres', preconditioner: 'block-jacobi', reuse: 'on-growth', refreshFactor: 1.5 },
    { name: 'plain', krylov: 'gmres', preconditioner: 'none' },
  ],
});

function errorOf(mutate: (s: Record<string, any>) => void): string {
  const s = valid();
  mutate(s);
  try {
    parseSuite(s, 'suite.json', '/base', real);
  } catch (e) {
    expect(e).toBeInstanceOf(UserError);
    const m = (e as Error).message;
    expect(m).not.toContain('\n');
    return m;
  }
  return 'no error';
}

describe('sequence entries in suites', () => {
  it('parses file lists and generated sequences, with paths against the suite folder', () => {
    const s = parseSuite(valid(), 'suite.json', '/base', real);
    const files = s.matrices[0] as SequenceFilesEntry;
    expect(files.kind).toBe('sequence-files');
    expect(files.files.map((f) => f.filePath)).toEqual(['/base/J1.mtx', '/base/J2.mtx.gz']);
    expect(files.files.map((f) => f.rhsPath)).toEqual(['/base/r1.mtx', '/base/r2.mtx']);
    expect(files.blockSize).toBe(2);
    const bore = s.matrices[1] as GeneratedMatrixEntry;
    expect(bore.sequence).toEqual({ kind: 'newton', steps: 3 });
    expect((s.matrices[2] as GeneratedMatrixEntry).sequence).toEqual({ kind: 'slabs' });
    expect(s.matrices.map(isSequenceEntry)).toEqual([true, true, true]);
    expect(s.recipes[0]).toMatchObject({ reuse: 'fixed', reuseSystems: 2, initialGuess: 'previous' });
    expect(s.recipes[1]).toMatchObject({ reuse: 'on-growth', refreshFactor: 1.5 });
    expect(s.recipes[2].reuse).toBeUndefined();
    // the plan says what each entry is
    const sources = planSweep(s).pairs.filter((p) => p.recipe === 'plain').map((p) => p.source);
    expect(sources).toEqual(['sequence of 2 files', 'generated sequence (3 Newton steps)', 'generated sequence (slab marching)']);
  });

  it('keys the cache by the sequence too, and the fingerprint sees it', () => {
    const a = parseSuite(valid(), 'suite.json', '/base', real);
    const v = valid();
    v.matrices[1].sequence.steps = 4;
    const b = parseSuite(v, 'suite.json', '/base', real);
    expect(caseFolder('/c', b.matrices[1] as GeneratedMatrixEntry)).not.toBe(caseFolder('/c', a.matrices[1] as GeneratedMatrixEntry));
    expect(b.fingerprint).not.toBe(a.fingerprint);
  });

  it.each([
    ['an empty file list', (s: any) => { s.matrices[0].sequence = []; }, 'suite.json: matrices[0].sequence: expected at least one { "file", "rhs" } entry'],
    ['a system without its rhs', (s: any) => { delete s.matrices[0].sequence[1].rhs; }, 'suite.json: matrices[0].sequence[1].rhs: expected a path to a Matrix Market vector'],
    ['a file that is not a matrix', (s: any) => { s.matrices[0].sequence[0].file = 'J1.txt'; }, 'suite.json: matrices[0].sequence[0].file: expected a path ending in .mtx, .mtx.gz or .npz, got "J1.txt"'],
    ['an unknown key in a system', (s: any) => { s.matrices[0].sequence[0].x0 = 'a.mtx'; }, 'suite.json: matrices[0].sequence[0].x0: unknown key (expected file, rhs)'],
    ['an unknown key beside a file list', (s: any) => { s.matrices[0].prebuilt = 'a.mtx'; }, 'suite.json: matrices[0].prebuilt: unknown key for a sequence of files'],
    ['a list with generate', (s: any) => { s.matrices[1].sequence = [{ file: 'a.mtx', rhs: 'b.mtx' }]; }, 'suite.json: matrices[1].sequence: expected { "kind": "newton", "steps": N } or { "kind": "slabs" } with generate, got an array'],
    ['a Newton sequence of a linear physics', (s: any) => { s.matrices[2].sequence = { kind: 'newton', steps: 2 }; }, 'suite.json: matrices[2].sequence.kind: a Newton sequence needs a nonlinear physics (burgers or euler), got advection'],
    ['no steps', (s: any) => { delete s.matrices[1].sequence.steps; }, 'suite.json: matrices[1].sequence.steps: expected an integer from 1 to 100'],
    ['an unknown kind', (s: any) => { s.matrices[1].sequence.kind = 'picard'; }, 'suite.json: matrices[1].sequence.kind: expected "newton" or "slabs", got "picard"'],
    ['slab marching of one slab', (s: any) => { s.matrices[2].generate.slabs = 1; }, 'suite.json: matrices[2].sequence.kind: slab marching needs at least 2 slabs'],
    ['a prebuilt copy of a sequence', (s: any) => { s.matrices[1].prebuilt = 'demo/b.mtx'; }, 'suite.json: matrices[1].prebuilt: a generated sequence has no committed copy'],
    ['an unknown reuse policy', (s: any) => { s.recipes[0].reuse = 'sometimes'; }, 'suite.json: recipes[0].reuse: expected one of rebuild, fixed, on-growth, got "sometimes"'],
    ['fixed without a count', (s: any) => { delete s.recipes[0].reuseSystems; }, 'suite.json: recipes[0].reuseSystems: missing; reuse "fixed" needs the number of systems'],
    ['a count that has no effect', (s: any) => { s.recipes[1].reuseSystems = 3; }, 'suite.json: recipes[1].reuseSystems: has no effect with reuse on-growth (read only with reuse "fixed"); remove it'],
    ['a factor that has no effect', (s: any) => { s.recipes[0].refreshFactor = 2; }, 'suite.json: recipes[0].refreshFactor: has no effect with reuse fixed'],
    ['a factor of 1', (s: any) => { s.recipes[1].refreshFactor = 1; }, 'suite.json: recipes[1].refreshFactor: expected a finite number > 1, got 1'],
    ['on-growth without a factor', (s: any) => { delete s.recipes[1].refreshFactor; }, 'suite.json: recipes[1].refreshFactor: missing'],
    ['reuse without a preconditioner', (s: any) => { s.recipes[2].reuse = 'fixed'; s.recipes[2].reuseSystems = 2; }, 'suite.json: recipes[2].reuse: has no effect with preconditioner none (nothing is set up to reuse); remove it'],
    ['an unknown initial guess', (s: any) => { s.recipes[2].initialGuess = 'exact'; }, 'suite.json: recipes[2].initialGuess: expected one of zero, previous, got "exact"'],
    ['a sequence field in an inner recipe', (s: any) => { s.recipes[2] = { krylov: 'fgmres', preconditioner: 'slab', inner: { reuse: 'rebuild' } }; }, 'suite.json: recipes[2].inner: unknown field "reuse"'],
  ])('refuses %s in one line', (_what, mutate, expected) => {
    expect(errorOf(mutate)).toContain(expected);
  });

  it('refuses sequence fields when the suite has no sequence', () => {
    expect(errorOf((s) => { s.matrices = [{ name: 'one', file: 'a.mtx' }]; }))
      .toBe('suite.json: recipes[0].reuse: has no effect: the suite has no sequence matrices (a "sequence" entry); remove it');
  });

  it('readSuite names the missing file of a sequence', () => {
    const t = tempDir();
    try {
      writeFileSync(join(t.dir, 'J1.mtx'), '%%MatrixMarket matrix coordinate real general\n1 1 1\n1 1 1\n');
      writeFileSync(join(t.dir, 'r1.mtx'), '%%MatrixMarket matrix array real general\n1 1\n1\n');
      const s = valid();
      s.matrices = [s.matrices[0]];
      writeFileSync(join(t.dir, 'suite.json'), JSON.stringify(s));
      expect(() => readSuite(join(t.dir, 'suite.json'), real)).toThrow(/matrices\[0\]\.sequence\[1\]\.file: no such file "J2\.mtx\.gz"/);
    } finally {
      t.cleanup();
    }
  });
});
