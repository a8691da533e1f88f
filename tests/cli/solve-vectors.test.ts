// solve --x0, --write-solution, --exact and several right-hand sides for one setup. Residuals and
// errors are recomputed here from the matrix definition (dense loops, independent of slabbench's
// kernels), and the written solution is parsed by hand.
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCliShort as run } from './cli-helpers.js';

const N = 12;
let dir: string;
let tri: string;

/** The tridiagonal test matrix (4 on the diagonal, −1.5 below, −0.5 above) as a dense product. */
function multiply(x: ArrayLike<number>): number[] {
  const y: number[] = [];
  for (let i = 0; i < N; i++) y.push(4 * x[i] + (i > 0 ? -1.5 * x[i - 1] : 0) + (i < N - 1 ? -0.5 * x[i + 1] : 0));
  return y;
}

const norm = (v: ArrayLike<number>): number => Math.sqrt(Array.from(v).reduce((s, t) => s + t * t, 0));

function writeTridiag(path: string): void {
  const lines = ['%%MatrixMarket matrix coordinate real general', `${N} ${N} ${3 * N - 2}`];
  for (let i = 1; i <= N; i++) {
    if (i > 1) lines.push(`${i} ${i - 1} -1.5`);
    lines.push(`${i} ${i} 4`);
    if (i < N) lines.push(`${i} ${i + 1} -0.5`);
  }
  writeFileSync(path, `${lines.join('\n')}\n`);
}

/** An n×k Matrix Market array file (column-major). */
function writeArray(name: string, cols: ArrayLike<number>[]): string {
  const p = join(dir, name);
  const lines = ['%%MatrixMarket matrix array real general', `${cols[0].length} ${cols.length}`];
  for (const c of cols) for (let i = 0; i < c.length; i++) lines.push(String(c[i]));
  writeFileSync(p, `${lines.join('\n')}\n`);
  return p;
}

/** Parse an array file by hand: its columns. */
function parseArray(path: string): number[][] {
  const data = readFileSync(path, 'utf8').split('\n').filter((l) => l !== '' && !l.startsWith('%'));
  const [n, k] = data[0].split(/\s+/).map(Number);
  const vals = data.slice(1).map(Number);
  expect(vals.length).toBe(n * k);
  const cols: number[][] = [];
  for (let j = 0; j < k; j++) cols.push(vals.slice(j * n, (j + 1) * n));
  return cols;
}

