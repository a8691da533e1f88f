import { describe, expect, it, afterAll } from 'vitest';
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { runSweep } from '../../src/run/sweep.js';
import {
  allowedIterations, compareWithBaseline, DEFAULT_TOLERANCE, junitXml, parseToleranceFile, renderCheckTable, toleranceFor,
} from '../../src/run/baseline.js';
import type { ResultsDoc } from '../../src/run/results-types.js';
import * as fake from './fixtures/fake-deps.js';
import { readTinySuite, tempDir, writeTinySuite } from './helpers.js';
import { wellFormed } from './xml-check.js';

const hasPython = existsSync('/usr/bin/python3');

/** Multiply every solve time of a document (the single result's and each repeat's) by f. */
function slowDown(doc: ResultsDoc, f: number): void {
  for (const r of doc.runs) {
    if (!r.result) continue;
    r.result.timing.solveSeconds *= f;
    const rep = r.repeats;
    if (!rep) continue;
    rep.solveSeconds = rep.solveSeconds.map((x) => x * f);
    const totals = rep.setupSeconds.map((s, i) => s + rep.solveSeconds[i]).sort((a, b) => a - b);
    rep.median.solveSeconds *= f; rep.min.solveSeconds *= f; rep.max.solveSeconds *= f;
    rep.median.totalSeconds = totals[(totals.length - 1) >> 1];
    rep.min.totalSeconds = totals[0];
    rep.max.totalSeconds = totals[totals.length - 1];
  }
}

