import { describe, it, expect } from 'vitest';
import { kuhnPermutations, kuhnVertexOffsets, permutationSign } from '../../src/mesh/kuhn.js';
import { determinant } from '../../src/mesh/space-time.js';

const fact = (n: number): number => { let f = 1; for (let k = 2; k <= n; k++) f *= k; return f; };

describe('Kuhn split of the unit D-cube (Freudenthal 1942; Kuhn 1960)', () => {
  it('D! simplices, each of volume 1/D!, oriented by the sign of their permutation', () => {
    for (let D = 1; D <= 4; D++) {
      const perms = kuhnPermutations(D);
      const off = kuhnVertexOffsets(D);
      const n = perms.length / D;
      expect(n).toBe(fact(D));
      const m = new Float64Array(D * D);
      for (let s = 0; s < n; s++) {
        // vertex 0 is the origin, vertex D the far corner (1, …, 1)
        for (let a = 0; a < D; a++) { expect(off[(s * (D + 1)) * D + a]).toBe(0); expect(off[(s * (D + 1) + D) * D + a]).toBe(1); }
        for (let j = 0; j < D; j++) for (let i = 0; i < D; i++) m[i * D + j] = off[(s * (D + 1) + j + 1) * D + i];
        const det = determinant(m, D);
        expect(Math.abs(det) / fact(D)).toBeCloseTo(1 / fact(D), 15);
        expect(Math.sign(det)).toBe(permutationSign(perms, s * D, D));
      }
    }
  });

  it('the simplices fill the cube without overlap: seeded points lie in exactly one {y_σ(1) ≥ … ≥ y_σ(D)}', () => {
    let seed = 12345;
    const rnd = (): number => { seed = (Math.imul(seed, 1103515245) + 12345) >>> 0; return seed / 4294967296; };
    for (let D = 1; D <= 4; D++) {
      const perms = kuhnPermutations(D);
      const n = perms.length / D;
      for (let t = 0; t < 200; t++) {
        const y = Array.from({ length: D }, rnd);
        let hits = 0;
        for (let s = 0; s < n; s++) {
          let inside = true;
          for (let j = 0; j + 1 < D; j++) if (y[perms[s * D + j]] < y[perms[s * D + j + 1]]) inside = false;
          if (inside) hits++;
        }
        expect(hits).toBe(1);
      }
    }
  });

  it('rejects a bad dimension', () => {
    expect(() => kuhnPermutations(0)).toThrow(/dimension must be 1..8/);
  });
});
