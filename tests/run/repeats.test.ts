import { afterAll, describe, expect, it } from 'vitest';
import { writeFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { runSweep } from '../../src/run/sweep.js';
import { historyLabel, readHistory } from '../../src/run/history.js';
import { compareWithBaseline, noiseBand, NOISE_BAND_MIN } from '../../src/run/baseline.js';
import type { MachineProbe, ResultsDoc } from '../../src/run/results-types.js';
import * as fake from './fixtures/fake-deps.js';
import { FAKE_DEPS_URL, readTinySuite, tempDir, writeTinySuite } from './helpers.js';

const PROBE: MachineProbe = { bandwidthGBs: 10, flopRateGFLOPs: 2, probeSeconds: 0, method: 'test double' };
const probe = (): MachineProbe => PROBE;
const FLAKY = { name: 'flaky', krylov: 'none', preconditioner: 'jacobi', omega: 0.5, rtol: 1e-14, maxIterations: 6 };

describe('timed repeats in a sweep', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());

  it('records every repeat, the median/min/max, and flags a pair whose repeats differ (in-process)', async () => {
    const suite = readTinySuite(writeTinySuite(t.dir, { extraRecipes: [FLAKY] }));
    const o = await runSweep({ suite, outDir: join(t.dir, 'a'), jobs: 1, builder: fake, inProcess: fake, onlyMatrix: ['alpha'], probe });
    const [steady, , flaky] = o.doc.runs;
    expect(steady.repeats).toMatchObject({ count: 3, warmup: true, gc: true, consistent: true });
    expect(steady.repeats!.setupSeconds).toHaveLength(3);
    expect(steady.repeats!.median.totalSeconds).toBeCloseTo(0.003, 12); // the double reports 1 ms + 2 ms
    expect(steady.repeats!.differences).toBeUndefined();
    expect(flaky.repeats!.consistent).toBe(false);
    expect(flaky.repeats!.differences!.join('\n')).toMatch(/iterations/);
    // Stated on disk too.
    const disk = JSON.parse(readFileSync(o.files.results, 'utf8')) as ResultsDoc;
    expect(disk.runs[2].repeats?.consistent).toBe(false);
  });

  it('flags the same way on worker threads', async () => {
    const suite = readTinySuite(writeTinySuite(t.dir, { extraRecipes: [FLAKY] }));
    const o = await runSweep({ suite, outDir: join(t.dir, 'w'), jobs: 1, builder: fake, depsModule: FAKE_DEPS_URL, onlyMatrix: ['alpha'], onlyRecipe: ['rich-1', 'flaky'], probe, repeats: 2 });
    expect(o.doc.runs.map((r) => [r.recipe, r.repeats?.count, r.repeats?.consistent, r.repeats?.gc])).toEqual([
      ['rich-1', 2, true, true], ['flaky', 2, false, true],
    ]);
    expect(o.doc.parameters.gc).toBe(true);
  });

  it('a suite-level "timing" sets repeats and warm-up; options override it', async () => {
    const p = writeTinySuite(t.dir);
    const raw = JSON.parse(readFileSync(p, 'utf8'));
    raw.timing = { repeats: 2, warmup: false };
    writeFileSync(p, JSON.stringify(raw));
    const suite = readTinySuite(p);
    expect(suite.timing).toEqual({ repeats: 2, warmup: false });
    const a = await runSweep({ suite, outDir: join(t.dir, 's1'), jobs: 1, builder: fake, inProcess: fake, onlyMatrix: ['alpha'], probe: false });
    expect(a.doc.parameters).toMatchObject({ repeats: 2, warmup: false });
    expect(a.doc.machine).toBeUndefined();
    const b = await runSweep({ suite, outDir: join(t.dir, 's2'), jobs: 1, builder: fake, inProcess: fake, onlyMatrix: ['alpha'], probe: false, repeats: 4, warmup: true });
    expect(b.doc.parameters).toMatchObject({ repeats: 4, warmup: true });
    raw.timing = { repeats: 0 };
    writeFileSync(p, JSON.stringify(raw));
    expect(() => readTinySuite(p)).toThrow(`${p}: timing.repeats: expected an integer from 1 to 100, got 0`);
    raw.timing = { repeat: 3 };
    writeFileSync(p, JSON.stringify(raw));
    expect(() => readTinySuite(p)).toThrow(`${p}: timing.repeat: unknown key (expected repeats, warmup)`);
  });

  it('stores the probe, the model rates and each run\'s modeled seconds; targets project them', async () => {
    const suite = readTinySuite(writeTinySuite(t.dir));
    const o = await runSweep({ suite, outDir: join(t.dir, 'm'), jobs: 1, builder: fake, inProcess: fake, onlyMatrix: ['alpha'], probe, repeats: 1 });
    expect(o.doc.machine).toEqual(PROBE);
    expect(o.doc.model).toEqual({ bandwidthGBs: 10, flopRateGFLOPs: 2, bandwidthFrom: 'probe', flopRateFrom: 'probe' });
    const r = o.doc.runs[0];
    const w = (r.result as unknown as { work: { setup: { bytes: number; flops: number }; solve: { bytes: number; flops: number } } }).work;
    expect(r.modeled!.setupSeconds).toBeCloseTo(w.setup.bytes / 10e9 + w.setup.flops / 2e9, 18);
    expect(r.modeled!.solveSeconds).toBeCloseTo(w.solve.bytes / 10e9 + w.solve.flops / 2e9, 18);
    const p = await runSweep({ suite, outDir: join(t.dir, 'm2'), jobs: 1, builder: fake, inProcess: fake, onlyMatrix: ['alpha'], probe, repeats: 1, target: { bandwidthGBs: 100 } });
    expect(p.doc.parameters.target).toEqual({ bandwidthGBs: 100 });
    expect(p.doc.model).toMatchObject({ bandwidthGBs: 100, bandwidthFrom: 'target', flopRateFrom: 'probe' });
    expect(p.doc.runs[0].modeled!.solveSeconds).toBeCloseTo(w.solve.bytes / 100e9 + w.solve.flops / 2e9, 18);
  });

  it('history lines carry the user\'s label (option, else a CI commit variable) and mark a changed suite', async () => {
    expect(historyLabel('v1.2', { GITHUB_SHA: 'abc' })).toEqual({ label: 'v1.2', labelFrom: 'option' });
    expect(historyLabel(undefined, { CI_COMMIT_SHA: 'def', GIT_COMMIT: 'ghi' })).toEqual({ label: 'def', labelFrom: 'CI_COMMIT_SHA' });
    expect(historyLabel(undefined, { BUILD_VCS_NUMBER: ' 123 ' })).toEqual({ label: '123', labelFrom: 'BUILD_VCS_NUMBER' });
    expect(historyLabel(undefined, {})).toBeUndefined();
    const dir = join(t.dir, 'h');
    const p1 = writeTinySuite(t.dir);
    await runSweep({ suite: readTinySuite(p1), outDir: dir, jobs: 1, builder: fake, inProcess: fake, onlyMatrix: ['alpha'], probe: false, repeats: 1, label: 'first' });
    await runSweep({ suite: readTinySuite(p1), outDir: dir, jobs: 1, builder: fake, inProcess: fake, onlyMatrix: ['alpha'], probe: false, repeats: 1, label: 'same suite' });
    const p2 = writeTinySuite(t.dir, { omegaSecond: 0.7 });
    await runSweep({ suite: readTinySuite(p2), outDir: dir, jobs: 1, builder: fake, inProcess: fake, onlyMatrix: ['alpha'], probe: false, repeats: 1, label: 'edited' });
    const h = readHistory(join(dir, 'history.jsonl'));
    expect(h.map((e) => [e.label, e.labelFrom, e.suiteChanged])).toEqual([
      ['first', 'option', undefined], ['same suite', 'option', false], ['edited', 'option', true],
    ]);
    expect(h[2].runs[0]).toMatchObject({ repeats: 1, bytesMoved: expect.any(Number), flops: expect.any(Number) });
  });
});

