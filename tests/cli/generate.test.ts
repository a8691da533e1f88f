import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, existsSync, writeFileSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli } from './cli-helpers.js';
import { loadSystem } from '../../src/sparse/load.js';

let dir: string;
beforeAll(() => { dir = mkdtempSync(join(tmpdir(), 'slabbench-cli-gen-')); });
afterAll(() => { rmSync(dir, { recursive: true, force: true }); });

describe('slabbench generate', () => {
  it('writes the three files; the layout holds block size, slab offsets and the parameters', async () => {
    const r = await runCli(['generate', '--physics', 'acoustics', '--dim', '1', '--order', '2', '--cells', '6', '--slabs', '3',
      '--mean-flow', '0.25', '--periodic', 'x', '--name', 'duct', '--out', dir]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^duct: acoustics 1D\+t, order 2, 36 elements in 3 slabs, block size 12, n = 432/);
    for (const f of ['duct.mtx', 'duct.rhs.mtx', 'duct.layout.json']) expect(existsSync(join(dir, f))).toBe(true);
    const layout = JSON.parse(readFileSync(join(dir, 'duct.layout.json'), 'utf8'));
    expect(layout.blockSize).toBe(12);
    expect(layout.slabOffsets).toEqual([0, 12, 24, 36]);
    expect(layout.provenance).toMatchObject({ physics: 'acoustics', dim: 1, order: 2, nElements: 36, nSlabs: 3 });
    expect(layout.provenance.params).toMatchObject({ cells: [6], slabs: 3, periodic: [true], meanFlow: [0.25], cfl: 0.5 });
    // The loader picks the layout sidecar up.
    const sys = await loadSystem(join(dir, 'duct.mtx'));
    expect(sys.bs).toBe(12);
    expect(sys.blockSizeSource).toBe('layout');
    expect(Array.from(sys.slabOffsets!)).toEqual([0, 12, 24, 36]);
  });

  it('--gzip writes NAME.mtx.gz that reads back as the plain file; a cycle-free upwind case gets a warning', async () => {
    const args = ['generate', '--physics', 'advection', '--dim', '2', '--cells', '3', '--slabs', '2', '--velocity', '1', '--velocity', '0.5', '--out', dir];
    const plain = await runCli([...args, '--name', 'plain']);
    const packed = await runCli([...args, '--name', 'packed', '--gzip']);
    expect(packed.code).toBe(0);
    expect(existsSync(join(dir, 'packed.mtx.gz'))).toBe(true);
    expect(readFileSync(join(dir, 'packed.mtx.gz')).subarray(0, 2)).toEqual(Buffer.from([0x1f, 0x8b]));
    const a = await loadSystem(join(dir, 'plain.mtx')), b = await loadSystem(join(dir, 'packed.mtx.gz'));
    expect(Array.from(b.bsr.values)).toEqual(Array.from(a.bsr.values));
    expect(b.bs).toBe(a.bs); // the layout sidecar is found beside the .mtx.gz
    // constant-velocity upwind advection without periodic sides: no cycles in the nonzero block graph
    for (const r of [plain, packed]) expect(r.stderr).toMatch(/warning: (plain|packed) is block triangular under a permutation/);
    // periodic acoustics has waves both ways: no warning
    const ac = await runCli(['generate', '--physics', 'acoustics', '--dim', '1', '--cells', '4', '--slabs', '2', '--periodic', 'x', '--name', 'ac', '--out', dir, '--json']);
    expect(ac.stderr).toBe('');
    expect((JSON.parse(ac.stdout) as { cases: { triangularUnderPermutation: boolean }[] }).cases[0]!.triangularUnderPermutation).toBe(false);
  });

  it('--json prints only a machine-readable summary', async () => {
    const r = await runCli(['generate', '--physics', 'advection', '--dim', '2', '--cells', '2', '--slabs', '2',
      '--velocity', '1', '--velocity', '-0.5', '--ordering', 'downstream', '--out', dir, '--json']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.schema).toBe('slabbench-generate/1');
    expect(doc.cases).toHaveLength(1);
    expect(doc.cases[0]).toMatchObject({ name: 'advection-2d-p1', physics: 'advection', dim: 2, order: 1, nElements: 48, blockSize: 4, nSlabs: 2, n: 192 });
  });

  it.each([
    [['--physics', 'advection', '--dim', '3', '--order', '4'], 'slabbench: option --order: expected an integer 0..3 for 3D+t, got 4\n'],
    [['--physics', 'advection', '--cells', '0'], 'slabbench: option --cells: expected a positive integer number of cells (entry 0), got 0\n'],
    [['--physics', 'advection', '--cfl', '0'], 'slabbench: option --cfl: expected a number > 0, got 0\n'],
    [['--physics', 'advection', '--dim', '1', '--initial', 'exp(x'], /^slabbench: option --initial: expression 'exp\(x' does not parse: .*\n$/],
    [['--physics', 'advection', '--dim', '1', '--velocity', 'log(x - 1)'], /^slabbench: option --velocity \(entry 1\): expression 'log\(x - 1\)' evaluates to (NaN|a non-real value) at/],
    [['--physics', 'advection', '--periodic', 'q'], "slabbench: option --periodic: expected letters from 'xy', 'all' or 'none', got 'q'\n"],
    [['--physics', 'burgers', '--sound-speed', '2'], 'slabbench: option --sound-speed: does not apply to physics burgers (it belongs to acoustics)\n'],
    [['--order', '2'], /^slabbench: option --physics: required/],
    [['--case', 'duct-pulse', '--order', '2'], 'slabbench: option --order: cannot be combined with --case (the case file holds every parameter)\n'],
    [['--case', 'no-such-case'], /^slabbench: option --case: no generator case 'no-such-case' in .*suite\.json \(cases: duct-pulse, stirred-tank/],
  ])('bad input %j → one-line error, exit 2, nothing written', async (args, expected) => {
    const out = mkdtempSync(join(dir, 'bad-'));
    const r = await runCli(['generate', ...args, '--out', out]);
    expect(r.code).toBe(2);
    if (typeof expected === 'string') expect(r.stderr).toBe(expected);
    else expect(r.stderr).toMatch(expected);
    expect(r.stdout).toBe('');
    expect(readdirSync(out)).toEqual([]);
  });

  it('--case and --all-cases build the cases of a suite file', async () => {
    const suite = join(dir, 'suite.json');
    writeFileSync(suite, JSON.stringify({
      schema: 'slabbench-suite/1', description: 'test', recipes: [],
      matrices: [
        { name: 'pipe', note: 'invented scenario', generate: { physics: 'advection', dim: 1, cells: 4, slabs: 2 } },
        { name: 'file-entry', file: 'A.mtx' },
        { name: 'hall', note: 'invented scenario', generate: { physics: 'advection-diffusion', dim: 2, cells: 2, slabs: 1 } },
      ],
    }));
    const one = await runCli(['generate', '--case', 'hall', '--suite', suite, '--out', join(dir, 'one')]);
    expect(one.code).toBe(0);
    expect(readdirSync(join(dir, 'one')).sort()).toEqual(['hall.layout.json', 'hall.mtx', 'hall.rhs.mtx']);
    const all = await runCli(['generate', '--all-cases', '--suite', suite, '--out', join(dir, 'all'), '--json']);
    expect(all.code).toBe(0);
    expect(JSON.parse(all.stdout).cases.map((c: { name: string }) => c.name)).toEqual(['pipe', 'hall']);
    expect(readdirSync(join(dir, 'all')).length).toBe(6);
  });
});

describe('slabbench refine', () => {
  it('prints the error table with observed orders', async () => {
    const r = await runCli(['refine', '--physics', 'advection', '--dim', '1', '--order', '1', '--sizes', '8,16,32']);
    expect(r.code).toBe(0);
    const lines = r.stdout.trim().split('\n');
    expect(lines[0]).toMatch(/^refinement study: advection 1D\+t, order 1, final time/);
    expect(lines[1]).toMatch(/cells\s+h\s+slabs\s+elements\s+unknowns\s+L2 error\s+order\s+seconds\s+solver/);
    expect(lines).toHaveLength(5);
    const orders = lines.slice(3).map((l) => Number(l.trim().split(/\s+/)[6]));
    for (const o of orders) expect(o).toBeGreaterThan(1.5); // ≥ p + 1/2 (Johnson & Pitkäranta 1986)
  });
  it('--json and the errors for cases without an exact solution', async () => {
    const r = await runCli(['refine', '--physics', 'acoustics', '--dim', '1', '--periodic', 'x', '--sizes', '4,8', '--json']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.schema).toBe('slabbench-refine/1');
    expect(doc.rows).toHaveLength(2);
    expect(doc.rows[1].observedOrder).toBeGreaterThan(1.5);
    const b = await runCli(['refine', '--physics', 'burgers', '--dim', '1', '--sizes', '4,8']);
    expect(b.code).toBe(2);
    expect(b.stderr).toMatch(/^slabbench: refinement study: burgers is nonlinear/);
    const v = await runCli(['refine', '--physics', 'advection', '--dim', '1', '--velocity', '1+x', '--sizes', '4,8']);
    expect(v.code).toBe(2);
    expect(v.stderr).toMatch(/no exact solution is known/);
    const s = await runCli(['refine', '--physics', 'advection', '--sizes', '8,4']);
    expect(s.stderr).toBe("slabbench: option --sizes: sizes must increase, got '8,4'\n");
  });
});

describe('slabbench generate: front-aligned mesh map', () => {
  it('writes the element quality to the layout and inspect shows it; --help has an example', async () => {
    const r = await runCli(['generate', '--physics', 'advection', '--dim', '1', '--cells', '64', '--aspect-ratio', '1000', '--front-grading', '2',
      '--name', 'front', '--out', dir]);
    expect(r.code).toBe(0);
    const layout = JSON.parse(readFileSync(join(dir, 'front.layout.json'), 'utf8'));
    expect(layout.elementQuality.aspectRatio.max).toBeGreaterThan(900);
    expect(layout.provenance.params).toMatchObject({ aspectRatio: 1000, frontGrading: 2, frontDirection: 'align', frontSpeed: 'align', frontPosition: 'center' });
    const ins = await runCli(['inspect', join(dir, 'front.mtx')]);
    expect(ins.stdout).toMatch(/\n {2}elements \(layout\) aspect ratio min [\d.]+, median [\d.]+, max (9\d\d|1000)(\.\d+)? \(longest edge \/ smallest altitude, regular simplex = 1\); smallest det J [\d.e-]+\n/);
    const json = JSON.parse((await runCli(['inspect', join(dir, 'front.mtx'), '--json'])).stdout);
    expect(json.elementQuality).toEqual(layout.elementQuality);
    const help = await runCli(['generate', '--help']);
    expect(help.stdout).toContain('slabbench generate --physics advection --dim 1 --cells 64 --aspect-ratio 1000 --front-grading 2 --name front');
  });

  it('an inverting map is refused in one line naming the options and the element, and nothing is written', async () => {
    const out = join(dir, 'inverted');
    const r = await runCli(['generate', '--physics', 'advection', '--dim', '2', '--cells', '30,4', '--slabs', '2', '--slab-thickness', '0.02',
      '--velocity', '1.5', '--velocity', '0', '--jitter', '0.45', '--aspect-ratio', '1000', '--front-grading', '2', '--front-position', '0.7', '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^slabbench: generator parameter jitter with generator parameter aspectRatio: element \d+ \(slab \d\) would be inverted \(det J -[^)]+\), vertices \(x…, t\) .*; lower the jitter, the aspect ratio or the grading\n$/);
    expect(existsSync(out) ? readdirSync(out) : []).toEqual([]);
  });

  it('a front option without --aspect-ratio has no effect and is refused', async () => {
    const r = await runCli(['generate', '--physics', 'advection', '--dim', '1', '--front-grading', '1.5', '--out', dir]);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('slabbench: option --front-grading: has no effect without option --aspect-ratio (the target aspect ratio switches the front-aligned mesh map on)\n');
  });
});
