/**
 * The machine probe a sweep runs before its first solve, and the modeled time built from it.
 *
 * Probe (about 0.2–0.5 s):
 *  - streaming bandwidth: the triad y[i] = a[i] + s·b[i] over three arrays of 4 Mi doubles
 *    (3 × 32 MiB, beyond the last-level caches of current CPUs), counted as 24 bytes per entry (two
 *    loads, one store; write-allocate traffic not counted), the counting of McCalpin's STREAM
 *    benchmark (IEEE TCCA Newsletter, 1995 — from memory). Best of several passes, as STREAM reports.
 *  - dense block flop rate: the project's own kernels from src/precond/dense.ts — blockGemmSub
 *    (C −= A·B, 2·bs³ flops, the Schur-complement update of block ILU) and luFactor (LU with partial
 *    pivoting, 2/3·bs³ flops to leading order) — on bs 20, 32 and 40 blocks held in cache; the rate
 *    is the median over the block sizes of the best batch.
 *
 * Modeled time of a phase = bytes / bandwidth + flops / flop rate, from the run's exact work
 * counters: a roofline-style sum (common practice), not a prediction of overlap between the two.
 * The probe is one small function on purpose, so a WebAssembly triad can replace it.
 */
import { blockGemmSub, luFactor } from '../precond/dense.js';
import type { MachineProbe, ModelRates, PhaseSeconds } from './results-types.js';

/** Per-phase work counters as SolveResult.work carries them (only the fields the model reads). */
export interface PhaseWork { bytes: number; flops: number }
export interface RunWork { setup: PhaseWork; solve: PhaseWork }

export const PROBE_TRIAD_LENGTH = 1 << 22;
const TRIAD_PASSES = 5;
const FLOP_BLOCK_SIZES = [20, 32, 40] as const;
const FLOP_BATCHES = 4;
/** Target time of one flop batch, seconds. */
const FLOP_BATCH_SECONDS = 0.005;

function triad(a: Float64Array, b: Float64Array, y: Float64Array, s: number): void {
  const n = y.length;
  for (let i = 0; i < n; i++) y[i] = a[i] + s * b[i];
}

/** Streaming bandwidth in GB/s (10⁹ B/s), best of `passes` triad passes after one untimed pass. */
export function probeBandwidth(length = PROBE_TRIAD_LENGTH, passes = TRIAD_PASSES): number {
  const a = new Float64Array(length), b = new Float64Array(length), y = new Float64Array(length);
  a.fill(1.25);
  b.fill(0.75);
  triad(a, b, y, 1.5);
  let best = Infinity;
  for (let p = 0; p < passes; p++) {
    const t = performance.now();
    triad(a, b, y, 1.5 + p * 1e-3);
    const dt = (performance.now() - t) / 1e3;
    if (dt > 0 && dt < best) best = dt;
  }
  if (y[length >> 1] === 42) best *= 1.0000001; // keep the result observable
  return (24 * length) / best / 1e9;
}

