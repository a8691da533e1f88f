import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync, readFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCliShort } from './cli-helpers.js';

const run = runCliShort;

let dir: string;
let tri: string;
let singular: string;

/** Non-symmetric tridiagonal Matrix Market file: 4 on the diagonal, −1.5 below, −0.5 above. */
function writeTridiag(path: string, n: number): void {
  const lines = ['%%MatrixMarket matrix coordinate real general', `${n} ${n} ${3 * n - 2}`];
  for (let i = 1; i <= n; i++) {
    if (i > 1) lines.push(`${i} ${i - 1} -1.5`);
    lines.push(`${i} ${i} 4`);
    if (i < n) lines.push(`${i} ${i + 1} -0.5`);
  }
  writeFileSync(path, `${lines.join('\n')}\n`);
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'slabbench-solve-'));
  tri = join(dir, 'tri.mtx');
  writeTridiag(tri, 40);
  // ILU(0) pivot of row 2 is 1 − 1·1/1 = 0 (hand-factored)
  singular = join(dir, 'pivot.mtx');
  writeFileSync(singular, '%%MatrixMarket matrix coordinate real general\n3 3 7\n1 1 1\n1 2 1\n2 1 1\n2 2 1\n2 3 1\n3 2 1\n3 3 2\n');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('slabbench solve: the matrix copied into kernel memory', () => {
  it('is reported whether the warm-up or the timed solve moved it (the peak RSS holds it either way)', async () => {
    // 40×40 tridiagonal, 118 entries, bs 1 (CSR): row pointers 41·4 = 164 → 176, column indices
    // 118·4 = 472 → 480, values 118·8 = 944 bytes, each padded to 16 bytes: 1600
    for (const extra of [[], ['--no-warmup']]) {
      const r = await run(['solve', tri, '--json', '-', ...extra]);
      expect(r.code).toBe(0);
      const doc = JSON.parse(r.out);
      expect(doc.kernels).toBe('wasm');
      expect(doc.kernelMatrixMovedBytes, extra.join(' ')).toBe(1600);
    }
  });
});

