import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli } from './cli-helpers.js';

const corridor = 'matrices/ci/ci-corridor.mtx.gz';

describe('slabbench scale', () => {
  it('--json - prints only the forecast JSON, one row per P', async () => {
    const r = await runCli(['scale', corridor, '--max-parts', '4', '--precond', 'schwarz', '--overlap', '1', '--subdomain-precond', 'block-ilu0', '--json', '-']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.schema).toBe('slabbench-scale/1');
    expect(doc.rows.map((x: { parts: number }) => x.parts)).toEqual([1, 2, 4]);
    expect(doc.machine.latency).toBe(2e-6);
  });

  it('prints a table; bad options exit 2 with one line', async () => {
    const html = join(mkdtempSync(join(tmpdir(), 'scale-')), 'f.html');
    const t = await runCli(['scale', corridor, '--max-parts', '2', '--precond', 'block-jacobi', '--latency', '1e-5', '--html', html]);
    expect(t.code).toBe(0);
    const page = readFileSync(html, 'utf8');
    expect(page).toContain('data-plot="scale"');
    expect(page).toContain('not a measurement of a real cluster');
    expect(t.stdout).toMatch(/model µs \/ it/);
    expect(t.stdout).toMatch(/not a measurement/);
    for (const bad of [['--max-parts', '0'], ['--max-parts', '2', '--latency', '-1'], ['--max-parts', '2', '--parts', '2', '--precond', 'schwarz'], ['--max-parts', '100000']]) {
      const r = await runCli(['scale', corridor, ...bad]);
      expect(r.code).toBe(2);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
    }
  });
});
