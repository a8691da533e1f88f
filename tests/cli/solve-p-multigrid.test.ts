import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdtempSync, rmSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseGeneratorParams, writeGeneratedCase } from '../../src/dg/generate.js';
import { runCliShort as run } from './cli-helpers.js';

let dir: string;
let mtx: string;
let bare: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'slabbench-pmg-'));
  // invented scenario: a pressure pulse in a short duct (acoustics 1D+t, p = 2)
  const files = await writeGeneratedCase(parseGeneratorParams({ physics: 'acoustics', dim: 1, order: 2, cells: [8], slabs: 2, cfl: 2 }, 'test'), dir, 'duct');
  mtx = files.mtx;
  // the same matrix with a layout that has no modes section
  bare = join(dir, 'bare.mtx');
  writeFileSync(bare, readFileSync(mtx));
  const layout = JSON.parse(readFileSync(files.layout, 'utf8')) as Record<string, unknown>;
  delete layout.modes;
  writeFileSync(join(dir, 'bare.layout.json'), JSON.stringify(layout));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('slabbench solve --precond p-multigrid', () => {
  it('solves with FGMRES, names the levels in the summary and the options in the recipe line', async () => {
    const r = await run(['solve', mtx, '--krylov', 'fgmres', '--precond', 'p-multigrid', '--pmg-cycle', 'w']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/p-multigrid \(levels p\.\.0, W-cycle, 1\+1 × block-gs symmetric, ω 1\) \[coarse: gmres\(30, right, mgs\) \+ block-ilu0/);
    expect(r.out).toMatch(/levels +degree 2: 384 rows → degree 1: 192 rows → degree 0: 64 rows/);
  });

  it('--json reports levels per level in preconditionerStats and the options in recipe.pMultigrid', async () => {
    const r = await run(['solve', mtx, '--krylov', 'fgmres', '--precond', 'p-multigrid', '--pmg-levels', '2,0', '--json', '-']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    expect(doc.recipe.pMultigrid.levels).toEqual([2, 0]);
    expect(doc.preconditionerStats.levels.map((l: { degree: number }) => l.degree)).toEqual([2, 0]);
    expect(Object.keys(doc.memory.buffers.preconditioner).some((k: string) => k.startsWith('level 1 (degree 0) '))).toBe(true);
  });

  it('plain GMRES refuses the variable default (exit 2, one line) and takes a fixed coarse solve', async () => {
    const bad = await run(['solve', mtx, '--precond', 'p-multigrid']);
    expect(bad.code).toBe(2);
    expect(bad.err.trim().split('\n')).toHaveLength(1);
    expect(bad.err).toMatch(/option --krylov: p-multigrid with a gmres coarse solve changes between applications \(variable\)/);
    const ok = await run(['solve', mtx, '--precond', 'p-multigrid', '--pmg-coarse-krylov', 'none', '--pmg-coarse-rtol', '0', '--pmg-coarse-max-iters', '3']);
    expect(ok.code).toBe(0);
  });

  it('a matrix whose layout has no modes section: exit 2, one line naming the missing layout field', async () => {
    const r = await run(['solve', bare, '--krylov', 'fgmres', '--precond', 'p-multigrid']);
    expect(r.code).toBe(2);
    expect(r.err.trim().split('\n')).toHaveLength(1);
    expect(r.err).toMatch(/p-multigrid needs the layout field "modes"/);
  });

  it('--help lists the --pmg- options and an example', async () => {
    const r = await run(['solve', '--help']);
    expect(r.out).toMatch(/--pmg-levels <list>/);
    expect(r.out).toMatch(/--pmg-coarse-krylov/);
    expect(r.out).toMatch(/--precond p-multigrid --pmg-levels 2,1,0/);
  });
});
