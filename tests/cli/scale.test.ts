import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli } from './cli-helpers.js';
import { parseGeneratorParams, writeGeneratedCase } from '../../src/dg/generate.js';

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

  it('--partition-method coordinates partitions every P by the layout\'s centroids, whatever the preconditioner', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'scale-rcb-'));
    // invented scenario: a short 2D+t channel, generated with its centroids
    const params = parseGeneratorParams({ physics: 'advection', dim: 2, order: 0, cells: [8, 2], slabs: 2, velocity: [1, 0.2] }, 'channel');
    const { mtx } = await writeGeneratedCase(params, dir, 'channel');
    const r = await runCli(['scale', mtx, '--max-parts', '4', '--precond', 'block-ilu0', '--partition-method', 'coordinates', '--partition-slabs', 'within', '--json', '-']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.partition).toEqual({ method: 'coordinates', slabs: 'within' });
    expect(doc.matrix).toBe(mtx);
    expect(doc.recipe).toBe('gmres-block-ilu0');
    // parts inside the 2 slabs: P starts at 2
    expect(doc.rows.map((x: { parts: number }) => x.parts)).toEqual([2, 4]);
    expect(doc.rows.map((x: { recipe: { partitionMethod?: string } }) => x.recipe.partitionMethod)).toEqual(['coordinates', 'coordinates']);
    expect(doc.rows[1].partSizes).toEqual([48, 48, 48, 48]);
    const table = await runCli(['scale', mtx, '--max-parts', '2', '--partition-method', 'coordinates']);
    expect(table.stdout).toMatch(/partition: coordinate bisection of the centroids, parts across slabs/);
    // the CI corridor's layout has no centroids; a bad method name is an option error
    for (const [bad, message] of [
      [[corridor, '--partition-method', 'coordinates'], /^slabbench: scale: partition method coordinates needs element centroids: the layout has no "centroids" field/],
      [[corridor, '--partition-method', 'spectral'], /^slabbench: option --partition-method: expected one of graph, coordinates, got "spectral"$/],
    ] as const) {
      const e = await runCli(['scale', ...bad, '--max-parts', '2']);
      expect(e.code).toBe(2);
      expect(e.stderr.trim()).toMatch(message);
    }
  });
});
