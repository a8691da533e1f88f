import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { chmodSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCliShort as run, ciSuite } from './cli-helpers.js';
import { readSuite } from '../../src/run/suite.js';
import * as real from '../../src/run/real-deps.js';

let dir: string;
let tri: string;
let nan: string;

/** Diagonally dominant tridiagonal matrix (4, −1.5 below, −0.5 above); `bad` puts a value into entry (2, 2). */
function writeTridiag(path: string, n: number, bad?: string): void {
  const lines = ['%%MatrixMarket matrix coordinate real general', `${n} ${n} ${3 * n - 2}`];
  for (let i = 1; i <= n; i++) {
    if (i > 1) lines.push(`${i} ${i - 1} -1.5`);
    lines.push(`${i} ${i} ${bad !== undefined && i === 2 ? bad : '4'}`);
    if (i < n) lines.push(`${i} ${i + 1} -0.5`);
  }
  writeFileSync(path, `${lines.join('\n')}\n`);
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'slabbench-solve-inputs-'));
  tri = join(dir, 'tri.mtx');
  writeTridiag(tri, 12);
  nan = join(dir, 'nan.mtx');
  writeTridiag(nan, 12, 'NaN');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('solve: options that have no effect are refused', () => {
  it('--ordering with block Jacobi, --restart with BiCGStab: exit 2, one line naming the option', async () => {
    for (const args of [['--precond', 'block-jacobi', '--ordering', 'rcm'], ['--krylov', 'bicgstab', '--restart', '50'], ['--krylov', 'bicgstab', '--side', 'left']]) {
      const r = await run(['solve', tri, '--block-size', '2', ...args]);
      expect(r.code).toBe(2);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.err).toMatch(new RegExp(`^slabbench: option ${args[args.length - 2]}: has no effect with`));
      expect(r.out).toBe('');
    }
  });

  it('--ordering is the block ordering; the old --order says so', async () => {
    const ok = await run(['solve', tri, '--block-size', '2', '--precond', 'block-ilu0', '--ordering', 'rcm']);
    expect(ok.code).toBe(0);
    expect(ok.out).toMatch(/block-ilu0 \(rcm\)/);
    const old = await run(['solve', tri, '--precond', 'block-ilu0', '--order', 'rcm']);
    expect(old.code).toBe(2);
    expect(old.err).toMatch(/^slabbench: option --order: the block ordering option is now --ordering/);
  });

  it('--json records only the fields the methods read', async () => {
    const r = await run(['solve', tri, '--krylov', 'bicgstab', '--precond', 'jacobi', '--json', '-']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    expect(doc.recipe).not.toHaveProperty('restart');
    expect(doc.recipe).not.toHaveProperty('ordering');
    expect(doc.recipe).toHaveProperty('shift', 0);
  });
});

describe('solve --json PATH is checked before solving', () => {
  it('a missing folder, a folder as the path and a read-only file are refused before any work', async () => {
    const missing = await run(['solve', tri, '--json', join(dir, 'no-such-dir', 'out.json')]);
    expect(missing.code).toBe(2);
    expect(missing.err).toMatch(/^slabbench: option --json: cannot write ".*out\.json": folder .*no-such-dir does not exist\n$/);
    expect(missing.out).toBe('');
    const sub = join(dir, 'sub');
    mkdirSync(sub);
    const folder = await run(['solve', tri, '--json', sub]);
    expect(folder.code).toBe(2);
    expect(folder.err).toMatch(/it is a folder/);
    const ro = join(dir, 'ro.json');
    writeFileSync(ro, '{}');
    chmodSync(ro, 0o444);
    const readOnly = await run(['solve', tri, '--json', ro]);
    // root may write anyway; then the solve succeeds and rewrites the file
    if (readOnly.code === 2) expect(readOnly.err).toMatch(/read-only/);
    else expect(JSON.parse(readFileSync(ro, 'utf8')).matrix.n).toBe(12);
  });

  it('a writable path gets the document', async () => {
    const p = join(dir, 'ok.json');
    const r = await run(['solve', tri, '--json', p]);
    expect(r.code).toBe(0);
    expect(existsSync(p)).toBe(true);
  });
});

describe('solve --allow-non-finite', () => {
  it('without it a NaN entry is refused naming the line; with it the solve stops on the non-finite value (exit 1)', async () => {
    const refused = await run(['solve', nan]);
    expect(refused.code).toBe(2);
    expect(refused.err).toMatch(/nan\.mtx:\d+: non-finite value "NaN"/);
    const r = await run(['solve', nan, '--allow-non-finite', '--json', '-']);
    expect(r.code).toBe(1);
    const doc = JSON.parse(r.out);
    expect(doc.cause).toBe('non-finite-value');
    expect(doc.outcome).toBe('failed');
  });

  it('with a preconditioner whose setup meets the NaN, the run fails in setup, not with an exception', async () => {
    const r = await run(['solve', nan, '--allow-non-finite', '--precond', 'ilu0', '--json', '-']);
    expect(r.code).toBe(1);
    expect(JSON.parse(r.out).converged).toBe(false);
  });
});

describe('suite validation: blockSize against a layout file', () => {
  it('a blockSize that disagrees with the layout beside the matrix is named by its field path', () => {
    const p = ciSuite(dir, 'bs.json', [{ name: 'g', preconditioner: 'block-jacobi' }]);
    const doc = JSON.parse(readFileSync(p, 'utf8'));
    const bs = JSON.parse(readFileSync(doc.matrices[1].file.replace(/\.mtx\.gz$/, '.layout.json'), 'utf8')).blockSize as number;
    doc.matrices[1].blockSize = bs + 1;
    writeFileSync(p, JSON.stringify(doc));
    expect(() => readSuite(p, real)).toThrow(new RegExp(`matrices\\[1\\]\\.blockSize: ${bs + 1} disagrees with .*layout\\.json \\(blockSize ${bs}\\)`));
    doc.matrices[1].blockSize = bs;
    writeFileSync(p, JSON.stringify(doc));
    expect(readSuite(p, real).matrices[1]).toMatchObject({ blockSize: bs });
  });
});
