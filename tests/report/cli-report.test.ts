import { describe, it, expect } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { registerReport } from '../../src/cli/report.js';
import { runCommand } from './cli-harness.js';
import { makeHistory, makeResults } from './fixture.js';

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
