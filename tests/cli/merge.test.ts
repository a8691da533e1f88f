import { describe, expect, it, afterAll } from 'vitest';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { runSweep } from '../../src/run/sweep.js';
import { readResults } from '../../src/run/results.js';
import { readHistory } from '../../src/run/history.js';
import * as fake from '../run/fixtures/fake-deps.js';
import { readTinySuite, tempDir, writeTinySuite } from '../run/helpers.js';
import { runCli } from './cli-helpers.js';

describe('slabbench merge (CLI)', () => {
  const t = tempDir('slabbench-cli-merge-');
  afterAll(() => t.cleanup());

  it('merges shard files into one results document in suite order, with CSV, history and report', async () => {
    const suite = readTinySuite(writeTinySuite(t.dir));
    const whole = await runSweep({ suite, outDir: join(t.dir, 'whole'), jobs: 1, builder: fake, inProcess: fake });
    const files: string[] = [];
    for (let k = 1; k <= 3; k++) {
      const o = await runSweep({ suite, outDir: join(t.dir, `shard-${k}`), jobs: 1, builder: fake, inProcess: fake, shard: { index: k, count: 3 } });
      files.push(o.files.results);
    }
    const out = join(t.dir, 'merged');
    const r = await runCli(['merge', files[2], files[0], files[1], '--out', out]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^merged 3 files, 4 runs: /);
    const merged = readResults(join(out, 'results.json'));
    expect(merged.runs.map((x) => [x.matrix, x.recipe, x.result?.iterations])).toEqual(whole.doc.runs.map((x) => [x.matrix, x.recipe, x.result?.iterations]));
    expect(existsSync(join(out, 'results.csv'))).toBe(true);
    expect(readHistory(join(out, 'history.jsonl'))).toHaveLength(1);
    expect(existsSync(join(out, 'report.html'))).toBe(true);

    const missing = await runCli(['merge', files[0], files[2], '--out', join(t.dir, 'm2')]);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toBe('slabbench: merge: 1 pair(s) missing (shard 2/3 not given): alpha × rich-slow\n');
    const dup = await runCli(['merge', files[0], files[1], files[1], files[2], '--out', join(t.dir, 'm3')]);
    expect(dup.code).toBe(2);
    expect(dup.stderr).toContain('merge: shard 2/3 given twice');
    expect(existsSync(join(t.dir, 'm2', 'results.json'))).toBe(false);
  });

  it('--help lists examples; --out is required', async () => {
    expect((await runCli(['merge', '--help'])).stdout).toContain('Examples:');
    expect((await runCli(['merge', 'a.json'])).code).toBe(2);
  });
});
