/**
 * The demo suite's hard cases (matrices/suite.json): the Euler shock tube, the Euler vortex, the
 * recirculating room and the acoustic front on the aligned anisotropic mesh are not block triangular under any permutation (inspect's check: the
 * nonzero block graph has a strongly connected component of more than one block row, so no
 * ordering makes one forward block Gauss–Seidel sweep exact; Natvig & Lie, ECMOR XI 2008). That
 * each committed copy is what its suite entry generates is checked in tests/run/suite.test.ts.
 */
import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runCli } from './cli-helpers.js';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

describe('demo suite: the hard cases', () => {
  for (const name of ['tank-burst', 'hall-eddy', 'room-recirculation', 'corridor-front']) {
    it(`${name}: inspect finds cycles in the nonzero block graph (not triangular under a permutation)`, async () => {
      const r = await runCli(['inspect', join(root, 'matrices', 'demo', `${name}.mtx.gz`), '--json']);
      expect(r.code).toBe(0);
      const rep = JSON.parse(r.stdout);
      expect(rep.components.triangularUnderPermutation).toBe(false);
      expect(rep.nonzeroPattern.triangularUnderPermutation).toBe(false);
      expect(rep.nonzeroPattern.largestBlockRows).toBeGreaterThan(50);
    });
  }
  it('corridor-front: the mesh is anisotropic and aligned (layout aspect ratios, front map at the mean-flow speed)', async () => {
    const r = await runCli(['inspect', join(root, 'matrices', 'demo', 'corridor-front.mtx.gz'), '--json']);
    expect(r.code).toBe(0);
    const rep = JSON.parse(r.stdout);
    // The front map's target is A = 100 at the front; away from it the graded cells are far less
    // stretched (README, "Front-aligned meshes").
    expect(rep.elementQuality.aspectRatio.max).toBeGreaterThan(99);
    expect(rep.elementQuality.aspectRatio.max).toBeLessThan(101);
    expect(rep.elementQuality.aspectRatio.median).toBeLessThan(20);
    const layout = JSON.parse(readFileSync(join(root, 'matrices', 'demo', 'corridor-front.layout.json'), 'utf8'));
    // 'align' resolves to the acoustics mean flow (0.5, 0): front normal along x, speed 0.5.
    expect(layout.provenance.frontMap.direction).toEqual([1, 0]);
    expect(layout.provenance.frontMap.speed).toBe(0.5);
  });
});
