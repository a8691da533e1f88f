/**
 * Generated sequences of linear systems sharing one pattern, as an implicit space-time solver
 * meets them (suite entries `"generate": {…}, "sequence": {…}`):
 *
 *  - newton (Burgers, Euler): system k is the exact Jacobian J(u_{k−1}) with right-hand side
 *    −R(u_{k−1}), u_0 the projected state of the parameters and u_k = u_{k−1} + δ_k, where δ_k
 *    solves system k tightly (slab by slab: forward substitution, dense or banded LU, or GMRES +
 *    block ILU(0) to 1e-12; src/dg/slab-solve.ts). Newton's method converges quadratically near a
 *    solution with a Lipschitz Jacobian (Kelley, Iterative Methods for Linear and Nonlinear
 *    Equations, SIAM 1995, Theorem 5.1.2); the test checks the residual norms.
 *  - slabs (any physics): system k is the diagonal block A_kk of slab k of the generated system
 *    (its Newton step for a nonlinear physics), right-hand side b_k − Σ_{j<k} A_kj x_j with x_j the
 *    computed (tight) solution of the earlier slabs: the previous slab's solution is the slab's
 *    inflow through its bottom face. The computed solutions joined are the slab-by-slab solution
 *    of the whole system.
 *
 * Every recipe of a sweep then solves the same stored systems, so recipes are compared on one
 * sequence (the states come from the tight solves here, not from each recipe's own solution).
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import type { Bsr, Layout, SequenceLayout } from '../sparse/types.js';
import { UserError } from '../util/errors.js';
import { writeMatrixMarketVector } from '../sparse/matrix-market.js';
import { assembleDg } from './assemble.js';
import { assembleCase, buildDiscretization, initialState, type GeneratedSystem, type GeneratorParams } from './generate.js';
import { slabMatrix, solveBySlabs } from './slab-solve.js';
import { writeCaseFiles } from './write-case.js';

export type SequenceSpec = { kind: 'newton'; steps: number } | { kind: 'slabs' };

/** Largest number of systems of a generated sequence. */
export const MAX_SEQUENCE_STEPS = 100;

/** Validate a suite entry's `sequence` object (generated case); `where` names it in messages. */
export function parseSequenceSpec(obj: unknown, where: string, params: GeneratorParams): SequenceSpec {
  if (typeof obj !== 'object' || obj === null || Array.isArray(obj)) {
    throw new UserError(`${where}: expected { "kind": "newton", "steps": N } or { "kind": "slabs" }`);
  }
  const o = obj as Record<string, unknown>;
  if (o.kind === 'newton') {
    for (const k of Object.keys(o)) if (k !== 'kind' && k !== 'steps') throw new UserError(`${where}.${k}: unknown key for a Newton sequence (expected kind, steps)`);
    const steps = o.steps;
    if (typeof steps !== 'number' || !Number.isInteger(steps) || steps < 1 || steps > MAX_SEQUENCE_STEPS) {
      throw new UserError(`${where}.steps: expected an integer from 1 to ${MAX_SEQUENCE_STEPS} (Newton steps, one system each), got ${JSON.stringify(steps)}`);
    }
    if (params.physics !== 'burgers' && params.physics !== 'euler') {
      throw new UserError(`${where}.kind: a Newton sequence needs a nonlinear physics (burgers or euler), got ${params.physics} (use "slabs" for a linear one)`);
    }
    if (params.dropZeroBlocks === true) throw new UserError(`${where}: dropZeroBlocks would give each Newton step its own pattern; remove it from generate`);
    return { kind: 'newton', steps };
  }
  if (o.kind === 'slabs') {
    for (const k of Object.keys(o)) if (k !== 'kind') throw new UserError(`${where}.${k}: unknown key for a slab-marching sequence (expected kind)`);
    if (params.slabs < 2) throw new UserError(`${where}.kind: slab marching needs at least 2 slabs, generate has slabs ${params.slabs}`);
    if (params.slabs > MAX_SEQUENCE_STEPS) throw new UserError(`${where}.kind: slab marching makes one system per slab, at most ${MAX_SEQUENCE_STEPS}; generate has slabs ${params.slabs}`);
    return { kind: 'slabs' };
  }
  throw new UserError(`${where}.kind: expected "newton" or "slabs", got ${JSON.stringify(o.kind)}`);
}

