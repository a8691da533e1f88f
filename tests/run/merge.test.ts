import { describe, expect, it, afterAll } from 'vitest';
import { join } from 'node:path';
import { runSweep } from '../../src/run/sweep.js';
import { mergeResults, type ShardFile } from '../../src/run/merge.js';
import type { ResultsDoc } from '../../src/run/results-types.js';
import * as fake from './fixtures/fake-deps.js';
import { readTinySuite, tempDir, writeTinySuite } from './helpers.js';

describe('mergeResults', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());
  const suite = readTinySuite(writeTinySuite(t.dir, { extraRecipes: [{ name: 'rich-3', krylov: 'none', preconditioner: 'jacobi', omega: 0.9 }] }));
  const shards: ShardFile[] = [];
  let whole: ResultsDoc;

  it('the shards of a sweep merge into the same runs, in the same order, as one unsharded sweep', async () => {
    whole = (await runSweep({ suite, outDir: join(t.dir, 'whole'), jobs: 1, builder: fake, inProcess: fake })).doc;
    for (let k = 1; k <= 4; k++) {
      const o = await runSweep({ suite, outDir: join(t.dir, `s${k}`), jobs: 1, builder: fake, inProcess: fake, shard: { index: k, count: 4 }, cacheDir: join(t.dir, 'cache') });
      shards.push({ path: `s${k}/results.json`, doc: o.doc });
    }
    const merged = mergeResults([shards[2], shards[0], shards[3], shards[1]]);
    const key = (d: ResultsDoc) => d.runs.map((r) => [r.matrix, r.recipe, r.result?.iterations, r.result?.cause]);
    expect(key(merged)).toEqual(key(whole));
    // Matrix info equals, except the file path (each sweep records it relative to its own output folder).
    const info = (d: ResultsDoc) => d.matrices.map(({ path: _p, ...rest }) => rest);
    expect(info(merged)).toEqual(info(whole));
    expect(merged.parameters.mergedShards).toBe(4);
    expect(merged.parameters.shard).toBeUndefined();
    expect(merged.status).toBe('complete');
    expect(merged.suite.fingerprint).toBe(suite.fingerprint);
  });

  it('names the missing pairs and the shard that was not given', () => {
    expect(() => mergeResults([shards[0], shards[2], shards[3]])).toThrow(
      // 6 pairs over 4 shards: [0,1) [1,3) [3,4) [4,6) — shard 2 holds alpha × rich-slow and alpha × rich-3.
      'merge: 2 pair(s) missing (shard 2/4 not given): alpha × rich-slow, alpha × rich-3');
  });

  it('names duplicated pairs and a shard given twice', () => {
    expect(() => mergeResults([shards[0], shards[1], { ...shards[1], path: 'copy.json' }])).toThrow(
      'merge: shard 2/4 given twice (s2/results.json and copy.json)');
    const dup = structuredClone(shards[1]);
    dup.doc.parameters.shard = { index: 3, count: 4 };
    dup.path = 'fake3.json';
    expect(() => mergeResults([shards[0], shards[1], dup, shards[3]])).toThrow(
      'merge: 2 pair(s) appear twice: alpha × rich-slow (s2/results.json and fake3.json), alpha × rich-3 (s2/results.json and fake3.json)');
  });

  it('refuses other suites, selections, versions, unfinished shards and mixed shard counts', () => {
    const other = structuredClone(shards[1]);
    other.doc.suite.fingerprint = '0000000000000000';
    expect(() => mergeResults([shards[0], other])).toThrow(/s2\/results\.json: from a different suite than s1\/results\.json/);
    const sel = structuredClone(shards[1]);
    sel.doc.suite.recipeNames = ['rich-1'];
    expect(() => mergeResults([shards[0], sel])).toThrow(/selects different matrices or recipes/);
    const ver = structuredClone(shards[1]);
    ver.doc.slabbench = '9.9.9';
    expect(() => mergeResults([shards[0], ver])).toThrow(/ran slabbench 9\.9\.9/);
    const otherCommit = structuredClone(shards[1]);
    otherCommit.doc.commit = 'f'.repeat(40);
    if (shards[0].doc.commit !== undefined) expect(() => mergeResults([shards[0], otherCommit])).toThrow(/ran slabbench .* at ffffffffffff/);
    const noGit: ShardFile[] = structuredClone(shards).map((s) => ({ ...s, doc: { ...s.doc, commit: undefined } }));
    noGit[0].doc.commit = shards[0].doc.commit;
    expect(mergeResults(noGit).commit).toBe(shards[0].doc.commit); // a shard without git does not block the merge
    const cut = structuredClone(shards[1]);
    cut.doc.status = 'interrupted';
    expect(() => mergeResults([shards[0], cut])).toThrow('s2/results.json: this sweep (shard 2/4) did not finish (status interrupted); run it again before merging');
    const n3 = structuredClone(shards[1]);
    n3.doc.parameters.shard = { index: 2, count: 3 };
    expect(() => mergeResults([shards[0], n3])).toThrow('merge: the files come from different shard counts (N=4, N=3)');
    expect(() => mergeResults([])).toThrow('merge: no result files given');
  });

  it('rejects a run outside the sweep', () => {
    const extra = structuredClone(shards[3]);
    extra.doc.runs.push({ ...extra.doc.runs[0], matrix: 'zeta' });
    expect(() => mergeResults([shards[0], shards[1], shards[2], extra])).toThrow(/1 run\(s\) not in the sweep's matrix × recipe list: zeta × /);
  });
});
