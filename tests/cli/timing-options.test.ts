import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ciSuite, runCli } from './cli-helpers.js';

const CI_DIR = fileURLToPath(new URL('../../matrices/ci/', import.meta.url));

describe('timing protocol options (sweep, solve, check)', () => {
  const dir = mkdtempSync(join(tmpdir(), 'slabbench-timing-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const suite = ciSuite(dir, 's.json', [{ name: 'bjac', krylov: 'gmres', restart: 20, preconditioner: 'block-jacobi' }], ['ci-duct']);

  it('sweep rejects bad values with one line naming the option (before any run)', async () => {
    const cases: Array<[string[], string]> = [
      [['--repeats', '0'], 'option --repeats: expected an integer from 1 to 100, got "0"'],
      [['--repeats', '2.5'], 'option --repeats: expected an integer from 1 to 100, got "2.5"'],
      [['--rank-by', 'speed'], 'option --rank-by: expected one of time, modeled, work, iterations, got "speed"'],
      [['--target-bandwidth', '0'], 'option --target-bandwidth: expected a number > 0 (and at most 1e6), got "0"'],
      [['--target-flops', '-3'], 'option --target-flops: expected a number > 0 (and at most 1e6), got "-3"'],
      [['--label', ''], 'option --label: expected 1 to 200 printable characters, got ""'],
    ];
    for (const [args, msg] of cases) {
      const r = await runCli(['sweep', suite, '--out', join(dir, 'never'), ...args]);
      expect(r.code).toBe(2);
      expect(r.stderr).toBe(`slabbench: ${msg}\n`);
    }
  });

  it('sweep --json names the first-place set per matrix and records the protocol, probe and targets', async () => {
    const out = join(dir, 'o');
    const r = await runCli(['sweep', suite, '--out', out, '--json', '--no-report', '--repeats', '2', '--no-warmup',
      '--rank-by', 'iterations', '--target-bandwidth', '100', '--label', 'my-change']);
    expect(r.code).toBe(0);
    const s = JSON.parse(r.stdout);
    expect(s.rankBy).toBe('iterations');
    expect(s.winners).toEqual([{ matrix: 'ci-duct', recipe: 'bjac', firstPlace: ['bjac'], partial: false }]);
    expect(s.machine.bandwidthGBs).toBeGreaterThan(0);
    expect(s.model).toMatchObject({ bandwidthGBs: 100, bandwidthFrom: 'target', flopRateFrom: 'probe' });
    const doc = JSON.parse(readFileSync(join(out, 'results.json'), 'utf8'));
    expect(doc.parameters).toMatchObject({ repeats: 2, warmup: false, rankBy: 'iterations', target: { bandwidthGBs: 100 }, gc: true });
    expect(doc.runs[0].repeats).toMatchObject({ count: 2, warmup: false, consistent: true });
    const h = readFileSync(join(out, 'history.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(h[0]).toMatchObject({ label: 'my-change', labelFrom: 'option' });
  });

  it('solve --repeats reports every repeat and the median; bad values exit 2', async () => {
    const mtx = join(CI_DIR, 'ci-duct.mtx.gz');
    let r = await runCli(['solve', mtx, '--precond', 'block-jacobi', '--repeats', '3', '--json', '-']);
    expect(r.code).toBe(0);
    const rep = JSON.parse(r.stdout).repeats;
    expect(rep).toMatchObject({ count: 3, warmup: true, consistent: true });
    expect(rep.solveSeconds).toHaveLength(3);
    r = await runCli(['solve', mtx, '--no-warmup', '--json', '-']);
    expect(JSON.parse(r.stdout).repeats).toMatchObject({ count: 1, warmup: false });
    r = await runCli(['solve', mtx, '--repeats', 'x']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('slabbench: option --repeats: expected an integer from 1 to 100, got "x"\n');
  });

  it('check --time and --time-ratio exclude each other; --work-percent is validated', async () => {
    const res = join(dir, 'o', 'results.json');
    let r = await runCli(['check', res, '--baseline', res, '--time', '--time-ratio', '2']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/option '--time' cannot be used with option '--time-ratio/);
    r = await runCli(['check', res, '--baseline', res, '--work-percent', '-1']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('slabbench: option --work-percent: expected a number ≥ 0, got "-1"\n');
    r = await runCli(['check', res, '--baseline', res, '--time']);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/time compared as medians of repeats; timing noise: baseline/);
  });
});
