// Value checks from the mutation run of src/sparse/bsr.ts (README, "Mutation testing"): the
// structural check names each problem, the checked entry points name themselves and refuse bad
// sizes, and a product whose x lives in kernel memory but whose y does not runs in TypeScript and
// still gives the reference result (the WebAssembly path needs every array in kernel memory).
import { describe, expect, it } from 'vitest';
import { bsrBlockCount, bsrMultiplyAdd, bsrProblem, bsrResidual, bsrSpmv, bsrSpmvReferenceKernel, csrToBsr } from '../../src/sparse/bsr.js';
import type { Bsr, Csr } from '../../src/sparse/types.js';
import { KernelArena, setActiveArena } from '../../src/kernels-host/arena.js';

/** 3 block rows of 2×2 blocks: (0,0) (0,2) / (1,1) / (2,0) (2,2); values 1, 2, 3, … */
function sample(): Bsr {
  const rowPtr = Int32Array.of(0, 2, 3, 5), colInd = Int32Array.of(0, 2, 1, 0, 2);
  const values = Float64Array.from({ length: 20 }, (_, i) => i + 1);
  return { nBlockRows: 3, nBlockCols: 3, bs: 2, rowPtr, colInd, values };
}

describe('bsrProblem names the first problem', () => {
  it('accepts a well-formed matrix', () => expect(bsrProblem(sample())).toBeUndefined());
  it('accepts an empty block row', () => {
    const a: Bsr = { nBlockRows: 3, nBlockCols: 3, bs: 2, rowPtr: Int32Array.of(0, 2, 2, 4), colInd: Int32Array.of(0, 2, 0, 2), values: new Float64Array(16) };
    expect(bsrProblem(a)).toBeUndefined();
  });
  const cases: Array<[string, (a: Bsr) => Bsr, string]> = [
    ['block size 0', (a) => ({ ...a, bs: 0 }), 'block size 0 is not a positive integer'],
    ['block size 1.5', (a) => ({ ...a, bs: 1.5 }), 'block size 1.5 is not a positive integer'],
    ['short rowPtr', (a) => ({ ...a, rowPtr: a.rowPtr.slice(0, 3) }), 'rowPtr has length 3, expected 4'],
    ['rowPtr[0] ≠ 0', (a) => ({ ...a, rowPtr: Int32Array.of(1, 2, 3, 5) }), 'rowPtr[0] is 1, expected 0'],
    ['colInd length', (a) => ({ ...a, colInd: a.colInd.slice(0, 4) }), 'colInd has length 4, expected 5'],
    ['values length', (a) => ({ ...a, values: a.values.slice(0, 19) }), 'values has length 19, expected 20'],
    ['decreasing rowPtr', (a) => ({ ...a, rowPtr: Int32Array.of(0, 3, 2, 5), colInd: Int32Array.of(0, 1, 2, 0, 2) }), 'rowPtr decreases at block row 1'],
    ['column −1', (a) => ({ ...a, colInd: Int32Array.of(0, 2, -1, 0, 2) }), 'block row 1: block column -1 out of range 0..2'],
    ['column 3', (a) => ({ ...a, colInd: Int32Array.of(0, 3, 1, 0, 2) }), 'block row 0: block column 3 out of range 0..2'],
    ['unsorted', (a) => ({ ...a, colInd: Int32Array.of(2, 0, 1, 0, 2) }), 'block row 0: block columns not ascending and unique at block 1'],
    ['duplicate', (a) => ({ ...a, colInd: Int32Array.of(0, 2, 1, 2, 2) }), 'block row 2: block columns not ascending and unique at block 4'],
  ];
  for (const [what, make, message] of cases) it(what, () => expect(bsrProblem(make(sample()))).toBe(message));
});

describe('checked products name themselves', () => {
  const a = sample();
  const x = new Float64Array(6), y = new Float64Array(6);
  it('wrong lengths and aliasing', () => {
    expect(() => bsrSpmv(a, new Float64Array(5), y)).toThrow(/^bsrSpmv: x has length 5, expected 6$/);
    expect(() => bsrSpmv(a, x, new Float64Array(7))).toThrow(/^bsrSpmv: y has length 7, expected 6$/);
    expect(() => bsrSpmv(a, x, x)).toThrow(/^bsrSpmv: x and y must be different arrays$/);
    expect(() => bsrMultiplyAdd(a, x, 1, y, new Float64Array(5))).toThrow(/^bsrMultiplyAdd: y has length 5/);
    expect(() => bsrMultiplyAdd(a, x, 1, new Float64Array(5), y)).toThrow(/^bsrMultiplyAdd: z has length 5, expected 6$/);
    expect(() => bsrResidual(a, x, new Float64Array(5), y)).toThrow(/^bsrResidual: b has length 5, expected 6$/);
    expect(() => bsrResidual(a, new Float64Array(4), x, y)).toThrow(/^bsrResidual: x has length 4/);
  });
  it('csrToBsr and bsrBlockCount refuse block sizes that do not divide the matrix', () => {
    const c: Csr = { nRows: 4, nCols: 6, rowPtr: Int32Array.of(0, 1, 1, 1, 1), colInd: Int32Array.of(5), values: Float64Array.of(1) };
    expect(() => csrToBsr(c, 4)).toThrow(/^csrToBsr: size 4×6 is not divisible by block size 4$/);
    expect(() => csrToBsr({ ...c, nCols: 4 }, 3)).toThrow(/^csrToBsr: size 4×4 is not divisible by block size 3$/);
    expect(() => bsrBlockCount(c, 3)).toThrow(/^bsrBlockCount: size 4×6 is not divisible by block size 3$/);
    expect(() => bsrBlockCount(c, 0)).toThrow(/^bsrBlockCount: block size 0 is not a positive integer$/);
    // one entry at (0, 5): with bs 2 it lands in block (0, 2) of a 2×3 block matrix
    expect(bsrBlockCount(c, 2)).toBe(1);
    const b = csrToBsr(c, 2);
    expect([b.nBlockRows, b.nBlockCols, Array.from(b.rowPtr), Array.from(b.colInd)]).toEqual([2, 3, [0, 1, 1], [2]]);
    expect(Array.from(b.values)).toEqual([0, 1, 0, 0]);
  });
});

describe('arrays partly in kernel memory', () => {
  it('x in kernel memory, y and z on the JavaScript heap: the TypeScript path, the reference result', () => {
    const a = sample();
    const ref = new Float64Array(6);
    const xs = Float64Array.from({ length: 6 }, (_, i) => 0.5 - i);
    bsrSpmvReferenceKernel(3, 2, a.rowPtr, a.colInd, a.values, xs, ref);
    const arena = new KernelArena(1 << 20);
    setActiveArena(arena);
    try {
      const inK = <T extends Float64Array | Int32Array>(v: T): T => { const c = (v instanceof Float64Array ? arena.f64(v.length) : arena.i32(v.length)) as T; c.set(v); return c; };
      const ak: Bsr = { ...a, rowPtr: inK(a.rowPtr), colInd: inK(a.colInd), values: inK(a.values) };
      const x = inK(xs);
      const y = new Float64Array(6).fill(7);
      bsrSpmv(ak, x, y);
      expect(Array.from(y)).toEqual(Array.from(ref));
      const z = Float64Array.from({ length: 6 }, (_, i) => i);
      const y2 = arena.f64(6)!;
      bsrMultiplyAdd(ak, x, 2, z, y2); // z outside kernel memory
      expect(Array.from(y2)).toEqual(Array.from(ref, (v, i) => i + 2 * v));
    } finally {
      setActiveArena(null);
    }
  });
});
