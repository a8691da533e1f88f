import { describe, expect, it, afterAll } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { loadSuite, parseSuite, readSuite, selectFromSuite, type GeneratedMatrixEntry } from '../../src/run/suite.js';
import { prebuiltCase } from '../../src/run/sweep.js';
import { fileURLToPath } from 'node:url';
import * as fake from './fixtures/fake-deps.js';
import { tempDir, writeTinySuite } from './helpers.js';

const valid = () => ({
  schema: 'slabbench-suite/1',
  description: 'd',
  matrices: [
    { name: 'm1', file: 'a.mtx', blockSize: 2 },
    { name: 'm2', generate: { size: 4 } },
  ],
  recipes: [
    { name: 'r1', krylov: 'gmres', restart: 20 },
    { name: 'r2', krylov: 'bicgstab', preconditioner: 'ilu0' },
  ],
});

function errorOf(mutate: (s: ReturnType<typeof valid>) => unknown): string {
  const s = valid();
  const obj = mutate(s) ?? s;
  try {
    parseSuite(obj, 'suite.json', '/base', fake);
  } catch (e) {
    return (e as Error).message;
  }
  return 'no error';
}

describe('parseSuite', () => {
  it('parses a valid suite, resolving paths against the suite folder and keeping order', () => {
    const input = valid();
    const snapshot = JSON.stringify(input);
    const s = parseSuite(input, 'suite.json', '/base', fake);
    expect(JSON.stringify(input)).toBe(snapshot); // input not modified
    expect(s.matrices.map((m) => m.name)).toEqual(['m1', 'm2']);
    const m1 = s.matrices[0];
    expect(m1.kind === 'file' && m1.filePath).toBe('/base/a.mtx');
    expect(m1.kind === 'file' && m1.blockSize).toBe(2);
    expect(s.matrices[1].kind).toBe('generate');
    expect(s.recipes.map((r) => [r.name, r.krylov, r.restart])).toEqual([['r1', 'gmres', 20], ['r2', 'bicgstab', 30]]);
    expect(s.fingerprint).toMatch(/^[0-9a-f]{16}$/);
  });

  it('fingerprint ignores key order but not content', () => {
    const a = parseSuite(valid(), 'suite.json', '/x', fake).fingerprint;
    const reordered = { recipes: valid().recipes, matrices: valid().matrices.map((m) => Object.fromEntries(Object.entries(m).reverse())), schema: 'slabbench-suite/1' };
    expect(parseSuite(reordered, 'suite.json', '/y', fake).fingerprint).toBe(a);
    const changed = valid();
    changed.recipes[0].restart = 21;
    expect(parseSuite(changed, 'suite.json', '/x', fake).fingerprint).not.toBe(a);
  });

  const cases: Array<[string, (s: any) => unknown, string]> = [
    ['not an object', () => [], 'suite.json: expected a JSON object with "schema": "slabbench-suite/1", got an array'],
    ['missing schema', (s) => { delete s.schema; }, 'suite.json: schema: missing; expected "slabbench-suite/1"'],
    ['prebuilt not a .mtx path', (s) => { s.matrices[1].prebuilt = 'demo/m2.txt'; }, 'suite.json: matrices[1].prebuilt: expected a path ending in .mtx or .mtx.gz (a committed copy of the case), got "demo/m2.txt"'],
    ['wrong schema', (s) => { s.schema = 'slabbench-suite/9'; }, 'suite.json: schema: expected "slabbench-suite/1", got "slabbench-suite/9"'],
    ['unknown top key', (s) => { s.matrix = []; }, 'suite.json: matrix: unknown key'],
    ['description type', (s) => { s.description = 3; }, 'suite.json: description: expected a string, got 3'],
    ['matrices not array', (s) => { s.matrices = {}; }, 'suite.json: matrices: expected an array, got an object'],
    ['no matrices', (s) => { s.matrices = []; }, 'suite.json: matrices: expected at least one matrix'],
    ['no recipes', (s) => { s.recipes = []; }, 'suite.json: recipes: expected at least one recipe'],
    ['matrix not object', (s) => { s.matrices[1] = 'x.mtx'; }, 'suite.json: matrices[1]: expected an object, got "x.mtx"'],
    ['matrix name missing', (s) => { delete s.matrices[0].name; }, 'suite.json: matrices[0].name: expected a string, got undefined'],
    ['matrix name chars', (s) => { s.matrices[0].name = 'a b'; }, 'suite.json: matrices[0].name: expected letters, digits'],
    ['duplicate matrix', (s) => { s.matrices[1].name = 'm1'; }, 'suite.json: matrices[1].name: duplicate matrix name "m1" (also matrices[0])'],
    ['both file and generate', (s) => { s.matrices[0].generate = { size: 3 }; }, 'suite.json: matrices[0]: expected exactly one of "file"'],
    ['neither', (s) => { delete s.matrices[0].file; }, 'suite.json: matrices[0]: expected exactly one of "file"'],
    ['file type', (s) => { s.matrices[0].file = 7; }, 'suite.json: matrices[0].file: expected a path to a .mtx, .mtx.gz or .npz file, got 7'],
    ['file extension', (s) => { s.matrices[0].file = 'a.txt'; }, 'suite.json: matrices[0].file: expected a path ending in .mtx, .mtx.gz or .npz, got "a.txt"'],
    ['rhs type', (s) => { s.matrices[0].rhs = false; }, 'suite.json: matrices[0].rhs: expected a path to a Matrix Market vector, got false'],
    ['blockSize zero', (s) => { s.matrices[0].blockSize = 0; }, 'suite.json: matrices[0].blockSize: expected an integer from 1 to 4096, got 0'],
    ['blockSize fraction', (s) => { s.matrices[0].blockSize = 2.5; }, 'suite.json: matrices[0].blockSize: expected an integer from 1 to 4096, got 2.5'],
    ['unknown file key', (s) => { s.matrices[0].blocksize = 2; }, 'suite.json: matrices[0].blocksize: unknown key for a file matrix'],
    ['rhs on generated', (s) => { s.matrices[1].rhs = 'b.mtx'; }, 'suite.json: matrices[1].rhs: unknown key for a generated matrix'],
    ['generate not object', (s) => { s.matrices[1].generate = 5; }, 'suite.json: matrices[1].generate: expected an object of generator parameters, got 5'],
    ['generator field (parser)', (s) => { s.matrices[1].generate = { size: 1 }; }, 'suite.json: matrices[1].generate.size: expected an integer ≥ 2'],
    ['recipe not object', (s) => { s.recipes[0] = 'gmres'; }, 'suite.json: recipes[0]: expected an object, got "gmres"'],
    ['recipe name type', (s) => { s.recipes[1].name = 12; }, 'suite.json: recipes[1].name: expected a string, got 12'],
    ['duplicate recipe', (s) => { s.recipes[1].name = 'r1'; }, 'suite.json: recipes[1].name: duplicate recipe name "r1" (also recipes[0])'],
    ['recipe field (recipe parser)', (s) => { s.recipes[1].restart = 0; }, 'suite.json: recipes[1].restart: '],
    ['recipe unknown field', (s) => { s.recipes[0].precond = 'ilu0'; }, 'suite.json: recipes[0]: unknown field "precond"'],
  ];
  it.each(cases)('%s → one-line error naming the field', (_label, mutate, expected) => {
    const msg = errorOf(mutate);
    expect(msg.startsWith(expected), `got: ${msg}`).toBe(true);
    expect(msg).not.toContain('\n');
  });

  it('an unnamed recipe takes the default name, and two unnamed alike collide', () => {
    const s = valid();
    s.recipes = [{ krylov: 'gmres' } as never, { krylov: 'bicgstab' } as never];
    expect(parseSuite(s, 'suite.json', '/b', fake).recipes.map((r) => r.name)).toEqual(['gmres-none', 'bicgstab-none']);
    s.recipes = [{ krylov: 'gmres' } as never, { krylov: 'gmres', restart: 5 } as never];
    expect(() => parseSuite(s, 'suite.json', '/b', fake)).toThrow('suite.json: recipes[1].name: duplicate recipe name "gmres-none"');
  });
});