export interface SequenceSystem extends GeneratedSystem {
  layout: Layout & { sequence: SequenceLayout };
  /** newton: the state the Jacobian is taken at (block-row order). */
  state?: Float64Array;
  /** The tight solution the generator computed (the Newton update, or the slab's solution). */
  solution: Float64Array;
}

export interface GeneratedSequence {
  systems: SequenceSystem[];
  /** newton: ‖R(u_k)‖₂ for k = 0 … steps (the last after the final update). */
  residualNorms?: number[];
}

function norm2(v: Float64Array): number {
  let s = 0;
  for (let i = 0; i < v.length; i++) s += v[i] * v[i];
  return Math.sqrt(s);
}

/** Solve a block lower triangular (by slabs) system tightly; a failure is a UserError naming the system. */
function tightSolve(bsr: Bsr, rhs: Float64Array, slabOffsets: ArrayLike<number>, what: string): Float64Array {
  const out = solveBySlabs(bsr, rhs, slabOffsets);
  if (!out.converged) throw new UserError(`${what}: the tight solve that computes the next state failed: ${out.failure?.message ?? 'not converged'}`);
  return out.x;
}

/** Generate the systems of a sequence (in memory). */
export function generateSequence(params: GeneratorParams, spec: SequenceSpec): GeneratedSequence {
  const { resolved, disc } = buildDiscretization(params);
  const { state: u0, scaledElements } = initialState(disc, params);
  if (spec.kind === 'newton') {
    if (!u0) throw new UserError(`a Newton sequence needs a nonlinear physics, got ${params.physics}`);
    const u = Float64Array.from(u0);
    const systems: SequenceSystem[] = [];
    const residualNorms: number[] = [];
    for (let k = 1; k <= spec.steps; k++) {
      let sys: GeneratedSystem;
      try {
        sys = assembleCase(params, resolved, disc, u, k === 1 ? scaledElements : 0);
      } catch (e) {
        if (e instanceof UserError && k > 1) throw new UserError(`Newton step ${k}: the state after step ${k - 1} cannot be linearized: ${e.message}`, e.exitCode);
        throw e;
      }
      const rNorm = norm2(sys.rhs);
      residualNorms.push(rNorm);
      const delta = tightSolve(sys.bsr, sys.rhs, sys.layout.slabOffsets as number[], `Newton step ${k}`);
      const sequence: SequenceLayout = {
        kind: 'newton', index: k, count: spec.steps,
        linearizedAbout: k === 1 ? 'the projected state of the parameters (u_0)' : `u_${k - 1} = u_${k - 2} + the tight solution of step ${k - 1}`,
        residualNorm: rNorm,
      };
      const layout = { ...sys.layout, sequence, provenance: { ...sys.layout.provenance, system: `Newton step ${k} of ${spec.steps}: Jacobian at u_${k - 1}, rhs = -residual at u_${k - 1}` } };
      systems.push({ bsr: sys.bsr, rhs: sys.rhs, layout, state: Float64Array.from(u), solution: delta });
      for (let i = 0; i < u.length; i++) u[i] += delta[i];
    }
    residualNorms.push(norm2(assembleDg(disc, u, { matrix: false }).residual));
    return { systems, residualNorms };
  }
  // slab marching: the diagonal slab blocks of the generated system, marched with computed inflow
  const full = assembleCase(params, resolved, disc, u0, scaledElements);
  const offsets = full.layout.slabOffsets as number[];
  const nSlabs = offsets.length - 1;
  const { bs, rowPtr, colInd, values } = full.bsr;
  const bb = bs * bs;
  const x = new Float64Array(full.rhs.length);
  const systems: SequenceSystem[] = [];
  let first: Bsr | undefined;
  for (let s = 0; s < nSlabs; s++) {
    const lo = offsets[s], hi = offsets[s + 1];
    const a = slabMatrix(full.bsr, lo, hi);
    if (first && !samePattern(first, a)) {
      throw new UserError(`slab ${s + 1} has a block pattern different from slab 1 (element ordering ${params.ordering} differs between slabs); use ordering "natural" for a slab-marching sequence`);
    }
    first ??= a;
    const rhs = new Float64Array((hi - lo) * bs);
    for (let I = lo; I < hi; I++) {
      for (let i = 0; i < bs; i++) {
        let v = full.rhs[I * bs + i];
        for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
          const J = colInd[k];
          if (J >= lo) continue; // within the slab (the matrix is block lower triangular by slabs)
          const o = k * bb + i * bs;
          for (let j = 0; j < bs; j++) v -= values[o + j] * x[J * bs + j];
        }
        rhs[(I - lo) * bs + i] = v;
      }
    }
    const xs = tightSolve(a, rhs, [0, hi - lo], `slab ${s + 1}`);
    x.set(xs, lo * bs);
    const sequence: SequenceLayout = {
      kind: 'slabs', index: s + 1, count: nSlabs, blockRows: [lo, hi],
      inflow: s === 0 ? 'initial data of the parameters' : `the computed solution of slab ${s} (rhs = b_${s + 1} - A_${s + 1},${s} x_${s})`,
    };
    const layout = {
      ...full.layout, slabOffsets: [0, hi - lo], sequence,
      provenance: { ...full.layout.provenance, system: `slab ${s + 1} of ${nSlabs} of the generated system (${String(full.layout.provenance?.system)}), inflow from the computed solution of the slab before` },
    };
    delete (layout as { zeroBlocks?: unknown }).zeroBlocks; // counted on the whole system, not this slab
    systems.push({ bsr: a, rhs, layout, solution: xs });
  }
  return { systems };
}

