import { describe, expect, it, afterAll } from 'vitest';
import { spawn } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { readResults } from '../../src/run/results.js';
import { readHistory } from '../../src/run/history.js';
import { demoSuitePath } from '../../src/cli/sweep.js';
import { tempDir, writeTinySuite } from '../run/helpers.js';
import { ciSuite, runCli } from './cli-helpers.js';

const CI_DIR = fileURLToPath(new URL('../../matrices/ci/', import.meta.url));

describe('slabbench sweep (CLI, real solver stack)', () => {
  const t = tempDir('slabbench-cli-sweep-');
  afterAll(() => t.cleanup());

  it('runs a suite, prints ranked tables, writes results, CSV, history and the HTML report', async () => {
    const suite = ciSuite(t.dir, 'suite.json', [
      { name: 'gmres-bjacobi', krylov: 'gmres', restart: 20, preconditioner: 'block-jacobi' },
      { name: 'gmres-bgs-sym', krylov: 'gmres', restart: 20, preconditioner: 'block-gs', sweep: 'symmetric' },
    ]);
    const out = join(t.dir, 'out');
    const r = await runCli(['sweep', suite, '--out', out]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('ci-duct');
    // A winner, or a first place shared within the noise this sweep measured.
    expect(r.stdout).toMatch(/★ winner: |first place shared, no winner: /);
    expect(r.stdout).toMatch(/timing: warm-up \+ 3 timed repeats per pair, median shown/);
    const doc = readResults(join(out, 'results.json'));
    expect(doc.runs.map((x) => `${x.matrix}/${x.recipe}`)).toEqual([
      'ci-duct/gmres-bjacobi', 'ci-duct/gmres-bgs-sym', 'ci-corridor/gmres-bjacobi', 'ci-corridor/gmres-bgs-sym']);
    expect(doc.runs.every((x) => x.result?.converged)).toBe(true);
    // Layout sidecars beside the .mtx.gz files give block size and slabs.
    expect(doc.matrices.map((m) => [m.name, m.bs, m.nSlabs])).toEqual([['ci-duct', 6, 3], ['ci-corridor', 4, 2]]);
    expect(readFileSync(join(out, 'results.csv'), 'utf8').trim().split('\n')).toHaveLength(5);
    expect(readHistory(join(out, 'history.jsonl'))).toHaveLength(1);
    expect(existsSync(join(out, 'report.html'))).toBe(true);
  });

  it('--json prints only a JSON summary on stdout', async () => {
    const suite = ciSuite(t.dir, 'one.json', [{ name: 'gmres-bilu0', krylov: 'gmres', preconditioner: 'block-ilu0' }], ['ci-duct']);
    const r = await runCli(['sweep', suite, '--out', join(t.dir, 'json-out'), '--json', '--no-report']);
    expect(r.code).toBe(0);
    const summary = JSON.parse(r.stdout);
    expect(summary).toMatchObject({ status: 'complete', runs: 1, converged: 1, notConverged: 0, errors: 0, winners: [{ matrix: 'ci-duct', recipe: 'gmres-bilu0' }] });
    expect(summary.files.results).toBe(join(t.dir, 'json-out', 'results.json'));
  });

  it('bad input exits 2 with one line naming the field or option', async () => {
    const p = join(t.dir, 'bad.json');
    writeFileSync(p, JSON.stringify({ schema: 'slabbench-suite/1', matrices: [{ name: 'x', file: join(CI_DIR, 'ci-duct.mtx.gz') }], recipes: [{ name: 'r', restart: 0 }] }));
    let r = await runCli(['sweep', p, '--out', join(t.dir, 'bad-out')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(new RegExp(`^slabbench: ${p.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: recipes\\[0\\]\\.restart: .+\\n$`));
    r = await runCli(['sweep', p, '--shard', '3/2']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('slabbench: option --shard: K must be from 1 to 2 (K is 1-based), got 3\n');
    r = await runCli(['sweep', p, '--jobs', '0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('option --jobs: expected an integer from 1 to 256, got "0"');
    r = await runCli(['sweep', join(t.dir, 'missing.json')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/missing\.json: no such suite file\n$/);
  });

  it('--help shows examples and exit codes; the default suite is the shipped demo suite', async () => {
    const r = await runCli(['sweep', '--help']);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('Examples:');
    expect(r.stdout).toContain('130 interrupted');
    expect(demoSuitePath()).toBe(fileURLToPath(new URL('../../matrices/suite.json', import.meta.url)));
    expect(existsSync(demoSuitePath())).toBe(true);
  });

  it('Ctrl-C (SIGINT) keeps the finished runs on disk and exits 130', async () => {
    const dir = tempDir();
    try {
      const suite = writeTinySuite(dir.dir, { extraRecipes: [{ name: 'hang', krylov: 'none', preconditioner: 'jacobi' }] });
      const out = join(dir.dir, 'o');
      const release = join(dir.dir, 'release');
      const tsx = pathToFileURL(createRequire(import.meta.url).resolve('tsx')).href;
      const bin = fileURLToPath(new URL('./fixtures/sweep-bin.ts', import.meta.url));
      const child = spawn(process.execPath, ['--import', tsx, bin, 'sweep', suite, '--out', out, '--only-matrix', 'alpha', '--no-report', '--quiet'], {
        env: { ...process.env, SLABBENCH_TEST_RELEASE: release }, stdio: ['ignore', 'pipe', 'pipe'],
      });
      let stderr = '';
      child.stderr.on('data', (d) => { stderr += String(d); });
      const exited = new Promise<number | null>((res) => child.on('exit', (code) => res(code)));
      // Wait (no timing assertion) until the two quick runs are on disk; the third spins.
      const results = join(out, 'results.json');
      for (let i = 0; i < 400; i++) {
        if (existsSync(results) && readResults(results).runs.length === 2) break;
        await new Promise((r) => setTimeout(r, 100));
      }
      child.kill('SIGINT');
      const code = await exited;
      writeFileSync(release, ''); // nothing should be waiting any more; harmless if so
      expect(stderr).toContain('slabbench: interrupted: 2 finished runs kept in');
      expect(code).toBe(130);
      const doc = readResults(results);
      expect(doc.status).toBe('interrupted');
      expect(doc.runs.map((x) => x.recipe)).toEqual(['rich-1', 'rich-slow']);
      expect(existsSync(join(out, 'history.jsonl'))).toBe(false);
    } finally {
      dir.cleanup();
    }
  });
});