describe('readSuite', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());

  it('reads a suite and checks that matrix and rhs files exist', () => {
    const p = writeTinySuite(t.dir);
    const s = readSuite(p, fake);
    expect(s.matrices).toHaveLength(2);
    const bad = JSON.parse(JSON.stringify({ schema: 'slabbench-suite/1', matrices: [{ name: 'x', file: 'gone.mtx' }], recipes: [{ name: 'r' }] }));
    const q = join(t.dir, 'bad.json');
    writeFileSync(q, JSON.stringify(bad));
    expect(() => readSuite(q, fake)).toThrow(`${q}: matrices[0].file: no such file "gone.mtx"`);
    bad.matrices[0] = { name: 'x', file: 'a.mtx', rhs: 'nope.mtx' };
    writeFileSync(q, JSON.stringify(bad));
    expect(() => readSuite(q, fake)).toThrow(`${q}: matrices[0].rhs: no such file "nope.mtx"`);
  });

  it('reports a missing file and invalid JSON in one line', () => {
    expect(() => readSuite(join(t.dir, 'none.json'), fake)).toThrow(/none\.json: no such suite file$/);
    const q = join(t.dir, 'broken.json');
    writeFileSync(q, '{ "schema": ');
    expect(() => readSuite(q, fake)).toThrow(/broken\.json: not valid JSON/);
  });

  it('selectFromSuite keeps suite order and rejects unknown names', () => {
    const s = readSuite(writeTinySuite(t.dir), fake);
    const sel = selectFromSuite(s, ['beta', 'alpha'], ['rich-slow']);
    expect(sel.matrices.map((m) => m.name)).toEqual(['alpha', 'beta']);
    expect(sel.recipes.map((r) => r.name)).toEqual(['rich-slow']);
    expect(() => selectFromSuite(s, ['gamma'])).toThrow('option --only-matrix: "gamma" is not in');
    expect(() => selectFromSuite(s, undefined, ['x'])).toThrow('option --only-recipe: "x" is not in');
  });
});

