// The loaded system's storage: in-place CSR ↔ BSR conversion and keeping one format at a time.
import { describe, it, expect } from 'vitest';
import { bsrMemory, bsrToCsr, csrToBsr } from '../../src/sparse/bsr.js';
import { csrMemory } from '../../src/sparse/csr.js';
import { bsrToCsrInPlace, csrToBsrInPlace } from '../../src/sparse/convert-in-place.js';
import { matrixStore, systemFromMatrix } from '../../src/sparse/system.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { parseRecipe } from '../../src/solvers/recipe.js';
import type { MatrixMarketHeader } from '../../src/sparse/matrix-market-header.js';
import type { Csr } from '../../src/sparse/types.js';
import { rng, randomBsr, randomCsr } from './random-sparse.js';

const copyCsr = (a: Csr): Csr => ({ ...a, rowPtr: a.rowPtr.slice(), colInd: a.colInd.slice(), values: a.values.slice() });
const header = (n: number): MatrixMarketHeader =>
  ({ object: 'matrix', format: 'coordinate', field: 'real', symmetry: 'general', nRows: n, nCols: n, nEntries: 0, comments: [] });

describe('in-place CSR ↔ BSR (full blocks)', () => {
  for (const bs of [1, 2, 3, 7]) {
    it(`bs ${bs}: equals the copying conversions, reuses the value array, detaches the input`, () => {
      const ref = randomBsr(rng(10 + bs), 9, 9, bs, 3);
      const csr = bsrToCsr(ref);
      const values = csr.values;
      const bsr = csrToBsrInPlace(copyCsr(csr), bs);
      expect(bsr).toEqual(csrToBsr(csr, bs));
      const input = copyCsr(csr);
      const viaInPlace = csrToBsrInPlace(input, bs);
      expect(input.nRows).toBe(0); // a stale reference fails its length checks
      expect(input.values.length).toBe(0);
      const back = bsrToCsrInPlace(viaInPlace);
      expect(back).toEqual(csr);
      expect(viaInPlace.nBlockRows).toBe(0);
      expect(values).toBe(csr.values); // the original was only copied, never touched
    });
  }
  it('refuses a CSR whose blocks are not full', () => {
    const partial = randomCsr(rng(3), 12, 12, 4);
    expect(() => csrToBsrInPlace(copyCsr(partial), 3)).toThrow(RangeError);
  });
});

describe('matrixStore: one format at a time', () => {
  const full = bsrToCsr(randomBsr(rng(21), 8, 8, 3, 3));

  it('full blocks: keepOnly converts in place, the other format is built on demand and counted', () => {
    const ref = csrToBsr(full, 3);
    const s = matrixStore(copyCsr(full), 3);
    expect(s.held()).toEqual({ csr: true, bsr: false });
    expect(s.blockStructure().colInd).toEqual(ref.colInd);
    expect(s.held()).toEqual({ csr: true, bsr: false }); // the structure did not build the values
    s.keepOnly('bsr');
    expect(s.held()).toEqual({ csr: false, bsr: true });
    expect(s.bsr).toEqual(ref);
    expect(s.heldBytes()).toEqual(bsrMemory(ref));
    expect(s.csr).toEqual(full); // asked for: built beside the BSR, both counted
    expect(s.held()).toEqual({ csr: true, bsr: true });
    const both = s.heldBytes();
    expect(Object.values(both).reduce((a, b) => a + b, 0)).toBe(
      Object.values(bsrMemory(ref)).reduce((a, b) => a + b, 0) + Object.values(csrMemory(full)).reduce((a, b) => a + b, 0));
    s.keepOnly('csr');
    expect(s.held()).toEqual({ csr: true, bsr: false });
    expect(s.heldBytes()).toEqual(csrMemory(full));
    s.keepOnly('bsr'); s.keepOnly('csr');
    expect(s.csr).toEqual(full);
  });

  it('partially filled blocks: the CSR pattern is kept beside the BSR unless it is the last use', () => {
    const partial = randomCsr(rng(5), 12, 12, 4);
    const s = matrixStore(copyCsr(partial), 3);
    s.keepOnly('bsr');
    expect(s.held()).toEqual({ csr: true, bsr: true });
    expect(s.csr).toEqual(partial);
    s.keepOnly('bsr', { lastUse: true });
    expect(s.held()).toEqual({ csr: false, bsr: true });
    expect(() => s.csr).toThrow(/released/);
  });

  it('bs = 1: both views share the arrays and are counted once', () => {
    const c = randomCsr(rng(6), 20, 20, 3);
    const s = matrixStore(c, 1);
    s.keepOnly('bsr');
    expect(s.bsr.values).toBe(c.values);
    expect(s.csr.values).toBe(c.values);
    expect(s.heldBytes()).toEqual(csrMemory(c));
  });
});

describe('solveSystem on a loaded system counts the one format the recipe needs, b and x', () => {
  const bs = 3;
  const ref = randomBsr(rng(31), 10, 10, bs, 3);
  // diagonally dominant so every method converges
  for (let I = 0; I < 10; I++) for (let k = ref.rowPtr[I]; k < ref.rowPtr[I + 1]; k++) {
    if (ref.colInd[k] === I) for (let i = 0; i < bs; i++) ref.values[k * bs * bs + i * bs + i] += 10;
  }
  const csr = bsrToCsr(ref);
  const n = csr.nRows;
  const b = new Float64Array(n).fill(1);
  for (const [precond, format] of [['block-ilu0', 'bsr'], ['block-jacobi', 'bsr'], ['ilu0', 'csr'], ['jacobi', 'csr'], ['none', 'bsr']] as const) {
    it(`${precond}: matrix bytes are the ${format.toUpperCase()} arrays only`, () => {
      const sys = systemFromMatrix('A.mtx', header(n), copyCsr(csr), { blockSize: bs });
      const { result } = solveSystem(sys, b, parseRecipe({ preconditioner: precond, rtol: 1e-10 }, 'test'));
      expect(result.converged).toBe(true);
      expect(result.memory.buffers.matrix).toEqual(format === 'bsr' ? bsrMemory(ref) : csrMemory(csr));
      expect(result.memory.buffers.work['right-hand side']).toBe(n * 8);
      expect(result.memory.buffers.work.solution).toBe(n * 8);
      expect(result.memory.workBytes).toBe(Object.values(result.memory.buffers.work).reduce((a, v) => a + v, 0));
    });
  }
});
