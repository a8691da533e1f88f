/**
 * Direct reference: a sparse block LU, A(perm, perm) = L·U with unit block-lower L and block-upper
 * U, after a minimum-degree ordering of the symmetrized block graph (the elimination-graph model
 * of Rose 1972 and George & Liu 1981; exact degrees, ties to the lowest vertex; from memory).
 *
 * Symbolic first: eliminating a vertex joins its remaining neighbours, so the elimination gives the
 * filled block pattern (of A + Aᵀ, which holds the LU fill of A when no pivoting crosses blocks)
 * and its size before any factor is allocated. The projected bytes (filled blocks × bs² × 8 +
 * indices + workspace) are checked against the limit (DIRECT_MAX_BYTES; the elimination itself
 * stops at DIRECT_MAX_FILLED_BLOCKS); a matrix that does not fit fails setup with reason 'invalid'
 * naming both figures.
 *
 * Numeric: the row-oriented (IKJ) block elimination of block-ilu0.ts on the filled pattern, so
 * nothing is dropped: for each row i, L_ik = A_ik · D_k⁻¹, A_ij −= L_ik · U_kj; D_i is factored with
 * partial pivoting inside the block (dense.ts PIVOT_RTOL, factorBlock) and kept as its explicit
 * inverse. Pivoting is within diagonal blocks only: a matrix whose block LU in this order meets a
 * singular diagonal block fails (zero-pivot, naming the block row) although A may be regular.
 * With exact arithmetic M = A, so `--krylov none` converges in one step and GMRES in one iteration.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { Recipe } from '../solvers/recipe.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import type { Bsr } from '../sparse/types.js';
import { addWork, blockSweepWork, denseWork, kernel, scaledWork, vectorWork, zeroWork } from '../solvers/work.js';
import { kernelF64, kernelI32 } from '../kernels-host/arena.js';
import { blockGraph } from '../sparse/partition.js';
import { checkApplyArgs, checkReady, factorBlock } from './common.js';
import { blockGemm, blockGemmSub, blockMatVec, blockMatVecSub, luInverse } from './dense.js';
import { gatherBlocks, scatterBlocks } from './block-tools.js';

/** Largest projected factor storage the direct solve accepts (bytes). */
export const DIRECT_MAX_BYTES = 1024 * 1024 * 1024;
/** The symbolic elimination stops beyond this many filled off-diagonal blocks. */
export const DIRECT_MAX_FILLED_BLOCKS = 5_000_000;

export function createDirect(system: SystemMatrix, recipe: Recipe): Preconditioner {
  return new DirectPreconditioner(system, recipe.shift, DIRECT_MAX_BYTES);
}

export interface SymbolicLu {
  /** New → old block-row order. */
  perm: Int32Array;
  /** Strictly upper filled pattern by new row (columns ascending, new numbering). */
  upPtr: Int32Array;
  upInd: Int32Array;
  /** Strictly lower filled pattern by new row (columns ascending). */
  loPtr: Int32Array;
  loInd: Int32Array;
}

/**
 * Minimum-degree ordering and the filled pattern, or the number of filled off-diagonal blocks
 * reached when it passed maxFilled (then nothing else is returned).
 */