describe('check: exact work counters and the time noise band', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());

  it('compares work counters exactly: one more byte fails, fewer is an improvement', async () => {
    const suite = readTinySuite(writeTinySuite(t.dir));
    const base = (await runSweep({ suite, outDir: join(t.dir, 'b'), jobs: 1, builder: fake, inProcess: fake, probe: false, repeats: 1 })).doc;
    const now = structuredClone(base);
    expect(compareWithBaseline(now, base).failures).toBe(0);
    expect(compareWithBaseline(now, base).rows[0].workChanges).toBeUndefined();
    const w = (now.runs[0].result as unknown as { work: { solve: { bytes: number; matvecs: number } } }).work;
    w.solve.bytes += 1;
    let out = compareWithBaseline(now, base);
    expect(out.failures).toBe(1);
    expect(out.rows[0].problems).toEqual([`solve bytes ${w.solve.bytes - 1} → ${w.solve.bytes} (allowed ≤ ${w.solve.bytes - 1}, exact)`]);
    expect(compareWithBaseline(now, base, { cli: { workPercent: 1 } }).failures).toBe(0);
    w.solve.bytes -= 2;
    w.solve.matvecs -= 1;
    out = compareWithBaseline(now, base);
    expect(out.failures).toBe(0);
    expect(out.rows[0].verdict).toBe('improved');
    // A baseline without counters (older results): not compared, said once.
    const old = structuredClone(base);
    for (const r of old.runs) delete (r.result as unknown as { work?: unknown }).work;
    out = compareWithBaseline(now, old);
    expect(out.notes.filter((n) => n.startsWith('work counters are missing from the baseline'))).toHaveLength(1);
  });

  it('time: medians compared within a band derived from the noise of both runs', () => {
    expect(noiseBand(undefined, undefined, undefined, undefined)).toBe(NOISE_BAND_MIN);
    expect(noiseBand(0.1, 0.3, 0.2, 0.05)).toBeCloseTo(1 + 3 * (0.3 + 0.2), 12);
    const mk = (solves: number[]): ResultsDoc => {
      const doc = structuredClone(JSON.parse(readFileSync(join(t.dir, 'b', 'results.json'), 'utf8'))) as ResultsDoc;
      for (const r of doc.runs) {
        const sorted = [...solves].sort((a, b) => a - b);
        r.repeats = {
          count: 3, warmup: true, gc: true, setupSeconds: [0, 0, 0], solveSeconds: solves,
          median: { setupSeconds: 0, solveSeconds: sorted[1], totalSeconds: sorted[1] },
          min: { setupSeconds: 0, solveSeconds: sorted[0], totalSeconds: sorted[0] },
          max: { setupSeconds: 0, solveSeconds: sorted[2], totalSeconds: sorted[2] }, stored: 0, consistent: true,
        };
      }
      return doc;
    };
    const base = mk([0.10, 0.11, 0.12]); // spread 0.2/1.1 ≈ 0.18
    const noisyFine = mk([0.13, 0.15, 0.16]); // ×1.36 vs a band of 1 + 3·(0.18 + 0.2) ≈ 2.14
    let out = compareWithBaseline(noisyFine, base, { time: 'noise' });
    expect(out.timeCompared).toBe(true);
    expect(out.failures).toBe(0);
    expect(out.rows[0].timeLimit).toBeCloseTo(1 + 3 * (0.02 / 0.11 + 0.03 / 0.15), 12);
    const slow = mk([0.30, 0.31, 0.32]); // ×2.8 beyond the band
    out = compareWithBaseline(slow, base, { time: 'noise' });
    expect(out.failures).toBe(out.rows.length);
    expect(out.rows[0].problems[0]).toMatch(/^median time ×2\.82 \(allowed ×1\.\d\d, noise band\)$/);
    // Off unless asked.
    expect(compareWithBaseline(slow, base).failures).toBe(0);
    // A fixed band replaces the noise band.
    expect(compareWithBaseline(slow, base, { time: 'noise', cli: { timeRatio: 3 } }).failures).toBe(0);
  });
});