describe('slabbench solve', () => {
  it('solves with b = A·1 by default, prints a short summary and exits 0', async () => {
    const r = await run(['solve', tri]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/solved \(relative-target\) after \d+ iterations \(0 restarts; \d+ matvecs, 0 preconditioner applies\)/);
    expect(r.out).toMatch(/work +setup 0 flops, 0 B moved; solve \d/);
    expect(r.out).toMatch(/b = A·1: max \|x − 1\|/);
    expect(r.out).toMatch(/watched: plain residual ‖b − Ax‖/);
    expect(r.out).toMatch(/memory +matrix/);
  });

  it('the summary names how the diagonal blocks are applied (inverse blocks by default, LU blocks on request)', async () => {
    const inv = await run(['solve', tri, '--precond', 'block-jacobi', '--block-size', '2']);
    expect(inv.code).toBe(0);
    expect(inv.out).toMatch(/\+ block-jacobi \(inverse blocks\)/);
    const lu = await run(['solve', tri, '--precond', 'block-gs', '--block-size', '2', '--block-inverse', 'lu']);
    expect(lu.code).toBe(0);
    expect(lu.out).toMatch(/\+ block-gs \(forward ×1, ω 1, natural, LU blocks\)/);
  });

  it('--json - prints only JSON with the documented fields', async () => {
    const t0 = performance.now();
    const r = await run(['solve', tri, '--precond', 'ilu0', '--json', '-']);
    const wall = (performance.now() - t0) / 1000;
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    for (const key of ['iterations', 'restarts', 'converged', 'outcome', 'cause', 'history', 'trueRelativeResidual', 'watched',
      'relativeTo', 'referenceNorm', 'trueReferenceNorm', 'work', 'residualChecks', 'residualMismatch', 'timing', 'memory', 'matrix', 'recipe', 'rhs', 'errorVsOnes']) {
      expect(doc).toHaveProperty(key);
    }
    expect(doc.schema).toBe('slabbench-solve/1');
    expect(doc.history[0]).toBe(1);
    expect(doc.history.length).toBe(doc.iterations + 1);
    expect(doc.trueRelativeResidual).toBeLessThanOrEqual(1e-8);
    for (const s of [doc.timing.setupSeconds, doc.timing.solveSeconds]) {
      expect(Number.isFinite(s)).toBe(true);
      expect(s).toBeGreaterThanOrEqual(0);
    }
    expect(doc.timing.setupSeconds + doc.timing.solveSeconds).toBeLessThanOrEqual(wall);
    expect(doc.memory.matrixBytes).toBe(41 * 4 + 118 * 4 + 118 * 8); // CSR rowPtr + colInd + values
    // Each total is the sum of its named buffers, and the peak RSS holds all of them.
    const sum = (o: Record<string, number>): number => Object.values(o).reduce((s, v) => s + v, 0);
    expect(doc.memory.preconditionerBytes).toBe(sum(doc.memory.buffers.preconditioner));
    expect(doc.memory.krylovBytes).toBe(sum(doc.memory.buffers.krylov));
    // restart 30, n = 40: a full cycle reserves 31 vectors; the run holds the ones it wrote
    expect(doc.memory.basisReservedBytes).toBe(31 * 40 * 8);
    expect(doc.memory.buffers.krylov.basis).toBe((Math.min(doc.iterations, 30) + 1) * 40 * 8);
    expect(doc.memory.preconditionerBytes).toBeGreaterThanOrEqual(118 * 8); // ILU(0) keeps at least one value per entry of A
    expect(doc.memory.peakBytes).toBeGreaterThan(doc.memory.matrixBytes + doc.memory.preconditionerBytes + doc.memory.krylovBytes);
    expect(doc.errorVsOnes.max).toBeLessThan(1e-6);
    expect(doc.recipe.preconditioner).toBe('ilu0');
  });

  it('--json FILE writes the document atomically and still prints the summary', async () => {
    const file = join(dir, 'out.json');
    const r = await run(['solve', tri, '--krylov', 'bicgstab', '--precond', 'jacobi', '--json', file]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/bicgstab \+ jacobi/);
    expect(JSON.parse(readFileSync(file, 'utf8')).method).toBe('bicgstab');
  });

  it('exits 1 when the run does not converge, and says why', async () => {
    const r = await run(['solve', tri, '--max-iters', '2']);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/unsolved \(iteration-budget\) after 2 iterations/);
  });

  it('a zero pivot is a cause (exit 1, block row named), not a crash; --shift lets it run', async () => {
    const r = await run(['solve', singular, '--precond', 'ilu0']);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/failed \(preconditioner-error\) after 0 iterations/);
    expect(r.out).toMatch(/block row 1/);
    const s = await run(['solve', singular, '--precond', 'ilu0', '--shift', '0.5']);
    expect(s.code).toBe(0);
  });

  it('stationary block Gauss–Seidel with --block-size uses the BSR operator', async () => {
    const r = await run(['solve', tri, '--krylov', 'none', '--precond', 'block-gs', '--sweep', 'symmetric', '--block-size', '4', '--json', '-']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    expect(doc.method).toBe('stationary');
    expect(doc.matrix.bs).toBe(4);
    expect(doc.memory.buffers.matrix.values).toBe(28 * 16 * 8); // 10 diagonal + 9 + 9 off-diagonal 4×4 blocks
  });

  it('--rhs reads a vector; no error against ones is reported then', async () => {
    const rhs = join(dir, 'b.mtx');
    writeFileSync(rhs, `%%MatrixMarket matrix array real general\n40 1\n${Array.from({ length: 40 }, (_, i) => i % 3).join('\n')}\n`);
    const r = await run(['solve', tri, '--rhs', rhs, '--json', '-']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    expect(doc.rhs).toEqual({ source: 'file', file: rhs });
    expect(doc.errorVsOnes).toBeUndefined();
    const bad = join(dir, 'short.mtx');
    writeFileSync(bad, '%%MatrixMarket matrix array real general\n3 1\n1\n2\n3\n');
    const e = await run(['solve', tri, '--rhs', bad]);
    expect(e.code).toBe(2);
    expect(e.err).toMatch(/short\.mtx: right-hand side has length 3, expected 40/);
  });

  it('bad options exit 2 with one line naming the option', async () => {
    for (const [args, msg] of [
      [['--restart', '0'], /option --restart: expected an integer from 1 to 10000, got "0"/],
      [['--precond', 'amg'], /option --precond: expected one of none, jacobi/],
      [['--inner-rtol', '1e-3'], /option --inner-rtol: inner options are only used with --precond slab/],
      [['--krylov', 'fgmres', '--side', 'left'], /option --side: fgmres preconditions on the right only/],
    ] as Array<[string[], RegExp]>) {
      const r = await run(['solve', tri, ...args]);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(msg);
      expect(r.err.trim().split('\n').length).toBe(1);
      expect(r.out).toBe('');
    }
    const missing = await run(['solve', join(dir, 'nope.mtx')]);
    expect(missing.code).toBe(2);
  });

  it('the slab preconditioner runs with inner options', async () => {
    const r = await run(['solve', tri, '--krylov', 'fgmres', '--precond', 'slab', '--inner-krylov', 'bicgstab', '--inner-rtol', '1e-6', '--json', '-']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    expect(doc.recipe.inner).toMatchObject({ krylov: 'bicgstab', rtol: 1e-6, preconditioner: 'block-ilu0' });
    expect(doc.preconditionerStats).toBeDefined();
  });

  it('--help shows examples and exit codes', async () => {
    const r = await run(['solve', '--help']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/Examples:/);
    expect(r.out).toMatch(/Exit codes: 0 solved, 1 unsolved or failed/);
    expect(existsSync(tri)).toBe(true);
  });
});
