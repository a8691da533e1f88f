/**
 * The compiled kernel module (dist/kernels/kernels.wasm, built from src/kernels by `npm run build`),
 * compiled once per process (per worker thread) on first use. Every arena instantiates it against
 * its own memory.
 */
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

/** The exports of the kernel module: pointers are byte addresses into the arena's memory. */
export interface KernelExports {
  dot(n: number, x: number, y: number): number;
  sumSquares(n: number, x: number): number;
  norm2(n: number, x: number): number;
  axpy(n: number, a: number, x: number, y: number): void;
  scale(n: number, a: number, x: number): void;
  axpyDot(n: number, a: number, x: number, y: number, z: number): number;
  axpyNorm2(n: number, a: number, x: number, y: number): number;
  subtractFrom(n: number, b: number, r: number): void;
  waxpy(n: number, u: number, a: number, v: number, out: number): void;
  bicgDirection(n: number, r: number, beta: number, p: number, omega: number, v: number): void;
  hadamard(n: number, d: number, r: number, z: number): void;
  triad(n: number, a: number, b: number, s: number, c: number): void;
  bsrMulAdd(n: number, bs: number, rowPtr: number, colInd: number, values: number, x: number, alpha: number, z: number, y: number): void;
  bsrMulAddGeneric(n: number, bs: number, rowPtr: number, colInd: number, values: number, x: number, alpha: number, z: number, y: number): void;
  csrMulAdd(nRows: number, rowPtr: number, colInd: number, values: number, x: number, alpha: number, z: number, y: number): void;
  blockMatVec(a: number, bs: number, x: number, y: number): void;
  blockMatVecSub(a: number, bs: number, x: number, y: number): void;
  luSolve(lu: number, piv: number, bs: number, x: number): void;
  luFactor(a: number, bs: number, piv: number, tiny: number): number;
  luFactorUnblocked(a: number, bs: number, piv: number, tiny: number): number;
  luInverse(lu: number, piv: number, bs: number, out: number): void;
  blockGemmSub(c: number, a: number, b: number, bs: number): void;
  blockGemm(c: number, a: number, b: number, bs: number): void;
  allFinite(a: number, len: number): number;
  blockMaxAbs(a: number, bs: number): number;
  blockIluSweeps(nb: number, bs: number, lowerPtr: number, lowerCol: number, lower: number,
    upperPtr: number, upperCol: number, upper: number, y: number, t: number): void;
  blockDiagonalApply(nb: number, bs: number, f: number, r: number, z: number): void;
  blockDiagonalLuSolve(nb: number, bs: number, f: number, piv: number, z: number): void;
  blockGsSweep(nb: number, bs: number, rowPtr: number, colInd: number, values: number, perm: number, inv: number,
    f: number, piv: number, lu: number, rhs: number, x: number, t: number, forward: number, first: number, omega: number,
    prefix: number, prefixMode: number): void;
  iluPointSweeps(n: number, rowPtr: number, colInd: number, lu: number, diag: number, r: number, z: number): void;
  gatherBlocks(n: number, x: number, perm: number, bs: number, out: number): void;
  scatterBlocks(n: number, x: number, perm: number, bs: number, out: number): void;
  airRelax(nPts: number, pts: number, bs: number, rowPtr: number, colInd: number, values: number, dinv: number,
    b: number, x: number, t: number, zeroGuess: number): void;
  airRestrict(nC: number, cPoints: number, bs: number, zRowPtr: number, zColInd: number, zValues: number, res: number, bc: number): void;
  airProlong(nC: number, cPoints: number, nF: number, fPoints: number, wCol: number, wValues: number, bs: number, xc: number, x: number): void;
}

/** The part of the WebAssembly JS API used here (the project's lib setting has no DOM types). */
export interface WasmMemory { readonly buffer: ArrayBuffer }
interface WasmModule { readonly __module?: never }
interface WasmApi {
  Module: new (bytes: Uint8Array) => WasmModule;
  Instance: new (m: WasmModule, imports: object) => { exports: object };
  Memory: new (d: { initial: number; maximum: number }) => WasmMemory;
}
export const WA = (globalThis as unknown as { WebAssembly: WasmApi }).WebAssembly;

let compiled: WasmModule | null | undefined;
let missingReason = '';

/** Where the built module lives: next to this file's folder when built (dist/), else under dist/. */
function wasmPath(): string | undefined {
  const candidates = [
    new URL('../kernels/kernels.wasm', import.meta.url), // dist/kernels-host → dist/kernels
    new URL('../../dist/kernels/kernels.wasm', import.meta.url), // src/kernels-host → dist/kernels
  ];
  for (const u of candidates) {
    const p = fileURLToPath(u);
    if (existsSync(p)) return p;
  }
  return undefined;
}

/** The compiled module, or null when it is not built (kernelModuleProblem() says why). */
export function kernelModule(): WasmModule | null {
  if (compiled !== undefined) return compiled;
  const p = wasmPath();
  if (p === undefined) {
    missingReason = 'the WebAssembly kernel module dist/kernels/kernels.wasm is not built (run npm run build)';
    compiled = null;
    return null;
  }
  try {
    compiled = new WA.Module(readFileSync(p));
  } catch (e) {
    missingReason = `the WebAssembly kernel module ${p} does not load: ${(e as Error).message}`;
    compiled = null;
  }
  return compiled ?? null;
}

export function kernelModuleProblem(): string {
  kernelModule();
  return missingReason;
}

export function instantiateKernels(memory: WasmMemory): KernelExports {
  const m = kernelModule();
  if (m === null) throw new Error(missingReason);
  const inst = new WA.Instance(m, { env: { memory } });
  return inst.exports as unknown as KernelExports;
}
