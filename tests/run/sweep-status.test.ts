import { describe, expect, it, afterAll } from 'vitest';
import { join } from 'node:path';
import { runSweep } from '../../src/run/sweep.js';
import * as fake from './fixtures/fake-deps.js';
import { readTinySuite, tempDir, writeTinySuite } from './helpers.js';

describe('runSweep status lines (what the progress bar shows while it waits)', () => {
  const t = tempDir();
  afterAll(() => t.cleanup());

  it('says when a matrix is generated, when a run first loads a matrix, and which pair runs next', async () => {
    const suite = readTinySuite(writeTinySuite(t.dir));
    const status: string[] = [];
    await runSweep({ suite, outDir: join(t.dir, 'o'), jobs: 1, builder: fake, inProcess: fake, history: false, onStatus: (s) => status.push(s) });
    const generated = suite.matrices.filter((m) => m.kind === 'generate').map((m) => `preparing ${m.name} (generated case: cached, prebuilt or built now)`);
    expect(status.slice(0, generated.length)).toEqual(generated);
    expect(status.slice(generated.length)).toEqual([
      'loading alpha for rich-1', 'alpha × rich-slow', 'loading beta for rich-1', 'beta × rich-slow',
    ]);
  });
});
