import { describe, expect, it, afterAll } from 'vitest';
import { existsSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { runSweep } from '../../src/run/sweep.js';
import { readSuite } from '../../src/run/suite.js';
import { readResults, resultsJson } from '../../src/run/results.js';
import * as solverDeps from '../../src/run/solver-deps.js';
import { parseRecipe } from '../../src/solvers/recipe.js';
import { tempDir } from '../run/helpers.js';
import { wellFormed } from '../run/xml-check.js';
import { ciSuite, runCli } from './cli-helpers.js';

const parsers = { parseRecipe, parseGeneratorParams: () => { throw new Error('no generator cases here'); } };
const noBuilder = { writeGeneratedCase: () => { throw new Error('no generator cases here'); } };

describe('slabbench check (CLI)', () => {
  const t = tempDir('slabbench-cli-check-');
  afterAll(() => t.cleanup());

  /** A real sweep (in this thread) of ci-corridor × two recipes; `restart` worsens block Jacobi. */
  const sweep = async (name: string, restart: number): Promise<string> => {
    const p = ciSuite(t.dir, `${name}.json`, [
      { name: 'gmres-bjacobi', krylov: 'gmres', restart, preconditioner: 'block-jacobi' },
      { name: 'gmres-bgs-sym', krylov: 'gmres', restart: 20, preconditioner: 'block-gs', sweep: 'symmetric' },
    ], ['ci-corridor']);
    const o = await runSweep({ suite: readSuite(p, parsers), outDir: join(t.dir, name), jobs: 1, builder: noBuilder, inProcess: solverDeps });
    return o.files.results;
  };
  const base = join(t.dir, 'baseline.json');
  let first = '';
  let unchanged = '';
  let worse = '';

  it('--update creates a missing baseline; without it a missing baseline is unusable input (2)', async () => {
    first = await sweep('first', 20);
    let r = await runCli(['check', first, '--baseline', base]);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`slabbench: ${base}: no such baseline file (create it from these results with --update)\n`);
    r = await runCli(['check', first, '--baseline', base, '--update']);
    expect(r.code).toBe(0);
    expect(r.stdout).toBe(`baseline created: ${base} (2 runs)\n`);
    expect(readResults(base)).toEqual(readResults(first));
  });

  it('passes (0) on an unchanged rerun and writes JUnit XML without failures', async () => {
    unchanged = await sweep('unchanged', 20);
    const junit = join(t.dir, 'reports', 'junit.xml');
    const r = await runCli(['check', unchanged, '--baseline', base, '--junit', junit]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('2 of 2 pairs within tolerance');
    const xml = readFileSync(junit, 'utf8');
    expect(wellFormed(xml)).toBe(true);
    expect(xml).toContain('tests="2" failures="0"');
  });

  it('fails (1) when a recipe is worsened (smaller GMRES restart → more iterations), in the table and in JUnit', async () => {
    worse = await sweep('worse', 5);
    const bIt = readResults(base).runs[0].result!.iterations;
    const wIt = readResults(worse).runs[0].result!.iterations;
    expect(wIt).toBeGreaterThan(bIt);
    const junit = join(t.dir, 'junit-worse.xml');
    const r = await runCli(['check', worse, '--baseline', base, '--junit', junit]);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(`slabbench: 1 of 2 matrix × recipe pairs regressed against ${base}\n`);
    expect(r.stdout).toContain(`FAIL ci-corridor × gmres-bjacobi: iterations ${bIt} → ${wIt} (allowed ≤ ${bIt})`);
    expect(r.stdout).toContain('note ci-corridor × gmres-bjacobi: recipe changed: restart 20→5');
    const xml = readFileSync(junit, 'utf8');
    expect(wellFormed(xml)).toBe(true);
    expect(xml).toContain('tests="2" failures="1"');
    expect(xml).toMatch(/<testcase classname="ci-corridor" name="gmres-bjacobi"[^>]*>\n\s*<failure type="regressed" message="iterations /);
    // A generous slack lets it pass; --json is machine-clean.
    const j = await runCli(['check', worse, '--baseline', base, '--iterations-slack', String(wIt - bIt), '--json']);
    expect(j.code).toBe(0);
    expect(JSON.parse(j.stdout)).toMatchObject({ failures: 0, updated: false });
    const pct = await runCli(['check', worse, '--baseline', base, '--iterations-percent', '1']);
    expect(pct.code).toBe(1);
  });

  it('per-recipe tolerances from a file', async () => {
    const bIt = readResults(base).runs[0].result!.iterations;
    const wIt = readResults(worse).runs[0].result!.iterations;
    const tol = join(t.dir, 'tol.json');
    writeFileSync(tol, JSON.stringify({ schema: 'slabbench-tolerances/1', recipes: { 'gmres-bjacobi': { iterationsSlack: wIt - bIt } } }));
    expect((await runCli(['check', worse, '--baseline', base, '--tolerances', tol])).code).toBe(0);
    writeFileSync(tol, JSON.stringify({ schema: 'slabbench-tolerances/1', recipes: { 'gmres-bjacobi': { iterationsSlack: -1 } } }));
    const r = await runCli(['check', worse, '--baseline', base, '--tolerances', tol]);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`slabbench: ${tol}: recipes.gmres-bjacobi.iterationsSlack: expected an integer ≥ 0, got -1\n`);
  });

  it('--update replaces the baseline atomically (new file renamed into place, no temp left) and exits 0', async () => {
    const inodeBefore = statSync(base).ino;
    const r = await runCli(['check', worse, '--baseline', base, '--update']);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('baseline updated');
    expect(statSync(base).ino).not.toBe(inodeBefore); // a rename, not an in-place rewrite
    expect(readResults(base)).toEqual(readResults(worse));
    expect(readdirSync(t.dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
    expect((await runCli(['check', worse, '--baseline', base])).code).toBe(0);
    // Going back to restart 20: fewer iterations (noted), but the larger Krylov basis exceeds the
    // memory tolerance, so it still fails until the baseline is updated.
    const back = await runCli(['check', unchanged, '--baseline', base]);
    expect(back.code).toBe(1);
    expect(back.stdout).toMatch(/FAIL ci-corridor × gmres-bjacobi: buffer bytes .* allowed \+10%\)/);
    expect(back.stdout).toMatch(/note ci-corridor × gmres-bjacobi: iterations \d+ → \d+/);
    // A larger basis also moves more bytes per iteration: the exact work comparison catches that too.
    expect(back.stdout).toMatch(/FAIL ci-corridor × gmres-bjacobi: solve (bytes|flops) \d+ → \d+ \(allowed ≤ \d+, exact\)/);
    expect((await runCli(['check', unchanged, '--baseline', base, '--memory-percent', '1000', '--work-percent', '1000'])).code).toBe(0);
  });

  it('unusable input exits 2', async () => {
    const notResults = join(t.dir, 'x.json');
    writeFileSync(notResults, '{"schema": "something-else"}');
    let r = await runCli(['check', notResults, '--baseline', base]);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`slabbench: ${notResults}: schema "something-else" is not a results version this slabbench reads (it reads "slabbench-results/2" and converts "slabbench-results/1"); regenerate it with \`slabbench sweep\`\n`);
    const cut = readResults(first);
    cut.status = 'interrupted';
    const cutPath = join(t.dir, 'cut.json');
    writeFileSync(cutPath, resultsJson(cut));
    r = await runCli(['check', cutPath, '--baseline', base]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('the sweep did not finish (status interrupted)');
    r = await runCli(['check', first, '--baseline', base, '--iterations-slack', '1.5']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('option --iterations-slack: expected an integer ≥ 0, got "1.5"');
    r = await runCli(['check', join(t.dir, 'nope.json'), '--baseline', base]);
    expect(r.code).toBe(2);
    expect(existsSync(join(t.dir, 'nope.json'))).toBe(false);
  });

  it('--help lists examples', async () => {
    const r = await runCli(['check', '--help']);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('Examples:');
    expect(r.stdout).toContain('--baseline matrices/ci/baseline.json --junit');
  });
});