/** Dense block flop rate in GFLOP/s: median over block sizes of the best batch of gemm + LU. */
export function probeFlopRate(): number {
  const rates: number[] = [];
  for (const bs of FLOP_BLOCK_SIZES) {
    const bb = bs * bs;
    const A = new Float64Array(bb), B = new Float64Array(bb), C = new Float64Array(bb), L = new Float64Array(bb);
    const src = new Float64Array(bb);
    const piv = new Int32Array(bs);
    // A well-conditioned, non-symmetric block: diagonally dominant with a seeded-looking fill.
    for (let i = 0; i < bs; i++) {
      for (let j = 0; j < bs; j++) {
        const v = Math.sin(1 + i * 7 + j * 3) * 0.5;
        A[i * bs + j] = v; B[i * bs + j] = Math.cos(i + 2 * j) * 0.5;
        src[i * bs + j] = i === j ? bs + 1 : v;
      }
    }
    const flopsPerCall = 2 * bs * bs * bs + (2 / 3) * bs * bs * bs;
    const call = (): void => {
      blockGemmSub(C, 0, A, 0, B, 0, bs);
      L.set(src);
      luFactor(L, 0, bs, piv, 0, 1e-300);
    };
    // Size the batch from a short trial so each batch takes about FLOP_BATCH_SECONDS.
    let calls = 4;
    for (;;) {
      const t = performance.now();
      for (let c = 0; c < calls; c++) call();
      const dt = (performance.now() - t) / 1e3;
      if (dt >= FLOP_BATCH_SECONDS / 4 || calls >= 1 << 20) { calls = Math.max(1, Math.ceil((calls * FLOP_BATCH_SECONDS) / Math.max(dt, 1e-6))); break; }
      calls *= 4;
    }
    let best = Infinity;
    for (let k = 0; k < FLOP_BATCHES; k++) {
      C.fill(0);
      const t = performance.now();
      for (let c = 0; c < calls; c++) call();
      const dt = (performance.now() - t) / 1e3;
      if (dt > 0 && dt < best) best = dt;
    }
    rates.push((flopsPerCall * calls) / best / 1e9);
  }
  rates.sort((x, y) => x - y);
  return rates[rates.length >> 1];
}

export const PROBE_METHOD = `bandwidth: triad y = a + s·b over 3 × ${PROBE_TRIAD_LENGTH} doubles, 24 bytes per entry, best of ${TRIAD_PASSES} passes; `
  + `flop rate: blockGemmSub + luFactor (src/precond/dense.ts) on bs ${FLOP_BLOCK_SIZES.join('/')} blocks, median over bs of the best of ${FLOP_BATCHES} batches`;

/** Run the probe (well under a second on the development machine). */
export function probeMachine(): MachineProbe {
  const t = performance.now();
  const bandwidthGBs = probeBandwidth();
  const flopRateGFLOPs = probeFlopRate();
  return { bandwidthGBs, flopRateGFLOPs, probeSeconds: (performance.now() - t) / 1e3, method: PROBE_METHOD };
}

/** The rates modeled times use: each target when given, else the probe's figure. */
export function modelRates(probe: MachineProbe, target: { bandwidthGBs?: number; flopRateGFLOPs?: number } = {}): ModelRates {
  return {
    bandwidthGBs: target.bandwidthGBs ?? probe.bandwidthGBs,
    flopRateGFLOPs: target.flopRateGFLOPs ?? probe.flopRateGFLOPs,
    bandwidthFrom: target.bandwidthGBs !== undefined ? 'target' : 'probe',
    flopRateFrom: target.flopRateGFLOPs !== undefined ? 'target' : 'probe',
  };
}

/** The work counters of a result, when it carries them. */
export function runWork(result: unknown): RunWork | undefined {
  const w = (result as { work?: { setup?: Partial<PhaseWork>; solve?: Partial<PhaseWork> } } | undefined)?.work;
  const ok = (p: Partial<PhaseWork> | undefined): p is PhaseWork => !!p && typeof p.bytes === 'number' && typeof p.flops === 'number';
  if (!w || !ok(w.setup) || !ok(w.solve)) return undefined;
  return { setup: { bytes: w.setup.bytes, flops: w.setup.flops }, solve: { bytes: w.solve.bytes, flops: w.solve.flops } };
}

/** Modeled seconds of one phase: bytes / bandwidth + flops / flop rate. */
export function modeledPhaseSeconds(w: PhaseWork, rates: Pick<ModelRates, 'bandwidthGBs' | 'flopRateGFLOPs'>): number {
  return w.bytes / (rates.bandwidthGBs * 1e9) + w.flops / (rates.flopRateGFLOPs * 1e9);
}

export function modeledSeconds(work: RunWork, rates: Pick<ModelRates, 'bandwidthGBs' | 'flopRateGFLOPs'>): PhaseSeconds {
  const setupSeconds = modeledPhaseSeconds(work.setup, rates);
  const solveSeconds = modeledPhaseSeconds(work.solve, rates);
  return { setupSeconds, solveSeconds, totalSeconds: setupSeconds + solveSeconds };
}