export function symbolicBlockLu(a: Bsr, maxFilled: number): SymbolicLu | { tooLarge: number } {
  const nb = a.nBlockRows;
  const g = blockGraph(a);
  const adj: Set<number>[] = [];
  for (let v = 0; v < nb; v++) adj.push(new Set(g.adj.subarray(g.ptr[v], g.ptr[v + 1])));
  // binary heap of (degree, vertex) with lazy deletion
  const heapD: number[] = [], heapV: number[] = [];
  const less = (i: number, j: number) => heapD[i] < heapD[j] || (heapD[i] === heapD[j] && heapV[i] < heapV[j]);
  const swap = (i: number, j: number) => {
    [heapD[i], heapD[j]] = [heapD[j], heapD[i]];
    [heapV[i], heapV[j]] = [heapV[j], heapV[i]];
  };
  const push = (d: number, v: number) => {
    heapD.push(d); heapV.push(v);
    let i = heapD.length - 1;
    while (i > 0) { const p = (i - 1) >> 1; if (!less(i, p)) break; swap(i, p); i = p; }
  };
  const pop = (): [number, number] => {
    const top: [number, number] = [heapD[0], heapV[0]];
    const lastD = heapD.pop()!, lastV = heapV.pop()!;
    if (heapD.length > 0) {
      heapD[0] = lastD; heapV[0] = lastV;
      let i = 0;
      for (;;) {
        const l = 2 * i + 1, r = l + 1;
        let m = i;
        if (l < heapD.length && less(l, m)) m = l;
        if (r < heapD.length && less(r, m)) m = r;
        if (m === i) break;
        swap(i, m); i = m;
      }
    }
    return top;
  };
  for (let v = 0; v < nb; v++) push(adj[v].size, v);
  const eliminated = new Uint8Array(nb);
  const perm = new Int32Array(nb);
  const upperOld: Int32Array[] = [];
  let filled = 0;
  for (let k = 0; k < nb; k++) {
    let v: number;
    for (;;) {
      const [d, u] = pop();
      if (!eliminated[u] && d === adj[u].size) { v = u; break; }
    }
    eliminated[v] = 1;
    perm[k] = v;
    const nbrs = Int32Array.from(adj[v]);
    upperOld.push(nbrs);
    filled += 2 * nbrs.length;
    if (filled > maxFilled) return { tooLarge: filled };
    for (const u of nbrs) {
      const s = adj[u];
      s.delete(v);
      for (const w of nbrs) if (w !== u) s.add(w);
      push(s.size, u);
    }
    adj[v] = new Set();
  }
  const inv = new Int32Array(nb);
  for (let k = 0; k < nb; k++) inv[perm[k]] = k;
  const upPtr = new Int32Array(nb + 1);
  for (let k = 0; k < nb; k++) upPtr[k + 1] = upPtr[k] + upperOld[k].length;
  const upInd = new Int32Array(upPtr[nb]);
  const loCount = new Int32Array(nb);
  for (let k = 0; k < nb; k++) {
    const row = upInd.subarray(upPtr[k], upPtr[k + 1]);
    upperOld[k].forEach((u, t) => { row[t] = inv[u]; });
    row.sort();
    for (const j of row) loCount[j]++;
  }
  const loPtr = new Int32Array(nb + 1);
  for (let i = 0; i < nb; i++) loPtr[i + 1] = loPtr[i] + loCount[i];
  const loInd = new Int32Array(loPtr[nb]);
  const fill = loPtr.slice(0, nb);
  for (let k = 0; k < nb; k++) for (let t = upPtr[k]; t < upPtr[k + 1]; t++) loInd[fill[upInd[t]]++] = k; // k ascending
  return { perm, upPtr, upInd, loPtr, loInd };
}

/** Bytes the factors of a symbolic LU take (L and U blocks, D⁻¹, indices, permutation, work vectors). */
export function directBytes(s: SymbolicLu, bs: number): number {
  const nb = s.perm.length;
  const off = s.upInd.length + s.loInd.length;
  return (off + nb) * bs * bs * 8 + off * 4 + 2 * (nb + 1) * 4 + nb * 4 * 2 + 2 * nb * bs * 8 + bs * 4 + 2 * bs * bs * 8;
}

export class DirectPreconditioner implements Preconditioner {
  readonly name = 'direct';
  readonly variable = false;
  readonly n: number;
  private sym?: SymbolicLu;
  private lower: Float64Array = new Float64Array(0);
  private upper: Float64Array = new Float64Array(0);
  private dinv: Float64Array = new Float64Array(0);
  private t: Float64Array = new Float64Array(0);
  private y: Float64Array = new Float64Array(0);
  private applies = 0;
  private ready = false;
  private setupWork: WorkCounts = zeroWork();
  private setupFlops = 0;
  private projected = 0;

