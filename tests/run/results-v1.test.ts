import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { readResults, resultsCsv, validateResults } from '../../src/run/results.js';
import { readHistory } from '../../src/run/history.js';
import { compareWithBaseline } from '../../src/run/baseline.js';
import { RESULTS_SCHEMA } from '../../src/run/results-types.js';
import { CAUSES, outcomeOf } from '../../src/solvers/types.js';

// tests/fixtures/results/results-v1.json was written by `slabbench sweep tests/fixtures/results/suite-v1.json`
// with the version-1 code (commit 192b637), before causes replaced stop reasons; history-v1.jsonl is the
// history line of the same sweep. Only the paths were made relative afterwards.
const v1Path = fileURLToPath(new URL('../fixtures/results/results-v1.json', import.meta.url));
const v1HistoryPath = fileURLToPath(new URL('../fixtures/results/history-v1.jsonl', import.meta.url));

function rawV1(): { schema: string; runs: Array<{ recipe: string; recipeParams: Record<string, unknown>; result: Record<string, unknown> }> } {
  return JSON.parse(readFileSync(v1Path, 'utf8'));
}

describe('reading version-1 results documents', () => {
  it('the committed fixture really is version 1', () => {
    const raw = rawV1();
    expect(raw.schema).toBe('slabbench-results/1');
    expect(raw.runs.map((r) => r.result.reason)).toEqual(['converged-rtol', 'converged-rtol', 'max-iterations', 'converged-atol']);
  });

  it('converts stop reasons, norm names and recipe fields', () => {
    const raw = rawV1();
    const doc = readResults(v1Path);
    expect(doc.schema).toBe(RESULTS_SCHEMA);
    expect(doc.convertedFrom).toBe('slabbench-results/1');
    const byRecipe = new Map(doc.runs.map((r) => [r.recipe, r]));
    const expected: Record<string, [string, string, string, string]> = {
      // recipe: cause, outcome, watched, relativeTo
      'gmres-bjacobi': ['relative-target', 'solved', 'plain', 'rhs'],
      'gmres-left-r0': ['relative-target', 'solved', 'left-preconditioned', 'start-residual'],
      'gmres-short': ['iteration-budget', 'unsolved', 'plain', 'rhs'],
      'gmres-atol': ['absolute-target', 'solved', 'plain', 'rhs'],
    };
    for (const [recipe, [cause, outcome, watched, relativeTo]] of Object.entries(expected)) {
      const run = byRecipe.get(recipe)!;
      const res = run.result!;
      expect(res.cause, recipe).toBe(cause);
      expect(res.outcome, recipe).toBe(outcome);
      expect(res.converged, recipe).toBe(outcome === 'solved');
      expect(res.watched, recipe).toBe(watched);
      expect(res.relativeTo, recipe).toBe(relativeTo);
      expect(run.recipeParams.relativeTo, recipe).toBe(relativeTo);
      const old = raw.runs.find((r) => r.recipe === recipe)!.result;
      expect(res.referenceNorm, recipe).toBe(old.baselineNorm);
      expect(res.trueReferenceNorm, recipe).toBe(old.trueBaselineNorm);
      expect(res.iterations, recipe).toBe(old.iterations);
      for (const gone of ['reason', 'monitored', 'baseline', 'baselineNorm', 'trueBaselineNorm']) {
        expect(res, `${recipe}.${gone}`).not.toHaveProperty(gone);
      }
      expect(run.recipeParams, recipe).not.toHaveProperty('baseline');
    }
    // left preconditioning: the recomputed watched value of each residual check is renamed too
    const left = byRecipe.get('gmres-left-r0')!.result!;
    expect(left.residualChecks.length).toBeGreaterThan(0);
    for (const c of left.residualChecks) {
      expect(typeof c.watchedValue).toBe('number');
      expect(c).not.toHaveProperty('monitoredValue');
    }
  });

  it('a converted document can serve as a check baseline for itself', () => {
    const a = readResults(v1Path);
    const out = compareWithBaseline(readResults(v1Path), a);
    expect(out.failures).toBe(0);
    expect(out.rows.map((r) => r.verdict)).toEqual(['pass', 'pass', 'pass', 'pass']);
  });

  it('an unknown version-1 reason is named', () => {
    const raw = rawV1();
    raw.runs[1].result.reason = 'converged-happily';
    expect(() => validateResults(raw, 'old.json')).toThrow(
      /^old\.json: runs\[1\]\.result\.reason: expected one of converged-rtol, .* \(version 1\), got "converged-happily"$/);
  });

  it('refuses an unknown version with one line naming it', () => {
    const raw = rawV1();
    raw.schema = 'slabbench-results/9';
    expect(() => validateResults(raw, 'future.json')).toThrow(
      'future.json: schema "slabbench-results/9" is not a results version this slabbench reads (it reads "slabbench-results/2" and converts "slabbench-results/1"); the file was written by a newer slabbench');
  });

  it('a version-2 document must carry a known cause and the matching outcome', () => {
    const doc = JSON.parse(JSON.stringify(readResults(v1Path)));
    doc.runs[0].result.cause = 'converged-rtol';
    expect(() => validateResults(doc, 'r.json')).toThrow(`r.json: runs[0].result.cause: expected one of ${CAUSES.join(', ')}, got "converged-rtol"`);
    doc.runs[0].result.cause = 'iteration-budget';
    expect(() => validateResults(doc, 'r.json')).toThrow('r.json: runs[0].result.outcome: expected "unsolved" for cause iteration-budget, got "solved"');
  });

  it('history lines written with stop reasons read back with causes', () => {
    const [entry] = readHistory(v1HistoryPath);
    expect(entry.runs.map((r) => [r.recipe, r.cause, r.outcome])).toEqual([
      ['gmres-bjacobi', 'relative-target', 'solved'],
      ['gmres-left-r0', 'relative-target', 'solved'],
      ['gmres-short', 'iteration-budget', 'unsolved'],
      ['gmres-atol', 'absolute-target', 'solved'],
    ]);
    for (const r of entry.runs) expect(r).not.toHaveProperty('reason');
  });
});