const solution = (seed: number): number[] => Array.from({ length: N }, (_, i) => Math.sin(seed + 0.7 * i) + 0.1 * i);

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'slabbench-solve-vectors-'));
  tri = join(dir, 'tri.mtx');
  writeTridiag(tri);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('solve --x0', () => {
  it('x0 equal to the exact solution: 0 iterations, solved', async () => {
    const e = solution(1);
    const b = writeArray('b-x0.mtx', [multiply(e)]);
    const x0 = writeArray('x0-exact.mtx', [e]);
    const r = await run(['solve', tri, '--rhs', b, '--x0', x0, '--precond', 'jacobi', '--json', '-']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    expect(doc.iterations).toBe(0);
    expect(doc.outcome).toBe('solved');
    expect(doc.initialGuess).toEqual({ file: x0, columns: 1 });
    // from zero it takes iterations
    const zero = JSON.parse((await run(['solve', tri, '--rhs', b, '--precond', 'jacobi', '--json', '-'])).out);
    expect(zero.iterations).toBeGreaterThan(0);
  });
});

describe('solve --write-solution and --exact', () => {
  it('writes x as an n×1 array; read back, its residual recomputed here matches the report', async () => {
    const e = solution(2);
    const bv = multiply(e);
    const b = writeArray('b-write.mtx', [bv]);
    const out = join(dir, 'x-written.mtx');
    const r = await run(['solve', tri, '--rhs', b, '--precond', 'block-jacobi', '--block-size', '2', '--rtol', '1e-10', '--write-solution', out, '--json', '-']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    expect(doc.solution).toEqual({ file: out, columns: 1 });
    expect(readFileSync(out, 'utf8')).toMatch(/^%%MatrixMarket matrix array real general\n(%.*\n)+12 1\n/);
    const [x] = parseArray(out);
    const Ax = multiply(x);
    const res = norm(bv.map((v, i) => v - Ax[i])) / norm(bv);
    expect(res).toBeLessThan(1e-10);
    expect(Math.abs(res - doc.trueRelativeResidual)).toBeLessThan(1e-3 * doc.trueRelativeResidual + 1e-15);
    // no temporary file left beside it
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });

  it('--exact: ‖x − x_exact‖ and the relative error equal a hand computation (x = x0 after 0 iterations)', async () => {
    // x0 = ones, x_exact = ones except 4 and −3 in the first two entries: x − x_exact = (−3, 4, 0, …),
    // so ‖x − x_exact‖₂ = 5 and ‖x_exact‖₂ = √(16 + 9 + 10) = √35.
    const ones = new Array(N).fill(1);
    const ex = [...ones];
    ex[0] = 4; ex[1] = -3;
    const x0 = writeArray('x0-ones.mtx', [ones]);
    const exact = writeArray('exact-hand.mtx', [ex]);
    const b = writeArray('b-hand.mtx', [multiply(ex)]);
    const r = await run(['solve', tri, '--rhs', b, '--x0', x0, '--exact', exact, '--max-iters', '0', '--json', '-']);
    expect(r.code).toBe(1); // the iteration budget of 0 is spent: unsolved
    const doc = JSON.parse(r.out);
    expect(doc.iterations).toBe(0);
    expect(doc.exactError.file).toBe(exact);
    expect(doc.exactError.norm2).toBe(5);
    expect(doc.exactError.relative2).toBeCloseTo(5 / Math.sqrt(35), 15);
    const text = await run(['solve', tri, '--rhs', b, '--x0', x0, '--exact', exact, '--max-iters', '0']);
    expect(text.out).toMatch(/error {10}vs .*exact-hand\.mtx: ‖x − x_exact‖ = 5, ‖x − x_exact‖\/‖x_exact‖ = 0\.845/);
  });

  it('--exact ones with b = A·1 agrees with the built-in error against ones', async () => {
    const ones = writeArray('ones.mtx', [new Array(N).fill(1)]);
    const doc = JSON.parse((await run(['solve', tri, '--exact', ones, '--precond', 'jacobi', '--json', '-'])).out);
    expect(doc.exactError.relative2).toBeCloseTo(doc.errorVsOnes.relative2, 14);
    expect(doc.exactError.norm2).toBeCloseTo(doc.errorVsOnes.relative2 * Math.sqrt(N), 14);
  });
});

describe('solve with several right-hand sides: one setup', () => {
  it('per-column results equal single solves; the setup is counted once; amortized cost; n×k solution', async () => {
    const es = [solution(3), solution(4), solution(5)];
    const bvs = es.map(multiply);
    const b1 = writeArray('b1.mtx', [bvs[0]]);
    const b23 = writeArray('b23.mtx', [bvs[1], bvs[2]]);
    const exact = writeArray('exact3.mtx', es);
    const out = join(dir, 'x3.mtx');
    const common = ['--precond', 'block-ilu0', '--block-size', '2', '--rtol', '1e-9'];
    const r = await run(['solve', tri, ...common, '--rhs', b1, '--rhs', b23, '--exact', exact, '--write-solution', out, '--json', '-']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out);
    // eslint-disable-next-line @typescript-eslint/no-explicit-any
    const singles: any[] = [];
    for (const [j, bv] of bvs.entries()) {
      const f = writeArray(`single${j}.mtx`, [bv]);
      singles.push(JSON.parse((await run(['solve', tri, ...common, '--rhs', f, '--json', '-'])).out));
    }
    expect(doc.rightHandSides).toHaveLength(3);
    expect(doc.rightHandSides.map((h: { rhs: unknown }) => h.rhs)).toEqual([
      { source: 'file', file: b1 }, { source: 'file', file: b23, column: 1 }, { source: 'file', file: b23, column: 2 }]);
    doc.rightHandSides.forEach((h: typeof doc, j: number) => {
      expect(h.index).toBe(j + 1);
      expect(h.iterations).toBe(singles[j].iterations);
      expect(h.history).toEqual(singles[j].history);
      expect(h.work.solve).toEqual(singles[j].work.solve);
      expect(h.exactError.column).toBe(j + 1);
      expect(h.exactError.relative2).toBeLessThan(1e-7);
      if (j === 0) {
        expect(h.work.setup).toEqual(singles[0].work.setup);
        expect(h.setupReused).toBeUndefined();
      } else {
        expect(h.work.setup.flops).toBe(0);
        expect(h.timing.setupSeconds).toBe(0);
        expect(h.setupReused).toBe(true);
      }
    });
    // the top level is the first right-hand side's result
    expect(doc.iterations).toBe(singles[0].iterations);
    const am = doc.amortized;
    expect(am.rightHandSides).toBe(3);
    expect(am.setupOk).toBe(true);
    expect(am.work.setup).toEqual(singles[0].work.setup);
    const solveFlops = singles.reduce((t, s) => t + s.work.solve.flops, 0);
    expect(am.work.solve.flops).toBe(solveFlops);
    expect(am.work.perRightHandSide.flops).toBeCloseTo((singles[0].work.setup.flops + solveFlops) / 3, 9);
    expect(am.totalSeconds).toBeCloseTo(am.setupSeconds + am.solveSeconds, 12);
    expect(am.secondsPerRightHandSide).toBeCloseTo(am.totalSeconds / 3, 12);
    // the n×3 solution, each column's residual recomputed here
    expect(doc.solution).toEqual({ file: out, columns: 3 });
    const xs = parseArray(out);
    expect(xs).toHaveLength(3);
    xs.forEach((x, j) => {
      const Ax = multiply(x);
      expect(norm(bvs[j].map((v, i) => v - Ax[i])) / norm(bvs[j])).toBeLessThan(1e-9);
    });
    // terminal summary: one line per right-hand side and the amortized cost
    const text = await run(['solve', tri, ...common, '--rhs', b1, '--rhs', b23, '--repeats', '2']);
    expect(text.code).toBe(0);
    expect(text.out).toMatch(/\n {2}setup {10}once, /);
    expect(text.out).toMatch(/\n {2}rhs 1 {10}.*b1\.mtx: solved/);
    expect(text.out).toMatch(/\n {2}rhs 3 {10}.*b23\.mtx column 2: solved/);
    expect(text.out).toMatch(/\n {2}amortized {6}\(setup \+ 3 solves\) \/ 3 = /);
    expect(text.out).toMatch(/\n {2}repeats {8}2 timed/);
    expect(text.out).not.toMatch(/warning/);
  });

  it('--x0 with one column serves every right-hand side; k columns one each', async () => {
    const es = [solution(6), solution(7)];
    const b = writeArray('b-two.mtx', es.map(multiply));
    const shared = writeArray('x0-shared.mtx', [es[0]]);
    const each = writeArray('x0-each.mtx', es);
    const one = JSON.parse((await run(['solve', tri, '--rhs', b, '--x0', shared, '--json', '-'])).out);
    expect(one.rightHandSides[0].iterations).toBe(0);
    expect(one.rightHandSides[1].iterations).toBeGreaterThan(0);
    const two = JSON.parse((await run(['solve', tri, '--rhs', b, '--x0', each, '--json', '-'])).out);
    expect(two.rightHandSides.map((h: { iterations: number }) => h.iterations)).toEqual([0, 0]);
    expect(two.initialGuess).toEqual({ file: each, columns: 2 });
  });
});

describe('solve: bad vector inputs are one-line errors, exit 2, nothing written', () => {
  it('wrong length, unreadable file, wrong column counts, coordinate matrices, clashing outputs', async () => {
    const good = writeArray('b-good.mtx', [multiply(solution(8))]);
    const two = writeArray('b-2cols.mtx', [multiply(solution(8)), multiply(solution(9))]);
    const short = writeArray('short.mtx', [new Array(N - 1).fill(1)]);
    const three = writeArray('three.mtx', [solution(1), solution(2), solution(3)]);
    const coord = join(dir, 'coord2.mtx');
    writeFileSync(coord, `%%MatrixMarket matrix coordinate real general\n${N} 2 1\n1 2 1\n`);
    const out = join(dir, 'never-x.mtx');
    const json = join(dir, 'never.json');
    const cases: Array<[string[], RegExp]> = [
      [['--rhs', good, '--x0', short], /^slabbench: .*short\.mtx: initial guess has length 11, expected 12 \(the matrix size\)\n$/],
      [['--rhs', short], /^slabbench: .*short\.mtx: right-hand side has length 11, expected 12 \(the matrix size\)\n$/],
      [['--rhs', good, '--exact', short], /^slabbench: .*short\.mtx: exact solution has length 11, expected 12/],
      [['--rhs', good, '--x0', join(dir, 'missing.mtx')], /^slabbench: .*missing\.mtx/],
      [['--rhs', two, '--x0', three], /^slabbench: .*three\.mtx: initial guess: the array has 3 columns, expected 1 \(one guess for every right-hand side\) or 2 \(one per right-hand side\)\n$/],
      [['--rhs', two, '--exact', good], /^slabbench: .*b-good\.mtx: exact solution: the file has 1 column, expected 2 \(one per right-hand side\)\n$/],
      [['--rhs', coord], /^slabbench: .*coord2\.mtx: expected a vector, an n×1 matrix or an n×k array \(dense columns\), found a 12×2 coordinate matrix\n$/],
      [['--rhs', good, '--write-solution', join(dir, 'no-such-dir', 'x.mtx')], /^slabbench: option --write-solution: cannot write ".*x\.mtx": folder .*no-such-dir does not exist\n$/],
      [['--rhs', good, '--write-solution', json, '--json', json], /^slabbench: option --write-solution: names the same file as --json/],
      [['--rhs', good, '--write-solution', '-'], /^slabbench: option --write-solution: expected a file name/],
    ];
    for (const [args, message] of cases) {
      const extra = args.includes('--write-solution') ? [] : ['--write-solution', out];
      const withJson = args.includes('--json') ? [] : ['--json', json];
      const r = await run(['solve', tri, ...args, ...extra, ...withJson]);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err, args.join(' ')).toMatch(message);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.out).toBe('');
      expect(existsSync(out)).toBe(false);
      expect(existsSync(json)).toBe(false);
    }
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });
});