  constructor(private readonly system: SystemMatrix, private readonly shift: number, private readonly maxBytes: number) {
    this.n = system.bsr.nBlockRows * system.bsr.bs;
  }

  setup(): SetupOutcome {
    const a = this.system.bsr;
    const { nBlockRows: nb, bs } = a;
    const bb = bs * bs;
    this.ready = false;
    this.applies = 0;
    this.setupWork = zeroWork();
    const s = symbolicBlockLu(a, DIRECT_MAX_FILLED_BLOCKS);
    if ('tooLarge' in s) {
      return {
        ok: false, reason: 'invalid',
        message: `direct: the block LU would hold more than ${s.tooLarge} filled off-diagonal blocks (over ${s.tooLarge * bb * 8} bytes) after minimum-degree ordering; the limit is ${DIRECT_MAX_FILLED_BLOCKS} blocks and ${this.maxBytes} bytes`,
      };
    }
    const need = directBytes(s, bs);
    this.projected = need;
    if (need > this.maxBytes) {
      return {
        ok: false, reason: 'invalid',
        message: `direct: the block LU needs ${need} bytes (${s.upInd.length + s.loInd.length + nb} filled ${bs}×${bs} blocks after minimum-degree ordering), above the limit of ${this.maxBytes} bytes`,
      };
    }
    this.sym = s;
    const { perm, upPtr, upInd, loPtr, loInd } = s;
    const inv = new Int32Array(nb);
    for (let k = 0; k < nb; k++) inv[perm[k]] = k;
    // factors, vectors and the dense kernels' operands in kernel memory when the solve has one (the
    // block kernels then run in WebAssembly)
    this.lower = kernelF64(loInd.length * bb);
    this.upper = kernelF64(upInd.length * bb);
    this.dinv = kernelF64(nb * bb);
    this.t = kernelF64(nb * bs);
    this.y = kernelF64(nb * bs);
    const pos = new Int32Array(nb).fill(-1); // new column → slot in the row buffer
    const diagBuf = kernelF64(bb);
    const prod = kernelF64(bb);
    const piv = kernelI32(bs);
    const work = zeroWork();
    this.setupWork = work;
    let flops = 0;
    for (let i = 0; i < nb; i++) {
      // row buffer: lower slots in this.lower, diagonal in diagBuf, upper slots in this.upper
      const lo0 = loPtr[i], lo1 = loPtr[i + 1], up0 = upPtr[i], up1 = upPtr[i + 1];
      this.lower.fill(0, lo0 * bb, lo1 * bb);
      this.upper.fill(0, up0 * bb, up1 * bb);
      diagBuf.fill(0);
      for (let t = lo0; t < lo1; t++) pos[loInd[t]] = t;
      for (let t = up0; t < up1; t++) pos[upInd[t]] = t;
      const old = perm[i];
      for (let k = a.rowPtr[old]; k < a.rowPtr[old + 1]; k++) {
        const j = inv[a.colInd[k]];
        const src = a.values.subarray(k * bb, k * bb + bb);
        if (j === i) diagBuf.set(src);
        else if (j < i) this.lower.set(src, pos[j] * bb);
        else this.upper.set(src, pos[j] * bb);
      }
      addWork(work, kernel(0, (a.rowPtr[old + 1] - a.rowPtr[old]) * (2 * bb * 8 + 4)));
      for (let t = lo0; t < lo1; t++) {
        const k = loInd[t];
        // L_ik = buf_ik · D_k⁻¹
        prod.set(this.lower.subarray(t * bb, t * bb + bb));
        blockGemm(this.lower, t * bb, prod, 0, this.dinv, k * bb, bs);
        addWork(work, denseWork.gemm(bs));
        flops += 2 * bb * bs;
        for (let u = upPtr[k]; u < upPtr[k + 1]; u++) {
          const j = upInd[u];
          if (j === i) blockGemmSub(diagBuf, 0, this.lower, t * bb, this.upper, u * bb, bs);
          else if (j < i) blockGemmSub(this.lower, pos[j] * bb, this.lower, t * bb, this.upper, u * bb, bs);
          else blockGemmSub(this.upper, pos[j] * bb, this.lower, t * bb, this.upper, u * bb, bs);
        }
        const nu = upPtr[k + 1] - upPtr[k];
        addWork(work, denseWork.gemmSub(bs), nu);
        flops += nu * 2 * bb * bs;
      }
      addWork(work, denseWork.factorBlock(bs, this.shift));
      addWork(work, denseWork.inverse(bs));
      const fail = factorBlock(this.name, old, diagBuf, 0, bs, piv, 0, this.shift);
      for (let t = lo0; t < lo1; t++) pos[loInd[t]] = -1;
      for (let t = up0; t < up1; t++) pos[upInd[t]] = -1;
      if (fail) return fail;
      luInverse(diagBuf, 0, piv, 0, bs, this.dinv, i * bb);
      flops += denseWork.luFlops(bs) + denseWork.inverse(bs).flops;
    }
    this.setupFlops = flops;
    this.ready = true;
    return { ok: true };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    const s = this.sym!;
    const { bs } = this.system.bsr;
    const bb = bs * bs;
    const nb = s.perm.length;
    const { t, y } = this;
    gatherBlocks(r, s.perm, bs, t); // t = r(perm)
    for (let i = 0; i < nb; i++) {
      for (let q = s.loPtr[i]; q < s.loPtr[i + 1]; q++) blockMatVecSub(this.lower, q * bb, bs, t, s.loInd[q] * bs, t, i * bs);
    }
    for (let i = nb - 1; i >= 0; i--) {
      for (let q = s.upPtr[i]; q < s.upPtr[i + 1]; q++) blockMatVecSub(this.upper, q * bb, bs, y, s.upInd[q] * bs, t, i * bs);
      blockMatVec(this.dinv, i * bb, bs, t, i * bs, y, i * bs);
    }
    scatterBlocks(y, s.perm, bs, z);
    this.applies++;
  }