describe('work counts in version-2 documents', () => {
  it('are checked field by field when present, and carried in the CSV', () => {
    const doc = JSON.parse(JSON.stringify(readResults(v1Path)));
    doc.runs[0].result.work = { setup: { matvecs: 0, preconditionerApplies: 0, innerIterations: 0, flops: 10, bytes: 80 },
      solve: { matvecs: 20, preconditionerApplies: 19, innerIterations: 0, flops: 1e6, bytes: 8e6 } };
    const ok = validateResults(JSON.parse(JSON.stringify(doc)), 'r.json');
    const lines = resultsCsv(ok).trim().split('\n');
    const head = lines[0].split(',');
    const first = lines[1].split(',');
    expect(first[head.indexOf('matvecs')]).toBe('20');
    expect(first[head.indexOf('preconditionerApplies')]).toBe('19');
    expect(first[head.indexOf('setupFlops')]).toBe('10');
    expect(first[head.indexOf('solveBytes')]).toBe('8000000');
    expect(lines[2].split(',')[head.indexOf('matvecs')]).toBe(''); // converted from version 1: no counts
    doc.runs[0].result.work.solve.flops = -1;
    expect(() => validateResults(doc, 'r.json')).toThrow('r.json: runs[0].result.work.solve.flops: expected a finite number ≥ 0, got -1');
    doc.runs[0].result.work = { setup: {} };
    expect(() => validateResults(doc, 'r.json')).toThrow('r.json: runs[0].result.work.setup.matvecs: expected a finite number ≥ 0, got undefined');
  });
});

describe('outcomeOf', () => {
  it('solved for the two targets, unsolved for the budget, failed for the rest', () => {
    expect(CAUSES.map((c) => [c, outcomeOf(c)])).toEqual([
      ['relative-target', 'solved'], ['absolute-target', 'solved'], ['iteration-budget', 'unsolved'],
      ['residual-growth', 'failed'], ['method-breakdown', 'failed'], ['non-finite-value', 'failed'],
      ['preconditioner-error', 'failed'],
    ]);
  });
});