describe('baseline check', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());
  let base: ResultsDoc;
  let same: ResultsDoc;
  let worse: ResultsDoc;

  it('setup: a baseline sweep, an unchanged rerun and a worsened recipe (smaller relaxation factor)', async () => {
    const run = async (dir: string, omegaSecond: number) => {
      const sub = join(t.dir, dir);
      const { mkdirSync } = await import('node:fs');
      mkdirSync(sub, { recursive: true });
      const suite = readTinySuite(writeTinySuite(sub, { omegaSecond }));
      return (await runSweep({ suite, outDir: join(sub, 'out'), jobs: 1, builder: fake, inProcess: fake })).doc;
    };
    base = await run('base', 0.8);
    same = await run('same', 0.8);
    worse = await run('worse', 0.6);
    expect(worse.runs[1].result!.iterations).toBeGreaterThan(base.runs[1].result!.iterations);
  });

  it('passes on an unchanged run (timings and RSS differ, they are not checked)', () => {
    slowDown(same, 50);
    same.runs.forEach((r) => { r.result!.memory.peakBytes *= 3; });
    const out = compareWithBaseline(same, base);
    expect(out.failures).toBe(0);
    expect(out.rows.map((r) => r.verdict)).toEqual(['pass', 'pass', 'pass', 'pass']);
    expect(renderCheckTable(out)).toContain('4 of 4 pairs within tolerance');
  });

  it('fails on the worsened recipe, naming iterations, and only on that recipe', () => {
    const out = compareWithBaseline(worse, base);
    const failed = out.rows.filter((r) => r.problems.length);
    expect(failed.map((r) => `${r.matrix}/${r.recipe}`)).toEqual(['alpha/rich-slow', 'beta/rich-slow']);
    const b = base.runs[1].result!.iterations;
    const w = worse.runs[1].result!.iterations;
    expect(failed[0].problems[0]).toBe(`iterations ${b} → ${w} (allowed ≤ ${b})`);
    // The work counters of the solve phase grew with the iterations (exact comparison by default).
    expect(failed[0].problems.slice(1)).toEqual([
      expect.stringMatching(/^solve matvecs \d+ → \d+ \(allowed ≤ \d+, exact\)$/),
      expect.stringMatching(/^solve preconditionerApplies /),
      expect.stringMatching(/^solve flops /),
      expect.stringMatching(/^solve bytes /),
    ]);
    expect(failed[0].notes).toEqual(['recipe changed: omega 0.8→0.6']);
    expect(out.failures).toBe(2);
    expect(renderCheckTable(out)).toContain(`FAIL alpha × rich-slow: iterations ${b} → ${w}`);
  });

  it('iteration slack and percent, from options or per recipe', () => {
    const extraA = worse.runs[1].result!.iterations - base.runs[1].result!.iterations;
    const extraB = worse.runs[3].result!.iterations - base.runs[3].result!.iterations;
    const out = compareWithBaseline(worse, base, { cli: { iterationsSlack: extraA - 1 } });
    expect(out.rows[1].problems[0]).toMatch(/^iterations /);
    // Within the slack, the solve-phase work counters may grow by the same share.
    const slack = compareWithBaseline(worse, base, { cli: { iterationsSlack: Math.max(extraA, extraB) } });
    expect(slack.failures).toBe(0);
    expect(slack.rows[1].notes).toContain('solve-phase work not compared: the iterations grew within the allowed slack');
    expect(compareWithBaseline(worse, base, { file: { recipes: { 'rich-slow': { iterationsPercent: 100 } } } }).failures).toBe(0);
    expect(allowedIterations(10, { ...DEFAULT_TOLERANCE, iterationsSlack: 2, iterationsPercent: 50 })).toBe(15);
    expect(allowedIterations(10, { ...DEFAULT_TOLERANCE, iterationsSlack: 2, iterationsPercent: 10 })).toBe(12);
    expect(allowedIterations(7, { ...DEFAULT_TOLERANCE, iterationsPercent: 10 })).toBe(8); // ceil(0.7)
    // Precedence: defaults < file default < options < file per recipe.
    expect(toleranceFor('r', { memoryPercent: 5 }, { default: { memoryPercent: 1, residualFactor: 2 }, recipes: { r: { memoryPercent: 7 } } }))
      .toEqual({ ...DEFAULT_TOLERANCE, memoryPercent: 7, residualFactor: 2 });
  });

  it('cause, true residual, memory and (when asked) time', () => {
    const cur = structuredClone(same);
    const r0 = cur.runs[0].result!;
    r0.cause = 'iteration-budget';
    r0.outcome = 'unsolved';
    r0.converged = false;
    r0.trueRelativeResidual = 1e-3;
    cur.runs[2].result!.memory.krylovBytes *= 2;
    let out = compareWithBaseline(cur, base);
    expect(out.rows[0].problems).toEqual([
      'cause relative-target → iteration-budget',
      // Limit max(rtol, baseline × 10): the baseline residual is just below rtol = 1e-8.
      expect.stringMatching(/^true residual \S+ → 1\.00e-3 \(allowed ≤ \S+e-8\)$/),
    ]);
    expect(out.rows[2].problems).toEqual([expect.stringMatching(/^buffer bytes .* allowed \+10%\)$/)]);
    // Time: only with a ratio; the fake runs take 3 ms on both sides, so a 50× slower solve fails.
    expect(compareWithBaseline(same, base).rows[0].timeRatio).toBeUndefined();
    out = compareWithBaseline(same, base, { cli: { timeRatio: 3 } });
    expect(out.timeCompared).toBe(true);
    expect(out.rows[0].problems[0]).toMatch(/^median time ×\d+\.\d\d \(allowed ×3\.00\)$/);
    expect(compareWithBaseline(same, base, { cli: { timeRatio: 1000 } }).failures).toBe(0);
  });

  it('improvements pass; missing pairs and runs that cannot start fail; new pairs are noted', () => {
    const better = compareWithBaseline(base, worse);
    expect(better.failures).toBe(0);
    expect(better.rows[1].verdict).toBe('improved');
    const cur = structuredClone(same);
    cur.runs.splice(3, 1);
    cur.runs[0] = { ...cur.runs[0], result: undefined, error: 'a.mtx: no such file' };
    cur.runs.push({ ...cur.runs[1], recipe: 'brand-new' });
    const out = compareWithBaseline(cur, base);
    expect(out.rows.map((r) => r.verdict)).toEqual(['error', 'pass', 'pass', 'missing', 'new']);
    expect(out.failures).toBe(2);
    const shard = structuredClone(same);
    shard.parameters.shard = { index: 1, count: 2 };
    shard.runs.splice(2, 2);
    const sh = compareWithBaseline(shard, base);
    expect(sh.failures).toBe(2);
    expect(sh.notes[0]).toContain('shard 1/2 only');
    const changed = structuredClone(same);
    changed.matrices[0].nnz += 1;
    expect(compareWithBaseline(changed, base).rows[0].problems[0]).toMatch(/^matrix changed \(nnz 16→17\)/);
  });

  it('JUnit XML is well-formed, has one testcase per pair and counts the failures', () => {
    const out = compareWithBaseline(worse, base);
    out.rows[0].notes.push('odd <chars> & "quotes"');
    const xml = junitXml(out, { timestamp: worse.date });
    expect(wellFormed(xml)).toBe(true);
    expect(wellFormed('<a><b></a></b>')).toBe(false); // the checker can fail
    expect(xml.match(/<testcase /g)).toHaveLength(4);
    expect(xml.match(/<failure /g)).toHaveLength(2);
    expect(xml).toContain('<testsuites name="slabbench check" tests="4" failures="2"');
    expect(xml).toContain('classname="alpha" name="rich-slow"');
  });

  it.runIf(hasPython)('JUnit XML parses with a real XML parser (python3 xml.etree)', () => {
    const xml = junitXml(compareWithBaseline(worse, base));
    const py = 'import sys, xml.etree.ElementTree as ET; r = ET.fromstring(sys.stdin.read()); s = r.find("testsuite"); print(s.get("tests"), s.get("failures"), len(s.findall("testcase")), len(s.findall("testcase/failure")))';
    expect(execFileSync('/usr/bin/python3', ['-c', py], { input: xml, encoding: 'utf8' }).trim()).toBe('4 2 4 2');
  });

  it('tolerance files are validated field by field', () => {
    expect(parseToleranceFile({ schema: 'slabbench-tolerances/1', recipes: { a: { iterationsSlack: 2 } } }, 't.json')).toEqual({ recipes: { a: { iterationsSlack: 2 } } });
    expect(() => parseToleranceFile({}, 't.json')).toThrow('t.json: schema: expected "slabbench-tolerances/1", got undefined');
    expect(() => parseToleranceFile({ schema: 'slabbench-tolerances/1', default: { iterationsSlack: 1.5 } }, 't.json')).toThrow('t.json: default.iterationsSlack: expected an integer ≥ 0, got 1.5');
    expect(() => parseToleranceFile({ schema: 'slabbench-tolerances/1', recipes: { a: { slack: 1 } } }, 't.json')).toThrow('t.json: recipes.a.slack: unknown tolerance');
    expect(() => parseToleranceFile({ schema: 'slabbench-tolerances/1', default: { residualFactor: 0.5 } }, 't.json')).toThrow('t.json: default.residualFactor: expected a number ≥ 1, got 0.5');
  });
});