  /** Work model: permute in, forward sweep over L, backward sweep over U with one D⁻¹ mat-vec per row, permute out. */
  work(): { setup: WorkCounts; apply: WorkCounts } {
    const { bs } = this.system.bsr;
    const s = this.sym;
    if (!s) return { setup: { ...this.setupWork }, apply: zeroWork() };
    const nb = s.perm.length;
    const once = addWork(addWork(vectorWork.permute(nb, bs), vectorWork.permute(nb, bs)), blockSweepWork(nb, bs, s.loInd.length));
    addWork(once, blockSweepWork(nb, bs, s.upInd.length));
    addWork(once, denseWork.matVec(bs), nb);
    return { setup: { ...this.setupWork }, apply: { ...scaledWork(once, this.applies), preconditionerApplies: this.applies } };
  }

  memory(): BufferBytes {
    const s = this.sym;
    return {
      'factors (L blocks)': this.lower.byteLength,
      'factors (U blocks)': this.upper.byteLength,
      'inverse diagonal blocks': this.dinv.byteLength,
      'pattern indices': s ? s.upInd.byteLength + s.loInd.byteLength + s.upPtr.byteLength + s.loPtr.byteLength : 0,
      permutation: s ? s.perm.byteLength : 0,
      workspace: this.t.byteLength + this.y.byteLength,
    };
  }

  stats(): Record<string, unknown> {
    const s = this.sym;
    const nb = this.system.bsr.nBlockRows;
    return {
      ordering: 'minimum-degree',
      filledBlocks: s ? s.upInd.length + s.loInd.length + nb : undefined,
      matrixBlocks: this.system.bsr.rowPtr[nb],
      projectedBytes: this.projected,
      limitBytes: this.maxBytes,
      setupFlops: this.setupFlops,
    };
  }
}
