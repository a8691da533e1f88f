/**
 * The demo suite's hard cases (matrices/suite.json): the Euler shock tube, the Euler vortex and
 * the recirculating room are not block triangular under any permutation (inspect's check: the
 * nonzero block graph has a strongly connected component of more than one block row, so no
 * ordering makes one forward block Gauss–Seidel sweep exact; Natvig & Lie, ECMOR XI 2008), and each
 * committed copy is the case its suite entry generates (the sweep would rebuild it otherwise).
 */
import { describe, it, expect } from 'vitest';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runCli } from './cli-helpers.js';
import { readSuiteCases } from '../../src/dg/suite-cases.js';
import { parseSuite } from '../../src/run/suite.js';
import { prebuiltCase } from '../../src/run/sweep.js';
import { parseGeneratorParams } from '../../src/dg/generate.js';
import { parseRecipe } from '../../src/solvers/recipe.js';
import { readJsonFile } from '../../src/util/json-file.js';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
const suitePath = join(root, 'matrices', 'suite.json');

describe('demo suite: the hard cases', () => {
  for (const name of ['tank-burst', 'hall-eddy', 'room-recirculation']) {
    it(`${name}: inspect finds cycles in the nonzero block graph (not triangular under a permutation)`, async () => {
      const r = await runCli(['inspect', join(root, 'matrices', 'demo', `${name}.mtx.gz`), '--json']);
      expect(r.code).toBe(0);
      const rep = JSON.parse(r.stdout);
      expect(rep.components.triangularUnderPermutation).toBe(false);
      expect(rep.nonzeroPattern.triangularUnderPermutation).toBe(false);
      expect(rep.nonzeroPattern.largestBlockRows).toBeGreaterThan(50);
    });
  }
  it('every committed copy matches its suite entry; the notes say invented', () => {
    const suite = parseSuite(readJsonFile(suitePath, 'suite'), suitePath, dirname(suitePath), { parseGeneratorParams, parseRecipe });
    for (const m of suite.matrices) {
      if (m.kind !== 'generate') continue;
      expect(prebuiltCase(m), m.name).toBeDefined();
    }
    const cases = readSuiteCases(suitePath);
    expect(cases.map((c) => c.name)).toEqual(expect.arrayContaining(['tank-burst', 'hall-eddy', 'room-recirculation']));
    for (const c of cases) expect(c.note).toMatch(/^invented scenario/);
  });
});
