import { describe, it, expect } from 'vitest';
import { registerEstimate } from '../../src/cli/estimate.js';
import { estimateMemory, type MemoryEstimate } from '../../src/run/estimate.js';
import { runCommand } from '../report/cli-harness.js';
import { fileURLToPath } from 'node:url';
import { estimateMatrix, type MatrixEstimate } from '../../src/run/estimate-pattern.js';
import { preconditionerNames } from '../../src/precond/registry.js';
import { loadSystem } from '../../src/sparse/load.js';

const run = (args: string[]) => runCommand(registerEstimate, ['estimate', ...args]);

describe('slabbench estimate', () => {
  it('prints all-at-once beside one slab in human units for a production-size 3D+t case', async () => {
    const r = await run(['--dim', '3', '--order', '3', '--equations', '5', '--elements', '1e6', '--slabs', '100']);
    expect(r.code).toBe(0);
    expect(r.stderr).toBe('');
    expect(r.stdout).toContain('blocks of 175×175');
    const jac = r.stdout.split('\n').find((l) => l.trim().startsWith('Jacobian (BSR)'))!;
    // 6·10⁶ blocks · 175² · 8 B ≈ 1.47 TB (SI units) at once, a hundredth per slab
    expect(jac).toMatch(/1\.47 TB\s+14\.7 GB$/);
    expect(r.stdout).toMatch(/gmres\s+43\.4 GB\s+434 MB/);
  });

  it('--json is machine-clean and equals the library result', async () => {
    const r = await run(['--dim', '2', '--order', '2', '--cells', '16', '--layers', '2', '--slabs', '4', '--restart', '40', '--json']);
    expect(r.code).toBe(0);
    const parsed = JSON.parse(r.stdout) as MemoryEstimate;
    expect(parsed).toEqual(estimateMemory({ spaceDim: 2, order: 2, equations: 1, cells: 16, layersPerSlab: 2, periodic: false, slabs: 4, restart: 40 }));
    expect(parsed.blockCountSource).toBe('structured-mesh');
    const d = await run(['--dim', '2', '--order', '2', '--cells', '16', '--slabs', '4', '--restart', '40', '--deflate', '7', '--json']);
    expect(d.code, d.stderr).toBe(0);
    const pd = JSON.parse(d.stdout) as MemoryEstimate;
    expect(pd).toEqual(estimateMemory({ spaceDim: 2, order: 2, equations: 1, cells: 16, layersPerSlab: 1, periodic: false, slabs: 4, restart: 40, deflate: 7 }));
    expect(pd.deflate).toBe(7);
    expect(pd.allAtOnce.krylov['gcro-dr']).toBe((40 + 1 + 4 * 7) * pd.allAtOnce.unknowns * 8);
  });

  it('takes one cell count per axis', async () => {
    const r = await run(['--dim', '2', '--order', '1', '--equations', '1', '--cells', '12,3', '--slabs', '3', '--json']);
    expect(r.code).toBe(0);
    const e = JSON.parse(r.stdout) as MemoryEstimate;
    expect(e.allAtOnce.elements).toBe(12 * 3 * 3 * 6);
    const bad = await run(['--dim', '2', '--order', '1', '--cells', '4,4,4']);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/--cells/);
  });

  it('rejects bad options with one line naming the option', async () => {
    const bad: Array<[string[], RegExp]> = [
      [['--dim', '4', '--order', '1', '--elements', '10'], /--dim/],
      [['--dim', '2', '--order', 'x', '--elements', '10'], /--order/],
      [['--dim', '2', '--order', '1', '--elements', '1.5'], /--elements/],
      [['--dim', '2', '--order', '1'], /--elements N .* --cells C/],
      [['--dim', '2', '--order', '1', '--elements', '10', '--cells', '3'], /--elements N .* --cells C/],
      [['--dim', '2', '--order', '1', '--elements', '10', '--layers', '2'], /--layers/],
      [['--dim', '2', '--order', '1', '--elements', '10', '--blocks', '5'], /--blocks/],
      [['--dim', '2', '--order', '1', '--elements', '3', '--slabs', '4'], /--elements/],
      [['--dim', '2', '--order', '1', '--elements', '10', '--restart', '0'], /--restart/],
      [['--dim', '2', '--order', '1', '--elements', '10', '--restart', '8', '--deflate', '8'], /option --deflate: expected an integer from 0 to restart − 1 = 7, got 8/],
      [['--dim', '2', '--order', '1', '--elements', '10', '--deflate', '-1'], /--deflate/],
    ];
    for (const [args, re] of bad) {
      const r = await run(args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr.trim().split('\n'), args.join(' ')).toHaveLength(1);
      expect(r.stderr, args.join(' ')).toMatch(re);
      expect(r.stdout).toBe('');
    }
  });

  it('projects every registered preconditioner on a matrix file (JSON equals the library on the loaded matrix)', async () => {
    const file = fileURLToPath(new URL('../../matrices/ci/ci-duct.mtx.gz', import.meta.url));
    const r = await run([file, '--json']);
    expect(r.code, r.stderr).toBe(0);
    const e = JSON.parse(r.stdout) as MatrixEstimate;
    expect(Object.keys(e.preconditioners)).toEqual(preconditionerNames());
    const sys = await loadSystem(file);
    const lib = estimateMatrix(sys, preconditionerNames(), 30, sys);
    expect(e).toEqual(lib);
    expect(e.krylov['gmres-dr']).toBe((30 + 10 + 2) * e.n * 8); // default deflate min(10, ⌊30/3⌋) = 10
    expect(e.preconditioners.air).toMatchObject({ source: 'measured by setup' });
    expect(e.preconditioners['block-ilu0']).toMatchObject({ source: 'counted' });
    // this committed case's layout has no modes: p-multigrid is refused, saying why
    expect((e.preconditioners['p-multigrid'] as { refused: string }).refused).toMatch(/modes/);
    const text = await run([file]);
    expect(text.code).toBe(0);
    expect(text.stdout).toMatch(/air \(measured by setup\)/);
    expect(text.stdout).toMatch(/p-multigrid\s+not projected/);
  });

  it('refuses mesh-size options beside a matrix file, and asks for one or the other', async () => {
    const file = fileURLToPath(new URL('../../matrices/ci/ci-duct.mtx.gz', import.meta.url));
    for (const [args, re] of [[[file, '--dim', '2'], /--dim/], [[file, '--slabs', '2'], /--slabs/], [['--cells', '4'], /matrix file .* --dim/], [['--dim', '1', '--order', '1', '--cells', '4', '--layout', 'x.json'], /--layout/]] as Array<[string[], RegExp]>) {
      const r = await run(args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr.trim().split('\n'), args.join(' ')).toHaveLength(1);
      expect(r.stderr).toMatch(re);
    }
  });

  it('names what mesh sizes cannot project, and why', async () => {
    const r = await run(['--dim', '2', '--order', '2', '--cells', '8', '--slabs', '2', '--json']);
    const e = JSON.parse(r.stdout) as MemoryEstimate;
    expect(Object.keys(e.allAtOnce.notProjected).sort()).toEqual(['air', 'block-iluk', 'direct', 'schwarz']);
    expect(e.allAtOnce.notProjected.air).toMatch(/values/);
    expect(e.allAtOnce.preconditioners['p-multigrid']!.total).toBeGreaterThan(0);
    // degree 0 has no coarser level: p-multigrid is not projected then
    const p0 = JSON.parse((await run(['--dim', '2', '--order', '0', '--cells', '8', '--json'])).stdout) as MemoryEstimate;
    expect(p0.allAtOnce.notProjected['p-multigrid']).toMatch(/degree 0/);
  });

  it('has help with examples', async () => {
    const r = await run(['--help']);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('Examples:');
    expect(r.stdout).toContain('--slabs');
  });
});
