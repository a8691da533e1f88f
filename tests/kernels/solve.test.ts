// The two kernel sets behind one interface: every preconditioner and Krylov method through
// solveSystem on the WebAssembly kernels and on the TypeScript kernels, on seeded random
// non-symmetric block systems. The WebAssembly kernels keep the TypeScript summation order, so the
// residual histories and solutions must agree bit for bit. Plus the fallback and the choice rules.
import { describe, expect, it } from 'vitest';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { kernelChoiceFromEnv, planKernels, KERNELS_ENV } from '../../src/solvers/kernel-plan.js';
import { activeArena } from '../../src/kernels-host/arena.js';
import { UserError } from '../../src/util/errors.js';
import type { Recipe } from '../../src/solvers/recipe.js';
import { randomBsr, randomVector, recipe, systemOf } from '../precond/helpers.js';
import { firstDifference } from './helpers.js';

function system(nb: number, bs: number, seed: number) {
  const pattern: Array<[number, number]> = [];
  for (let i = 1; i < nb; i++) { pattern.push([i, i - 1]); if (i % 3 === 0) pattern.push([i - 3, i]); }
  for (let i = 5; i < nb; i += 4) pattern.push([i, i - 5]);
  return systemOf(randomBsr(nb, bs, pattern, seed, 1.5 * bs), Int32Array.from([0, Math.floor(nb / 2), nb]));
}

const RECIPES: Array<Partial<Recipe>> = [
  { preconditioner: 'none' },
  { preconditioner: 'jacobi' },
  { preconditioner: 'block-jacobi', blockInverse: 'inverse' },
  { preconditioner: 'block-jacobi', blockInverse: 'lu' },
  { preconditioner: 'block-gs', sweep: 'forward' },
  { preconditioner: 'block-gs', sweep: 'symmetric', omega: 1.2, sweeps: 2, ordering: 'rcm', blockInverse: 'lu' },
  { preconditioner: 'block-gs', sweep: 'backward', ordering: 'downstream' },
  { preconditioner: 'block-ilu0' },
  { preconditioner: 'block-ilu0', ordering: 'rcm' },
  { preconditioner: 'ilu0' },
  { preconditioner: 'slab', krylov: 'fgmres' },
  { preconditioner: 'block-ilu0', krylov: 'bicgstab' },
  { preconditioner: 'block-gs', krylov: 'none', maxIterations: 40 },
  { preconditioner: 'block-jacobi', side: 'left', orthogonalization: 'cgs2', restart: 7 },
  { preconditioner: 'block-ilu0', krylov: 'gmres-dr', restart: 8, deflate: 3 },
  { preconditioner: 'block-jacobi', krylov: 'gcro-dr', restart: 8, deflate: 3, orthogonalization: 'cgs2' },
];

describe('solveSystem: WebAssembly kernels against TypeScript kernels', () => {
  for (const bs of [1, 3, 4, 7, 12]) {
    for (const over of RECIPES) {
      const label = Object.entries(over).map(([k, v]) => `${k}=${v}`).join(' ');
      it(`bs ${bs}: ${label}`, () => {
        const sysW = system(24, bs, 900 + bs), sysT = system(24, bs, 900 + bs);
        const n = 24 * bs;
        const b = randomVector(n, 77);
        const bCopy = Float64Array.from(b);
        const r = recipe({ restart: 10, rtol: 1e-10, ...over });
        const w = solveSystem(sysW, b, r, { kernels: 'wasm' });
        const t = solveSystem(sysT, b, r, { kernels: 'typescript' });
        expect(w.result.kernels).toBe('wasm');
        expect(w.result.kernelsNote).toBeUndefined();
        expect(w.result.kernelMemoryBytes).toBeGreaterThan(0);
        expect(t.result.kernels).toBe('typescript');
        expect(w.result.cause).toBe(t.result.cause);
        expect(w.result.iterations).toBe(t.result.iterations);
        expect(w.result.history).toEqual(t.result.history);
        expect(firstDifference(w.x, t.x)).toBeUndefined();
        expect(firstDifference(b, bCopy)).toBeUndefined();
        // the solution handed back is the caller's own array, not a view of kernel memory
        expect(w.x.buffer).not.toBe(sysW.bsr.values.buffer);
        expect(activeArena()).toBeNull();
        // the matrix now lives in kernel memory and still holds the same values
        expect(firstDifference(sysW.bsr.values, sysT.bsr.values)).toBeUndefined();
      });
    }
  }

  it('a second solve on the same system reuses its kernel memory (same results again)', () => {
    const sys = system(30, 5, 3);
    const b = randomVector(150, 1);
    const r = recipe({ preconditioner: 'block-ilu0' });
    const first = solveSystem(sys, b, r, { kernels: 'wasm' });
    const buffer = sys.bsr.values.buffer;
    const second = solveSystem(sys, b, r, { kernels: 'wasm' });
    expect(sys.bsr.values.buffer).toBe(buffer);
    expect(second.result.history).toEqual(first.result.history);
    expect(firstDifference(second.x, first.x)).toBeUndefined();
  });
});

describe('kernel choice and fallback', () => {
  it('auto falls back to TypeScript with a note when the solve does not fit; wasm is then an error', () => {
    const sys = system(10, 4, 5);
    const r = recipe({ preconditioner: 'block-ilu0' });
    const plan = planKernels(sys, r, 'auto', 'bsr', 1000);
    expect(plan.kernels).toBe('typescript');
    expect(plan.note).toMatch(/GiB of kernel memory, more than/);
    expect(activeArena()).toBeNull();
    expect(() => planKernels(sys, r, 'wasm', 'bsr', 1000)).toThrow(UserError);
    expect(() => planKernels(sys, r, 'wasm', 'bsr', 1000)).toThrow(/option --kernels wasm: the solve needs/);
    const fits = planKernels(sys, r, 'auto');
    expect(fits.kernels).toBe('wasm');
    fits.finish();
    expect(activeArena()).toBeNull();
  });

  it(`${KERNELS_ENV} picks the default; a bad value is a one-line UserError naming it`, () => {
    const before = process.env[KERNELS_ENV];
    try {
      delete process.env[KERNELS_ENV];
      expect(kernelChoiceFromEnv()).toBe('auto');
      process.env[KERNELS_ENV] = 'typescript';
      expect(kernelChoiceFromEnv()).toBe('typescript');
      const sys = system(8, 2, 9);
      expect(solveSystem(sys, randomVector(16, 2), recipe()).result.kernels).toBe('typescript');
      process.env[KERNELS_ENV] = 'fast';
      expect(() => kernelChoiceFromEnv()).toThrow(`environment variable ${KERNELS_ENV}: expected one of auto, wasm, typescript, got "fast"`);
    } finally {
      if (before === undefined) delete process.env[KERNELS_ENV]; else process.env[KERNELS_ENV] = before;
    }
  });
});