describe('committed suites', () => {
  it('the demo suite and the CI suite are valid with the real recipe and generator parsers', async () => {
    const demo = await loadSuite(fileURLToPath(new URL('../../matrices/suite.json', import.meta.url)));
    expect(demo.matrices.length).toBeGreaterThanOrEqual(3);
    expect(demo.recipes.length).toBeGreaterThanOrEqual(5);
    expect(demo.matrices.every((m) => m.note?.includes('invented'))).toBe(true);
    const ci = await loadSuite(fileURLToPath(new URL('../../matrices/ci/suite.json', import.meta.url)));
    expect(ci.matrices.map((m) => m.kind)).toEqual(['file', 'file', 'file']);
    expect(ci.recipes.map((r) => r.name)).toEqual(['gmres-block-jacobi', 'gmres-block-gs-symmetric', 'gmres-block-ilu0-downstream', 'fgmres-slab-loose']);
  });

  it('the multilevel suite is valid: generated invented cases, the demo floor screed committed, no slab recipe', async () => {
    const ml = await loadSuite(fileURLToPath(new URL('../../matrices/multilevel-suite.json', import.meta.url)));
    expect(ml.matrices.map((m) => m.name)).toEqual(['floor-screed', 'floor-screed-6', 'floor-screed-8', 'floor-screed-10']);
    expect(ml.matrices.every((m) => m.kind === 'generate' && m.note?.startsWith('invented scenario'))).toBe(true);
    expect(prebuiltCase(ml.matrices[0] as GeneratedMatrixEntry)?.mtx).toMatch(/matrices\/demo\/floor-screed\.mtx\.gz$/);
    expect(ml.recipes.some((r) => r.preconditioner === 'slab')).toBe(false);
  });

  it('every demo case has a committed copy built from exactly its suite parameters', async () => {
    const demo = await loadSuite(fileURLToPath(new URL('../../matrices/suite.json', import.meta.url)));
    // every single-system entry has a copy; a generated sequence is built into the cache on first use
    const generated = demo.matrices.filter((m): m is GeneratedMatrixEntry => m.kind === 'generate' && m.sequence === undefined);
    expect(generated.length).toBe(demo.matrices.length - 1);
    expect(demo.matrices.filter((m) => m.kind === 'generate' && m.sequence !== undefined).map((m) => m.name)).toEqual(['channel-bore-newton']);
    for (const m of generated) {
      const c = prebuiltCase(m);
      expect(c?.mtx, m.name).toMatch(new RegExp(`matrices/demo/${m.name}\\.mtx(\\.gz)?$`));
      expect(c?.rhs).toMatch(new RegExp(`matrices/demo/${m.name}\\.rhs\\.mtx$`));
      // A changed parameter makes the committed copy stale: the sweep must then generate.
      const changed = { ...m, generate: { ...(m.generate as Record<string, unknown>), seed: 12345 } };
      expect(prebuiltCase(changed)).toBeUndefined();
    }
  });
});
