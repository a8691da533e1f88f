/**
 * The demo suite's hard cases (matrices/suite.json): the Euler shock tube, the Euler vortex and
 * the recirculating room are not block triangular under any permutation (inspect's check: the
 * nonzero block graph has a strongly connected component of more than one block row, so no
 * ordering makes one forward block Gauss–Seidel sweep exact; Natvig & Lie, ECMOR XI 2008). That
 * each committed copy is what its suite entry generates is checked in tests/run/suite.test.ts.
 */
import { describe, it, expect } from 'vitest';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runCli } from './cli-helpers.js';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

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
});
