import { describe, expect, it, afterAll } from 'vitest';
import { appendFileSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { runSweep } from '../../src/run/sweep.js';
import { appendHistory, historyEntry, readHistory } from '../../src/run/history.js';
import * as fake from './fixtures/fake-deps.js';
import { readTinySuite, tempDir, writeTinySuite } from './helpers.js';

describe('history file', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());
  const suite = readTinySuite(writeTinySuite(t.dir));

  it('appends one line per sweep with the key numbers of every run', async () => {
    const out = join(t.dir, 'o');
    await runSweep({ suite, outDir: out, jobs: 1, builder: fake, inProcess: fake });
    const o = await runSweep({ suite, outDir: out, jobs: 1, builder: fake, inProcess: fake });
    const text = readFileSync(join(out, 'history.jsonl'), 'utf8');
    expect(text.split('\n')).toHaveLength(3); // two lines + final newline
    const h = readHistory(join(out, 'history.jsonl'));
    expect(h).toHaveLength(2);
    expect(h[1]).toEqual(JSON.parse(JSON.stringify(historyEntry(o.doc, { previous: h[0] }))));
    expect(h[1].suiteChanged).toBe(false);
    expect(h[0].suiteChanged).toBeUndefined();
    expect(h[1].runs).toHaveLength(4);
    const run = o.doc.runs[0].result!;
    expect(h[1].runs[0]).toMatchObject({ matrix: 'alpha', recipe: 'rich-1', outcome: run.outcome, cause: run.cause, iterations: run.iterations, peakBytes: run.memory.peakBytes });
    expect(h[1].runs[0].bufferBytes).toBe(run.memory.matrixBytes + run.memory.preconditionerBytes + run.memory.krylovBytes + run.memory.workBytes);
    expect(h[1].suite?.fingerprint).toBe(suite.fingerprint);
  });

  it('a bad line is an error naming its line number; blank lines are fine', () => {
    const p = join(t.dir, 'h.jsonl');
    const good = JSON.stringify({ date: '2026-12-01T00:00:00Z', slabbench: '0.1.0', runs: [] });
    writeFileSync(p, `${good}\n\n${good}\n`);
    expect(readHistory(p)).toHaveLength(2);
    appendFileSync(p, '{"date": 5, "slabbench": "x", "runs": []}\n');
    expect(() => readHistory(p)).toThrow(`${p}:4: not a history entry: "date": expected a string`);
    writeFileSync(p, `${good}\n{"date": "d", "slab`);
    expect(() => readHistory(p)).toThrow(new RegExp(`^${p.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}:2: not a JSON line`));
    writeFileSync(p, `${good}\n${JSON.stringify({ date: 'd', slabbench: 'x', runs: [{ matrix: 'm', recipe: 'r', reason: 'x', iterations: '3' }] })}\n`);
    expect(() => readHistory(p)).toThrow(`${p}:2: not a history entry: runs[0].iterations: expected a number`);
  });

  it('appending after a cut-off last line starts a new line, and the cut line is still reported', () => {
    const p = join(t.dir, 'cut.jsonl');
    writeFileSync(p, '{"date": "d", "slab');
    appendHistory(p, { date: 'e', slabbench: '0.1.0', runs: [] });
    expect(readFileSync(p, 'utf8').split('\n')[1]).toBe('{"date":"e","slabbench":"0.1.0","runs":[]}');
    expect(() => readHistory(p)).toThrow(/:1: not a JSON line/);
  });
});