function samePattern(a: Bsr, b: Bsr): boolean {
  if (a.nBlockRows !== b.nBlockRows || a.colInd.length !== b.colInd.length) return false;
  for (let i = 0; i <= a.nBlockRows; i++) if (a.rowPtr[i] !== b.rowPtr[i]) return false;
  for (let k = 0; k < a.colInd.length; k++) if (a.colInd[k] !== b.colInd[k]) return false;
  return true;
}

/** File names of system k (from 1) of a sequence NAME: NAME-sKK.mtx, .rhs.mtx, .layout.json (and .state.mtx for Newton). */
export function sequenceFileBase(name: string, k: number, count: number): string {
  return `${name}-s${String(k).padStart(Math.max(2, String(count).length), '0')}`;
}

/** Generate a sequence and write its systems into outDir; returns the paths in order. */
export async function writeGeneratedSequence(
  params: GeneratorParams, spec: SequenceSpec, outDir: string, name: string,
): Promise<{ systems: Array<{ mtx: string; rhs: string; layout: string; label: string }> }> {
  if (!/^[A-Za-z0-9][A-Za-z0-9._-]*$/.test(name)) {
    throw new UserError(`case name '${name}': use letters, digits, '.', '_' and '-' (it becomes a file name)`);
  }
  const seq = generateSequence(params, spec);
  mkdirSync(outDir, { recursive: true });
  const out: Array<{ mtx: string; rhs: string; layout: string; label: string }> = [];
  for (const sys of seq.systems) {
    const q = sys.layout.sequence;
    const base = sequenceFileBase(name, q.index, q.count);
    const paths = { mtx: join(outDir, `${base}.mtx`), rhs: join(outDir, `${base}.rhs.mtx`), layout: join(outDir, `${base}.layout.json`) };
    let layout: Layout = sys.layout;
    if (sys.state) {
      const statePath = join(outDir, `${base}.state.mtx`);
      await writeMatrixMarketVector(statePath, sys.state, { comments: [`state u_${q.index - 1} that system ${q.index} of ${name} linearizes about`] });
      layout = { ...layout, sequence: { ...q, stateFile: `${base}.state.mtx` } };
    }
    await writeCaseFiles(paths, { bsr: sys.bsr, rhs: sys.rhs, layout }, base);
    out.push({ ...paths, label: q.kind === 'newton' ? `newton ${q.index}` : `slab ${q.index}` });
  }
  return { systems: out };
}
