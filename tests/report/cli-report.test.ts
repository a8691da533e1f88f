import { describe, it, expect } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { registerReport } from '../../src/cli/report.js';
import { runCommand } from './cli-harness.js';
import { makeHistory, makeResults } from './fixture.js';
import { EXAMPLE_MACHINE, runScale } from '../../src/run/scale.js';
import { DEFAULT_RECIPE } from '../../src/solvers/recipe.js';
import { csrToBsr } from '../../src/sparse/bsr.js';
import { poisson2d, randomVector, systemOf } from '../precond/helpers.js';

function workspace(): string {
  const dir = mkdtempSync(join(tmpdir(), 'slabbench-cli-report-'));
  writeFileSync(join(dir, 'results.json'), JSON.stringify(makeResults()));
  return dir;
}

describe('slabbench report', () => {
  it('writes report.html and the svg files, picking up history.jsonl beside the results', async () => {
    const dir = workspace();
    try {
      writeFileSync(join(dir, 'history.jsonl'), `${makeHistory().map((h) => JSON.stringify(h)).join('\n')}\n`);
      const r = await runCommand(registerReport, ['report', join(dir, 'results.json'), '--out', join(dir, 'out'), '--json']);
      expect(r.code).toBe(0);
      const out = JSON.parse(r.stdout) as { html: string; svgs: string[] };
      expect(out.svgs).toHaveLength(10); // 4 plots × 2 matrices + 2 history plots
      expect(readFileSync(out.html, 'utf8')).toContain('id="history"');
      const noHist = await runCommand(registerReport, ['report', join(dir, 'results.json'), '--out', join(dir, 'out2'), '--no-history', '--json']);
      expect((JSON.parse(noHist.stdout) as { svgs: string[] }).svgs).toHaveLength(8);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('plots every *.scale.json beside the results (a forecast of slabbench scale); --no-scale leaves them out; a bad one names file and field', async () => {
    const dir = workspace();
    try {
      const forecast = runScale(systemOf(csrToBsr(poisson2d(8), 1)), randomVector(64, 1), { ...DEFAULT_RECIPE, name: 'gmres-block-jacobi', preconditioner: 'block-jacobi' },
        { maxParts: 4, machine: EXAMPLE_MACHINE, matrix: 'room.mtx' });
      writeFileSync(join(dir, 'room.scale.json'), JSON.stringify(forecast));
      writeFileSync(join(dir, 'notes.json'), '{}'); // not a forecast file name: ignored
      const r = await runCommand(registerReport, ['report', join(dir, 'results.json'), '--out', join(dir, 'out'), '--json']);
      expect(r.code).toBe(0);
      const out = JSON.parse(r.stdout) as { html: string; svgs: string[] };
      expect(out.svgs).toHaveLength(9);
      expect(out.svgs.filter((f) => f.endsWith('scale-room.svg'))).toHaveLength(1);
      const html = readFileSync(out.html, 'utf8');
      expect(html).toContain('id="scale"');
      expect(html).toContain('room.scale.json: iterations of the partitioned algebra');
      expect(html).toContain('not a measurement');
      const none = await runCommand(registerReport, ['report', join(dir, 'results.json'), '--out', join(dir, 'out'), '--no-scale', '--json']);
      expect((JSON.parse(none.stdout) as { svgs: string[]; removed: string[] }).removed.map((f) => f.split('/').pop())).toEqual(['scale-room.svg']);
      writeFileSync(join(dir, 'room.scale.json'), JSON.stringify({ ...forecast, rows: [forecast.rows[1], forecast.rows[0]] }));
      const bad = await runCommand(registerReport, ['report', join(dir, 'results.json'), '--out', join(dir, 'out')]);
      expect(bad.code).toBe(2);
      expect(bad.stderr.trim()).toMatch(/room\.scale\.json: rows\[1\]\.parts: expected more than rows\[0\]\.parts = 2, found 1$/);
      expect(bad.stderr.trim().split('\n')).toHaveLength(1);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('defaults the output folder to the folder of the results file', async () => {
    const dir = workspace();
    try {
      const r = await runCommand(registerReport, ['report', join(dir, 'results.json')]);
      expect(r.code).toBe(0);
      expect(r.stdout).toMatch(/report\.html/);
      expect(existsSync(join(dir, 'report.html'))).toBe(true);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('fails with one line naming the file for a missing or malformed input', async () => {
    const dir = workspace();
    try {
      const missing = await runCommand(registerReport, ['report', join(dir, 'nope.json')]);
      expect(missing.code).toBe(2);
      expect(missing.stderr.trim().split('\n')).toHaveLength(1);
      expect(missing.stderr).toContain('nope.json');
      writeFileSync(join(dir, 'history.jsonl'), '{"date": 1}\n');
      const badHist = await runCommand(registerReport, ['report', join(dir, 'results.json')]);
      expect(badHist.code).toBe(2);
      expect(badHist.stderr).toContain('history.jsonl:1');
      expect(existsSync(join(dir, 'report.html'))).toBe(false);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('has help with examples', async () => {
    const r = await runCommand(registerReport, ['report', '--help']);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('Examples:');
    expect(r.stdout).toContain('--history');
  });
});
