/**
 * Reference values: the committed Euler demo matrices (matrices/demo/tank-burst, hall-eddy, made
 * by the point-by-point assembler before the dense-product one) against a fresh generation from
 * their suite parameters — the same block pattern, matrix entries equal to round-off (the sums run
 * in another order now) and the right-hand side identical (its residual is summed as before).
 */
import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import { readMatrixFile } from '../../src/sparse/read-matrix.js';
import { readMatrixMarketVector } from '../../src/sparse/matrix-market-read.js';

const root = join(import.meta.dirname, '..', '..', 'matrices');
const suite = JSON.parse(readFileSync(join(root, 'suite.json'), 'utf8')) as { matrices: { name: string; generate?: Record<string, unknown> }[] };

describe('Euler demo matrices regenerate to round-off', () => {
  for (const name of ['tank-burst', 'hall-eddy']) {
    it(name, async () => {
      const entry = suite.matrices.find((m) => m.name === name)!;
      const system = generateSystem(parseGeneratorParams(entry.generate!, name));
      const fresh = bsrToCsr(system.bsr);
      const { csr } = await readMatrixFile(join(root, 'demo', `${name}.mtx.gz`));
      expect(fresh.nRows).toBe(csr.nRows);
      expect(Array.from(fresh.rowPtr)).toEqual(Array.from(csr.rowPtr));
      expect(Array.from(fresh.colInd)).toEqual(Array.from(csr.colInd));
      let scale = 0, diff = 0;
      for (let k = 0; k < csr.values.length; k++) {
        scale = Math.max(scale, Math.abs(csr.values[k]!));
        diff = Math.max(diff, Math.abs(fresh.values[k]! - csr.values[k]!));
      }
      expect(scale).toBeGreaterThan(0);
      expect(diff).toBeLessThanOrEqual(1e-13 * scale);
      const rhs = await readMatrixMarketVector(join(root, 'demo', `${name}.rhs.mtx`));
      expect(Array.from(system.rhs)).toEqual(Array.from(rhs));
    });
  }
});
