// --kernels on the commands: the result records the kernel set; a bad value is exit 2, one line.
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runCli } from '../cli/cli-helpers.js';

const DUCT = fileURLToPath(new URL('../../matrices/ci/ci-duct.mtx.gz', import.meta.url));
const SUITE = fileURLToPath(new URL('../../matrices/ci/suite.json', import.meta.url));

describe('--kernels', () => {
  it('solve --kernels wasm / typescript: same iterations and history, the set in the JSON', async () => {
    const docs = [];
    for (const k of ['wasm', 'typescript']) {
      const { code, stdout } = await runCli(['solve', DUCT, '--precond', 'block-gs', '--kernels', k, '--json', '-']);
      expect(code).toBe(0);
      docs.push(JSON.parse(stdout));
    }
    expect(docs[0].kernels).toBe('wasm');
    expect(docs[1].kernels).toBe('typescript');
    expect(docs[0].history).toEqual(docs[1].history);
  });

  it('a bad value is a one-line error, exit 2', async () => {
    const { code, stderr } = await runCli(['solve', DUCT, '--kernels', 'gpu']);
    expect(code).toBe(2);
    expect(stderr.trim()).toBe('slabbench: option --kernels: expected one of auto, wasm, typescript, got "gpu"');
  });

  it('sweep --kernels typescript reaches every run (worker threads included) and leaves the environment as it was', async () => {
    const out = mkdtempSync(join(tmpdir(), 'kernels-sweep-'));
    try {
      const before = process.env.SLABBENCH_KERNELS;
      const { code } = await runCli(['sweep', SUITE, '--out', out, '--quiet', '--no-report', '--jobs', '2',
        '--only-matrix', 'ci-duct', '--kernels', 'typescript']);
      expect(code).toBe(0);
      expect(process.env.SLABBENCH_KERNELS).toBe(before);
      const doc = JSON.parse(readFileSync(join(out, 'results.json'), 'utf8'));
      expect(doc.runs.length).toBeGreaterThan(0);
      for (const run of doc.runs) expect(run.result.kernels).toBe('typescript');
    } finally {
      rmSync(out, { recursive: true, force: true });
    }
  });
});
