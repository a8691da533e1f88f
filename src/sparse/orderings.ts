/**
 * Block orderings for block Gauss–Seidel and block ILU(0). Every ordering returns perm (new →
 * old: new block row i is old block row perm[i]) and acts WITHIN each time slab when slab
 * offsets are given, so slab s still occupies block rows slabOffsets[s] .. slabOffsets[s+1]−1.
 *
 * Coupling weight (downstream and mdf): for a stored off-diagonal block (I, J),
 *   c_IJ = ‖A_IJ‖_F / ‖A_II‖_F      (‖A_IJ‖_F when the diagonal block is zero or missing),
 * a cheap stand-in for ‖A_II⁻¹ A_IJ‖_F, the size of J's influence on row I relative to I's own
 * block (Persson & Peraire, SIAM J. Sci. Comput. 30(6), 2008, reduce blocks to such scalars;
 * the exact form they use is from memory).
 */
import type { Bsr } from './types.js';
import type { OrderingName } from '../solvers/recipe.js';
import { ORDERING_NAMES } from '../solvers/recipe.js';

export interface BlockOrderingOptions {
  /** Block-row offsets of time slabs: orderings act inside each slab, slabs stay in order. */
  slabOffsets?: Int32Array;
}

export function blockOrdering(a: Bsr, name: OrderingName, opts: BlockOrderingOptions = {}): Int32Array {
  if (!ORDERING_NAMES.includes(name)) {
    throw new RangeError(`blockOrdering: unknown ordering '${String(name)}', expected one of ${ORDERING_NAMES.join(', ')}`);
  }
  if (a.nBlockRows !== a.nBlockCols) throw new RangeError('blockOrdering: matrix is not square in blocks');
  const n = a.nBlockRows;
  const slabs = opts.slabOffsets ?? Int32Array.of(0, n);
  checkSlabs(slabs, n);
  const perm = new Int32Array(n);
  if (name === 'natural') { for (let i = 0; i < n; i++) perm[i] = i; return perm; }
  const weight = name === 'rcm' ? undefined : couplingWeights(a);
  const t = transposePattern(a);
  for (let s = 0; s + 1 < slabs.length; s++) {
    const lo = slabs[s], hi = slabs[s + 1];
    if (hi === lo) continue;
    if (name === 'rcm') rcmSlab(a, t, lo, hi, perm);
    else if (name === 'downstream') downstreamSlab(a, t, weight!, lo, hi, perm);
    else mdfSlab(a, t, weight!, lo, hi, perm);
  }
  return perm;
}

function checkSlabs(slabs: Int32Array, n: number): void {
  if (slabs.length < 2 || slabs[0] !== 0 || slabs[slabs.length - 1] !== n) {
    throw new RangeError(`blockOrdering: slab offsets must start at 0 and end at ${n}`);
  }
  for (let s = 1; s < slabs.length; s++) {
    if (slabs[s] < slabs[s - 1]) throw new RangeError(`blockOrdering: slab offsets decrease at index ${s}`);
  }
}

/** c_IJ for every stored block (0 on diagonal blocks). */
export function couplingWeights(a: Bsr): Float64Array {
  const { nBlockRows: n, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const w = new Float64Array(rowPtr[n]);
  for (let i = 0; i < n; i++) {
    let diag = 0;
    for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) {
      let s = 0;
      for (let p = k * bb; p < (k + 1) * bb; p++) s += values[p] * values[p];
      w[k] = Math.sqrt(s);
      if (colInd[k] === i) diag = w[k];
    }
    const scale = diag > 0 ? 1 / diag : 1;
    for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) w[k] = colInd[k] === i ? 0 : w[k] * scale;
  }
  return w;
}

/** Transposed pattern: for column J, the rows I with a stored block (I, J) and that block's index. */
interface Transposed { ptr: Int32Array; row: Int32Array; block: Int32Array }

function transposePattern(a: Bsr): Transposed {
  const { nBlockRows: n, rowPtr, colInd } = a;
  const nb = rowPtr[n];
  const ptr = new Int32Array(n + 1);
  for (let k = 0; k < nb; k++) ptr[colInd[k] + 1]++;
  for (let j = 0; j < n; j++) ptr[j + 1] += ptr[j];
  const next = ptr.slice(0, n);
  const row = new Int32Array(nb);
  const block = new Int32Array(nb);
  for (let i = 0; i < n; i++) {
    for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) {
      const p = next[colInd[k]]++;
      row[p] = i; block[p] = k;
    }
  }
  return { ptr, row, block };
}

// ---------------------------------------------------------------------------------------------
// Reverse Cuthill–McKee on the symmetrized block graph (Cuthill & McKee 1969; George & Liu,
// Computer Solution of Large Sparse Positive Definite Systems, 1981, for the reversal and the
// pseudo-peripheral start node).

function rcmSlab(a: Bsr, t: Transposed, lo: number, hi: number, perm: Int32Array): void {
  const m = hi - lo;
  // symmetric adjacency restricted to the slab, local indices, duplicates removed
  const deg = new Int32Array(m);
  const mark = new Int32Array(m).fill(-1);
  const adjPtr = new Int32Array(m + 1);
  const tmp: number[] = [];
  const lists: number[][] = new Array(m);
  for (let i = 0; i < m; i++) {
    tmp.length = 0;
    const g = lo + i;
    for (let k = a.rowPtr[g]; k < a.rowPtr[g + 1]; k++) {
      const j = a.colInd[k] - lo;
      if (j >= 0 && j < m && j !== i && mark[j] !== i) { mark[j] = i; tmp.push(j); }
    }
    for (let p = t.ptr[g]; p < t.ptr[g + 1]; p++) {
      const j = t.row[p] - lo;
      if (j >= 0 && j < m && j !== i && mark[j] !== i) { mark[j] = i; tmp.push(j); }
    }
    lists[i] = tmp.slice();
    deg[i] = tmp.length;
    adjPtr[i + 1] = adjPtr[i] + tmp.length;
  }
  const adj = new Int32Array(adjPtr[m]);
  for (let i = 0; i < m; i++) {
    // neighbours by ascending degree, then index: the Cuthill–McKee visiting rule
    const l = lists[i].sort((x, y) => deg[x] - deg[y] || x - y);
    adj.set(l, adjPtr[i]);
  }
  const visited = new Uint8Array(m);
  const queue = new Int32Array(m);
  const level = new Int32Array(m);
  let placed = 0;
  const out = new Int32Array(m);
  while (placed < m) {
    // start from the unvisited node of least degree (lowest index on ties), then move to a
    // pseudo-peripheral node of its component
    let start = -1;
    for (let i = 0; i < m; i++) if (!visited[i] && (start < 0 || deg[i] < deg[start])) start = i;
    start = pseudoPeripheral(start, adjPtr, adj, deg, level, queue, m);
    let head = 0, tail = 0;
    queue[tail++] = start; visited[start] = 1;
    while (head < tail) {
      const v = queue[head++];
      out[placed++] = v;
      for (let p = adjPtr[v]; p < adjPtr[v + 1]; p++) {
        const w = adj[p];
        if (!visited[w]) { visited[w] = 1; queue[tail++] = w; }
      }
    }
  }
  for (let i = 0; i < m; i++) perm[lo + i] = lo + out[m - 1 - i];
}

/** George–Liu pseudo-peripheral node search (a few BFS sweeps). */
function pseudoPeripheral(
  start: number, adjPtr: Int32Array, adj: Int32Array, deg: Int32Array,
  level: Int32Array, queue: Int32Array, m: number,
): number {
  let node = start;
  let ecc = -1;
  for (let sweep = 0; sweep < 8; sweep++) {
    level.fill(-1, 0, m);
    let head = 0, tail = 0;
    queue[tail++] = node; level[node] = 0;
    let last = 0;
    while (head < tail) {
      const v = queue[head++];
      last = level[v];
      for (let p = adjPtr[v]; p < adjPtr[v + 1]; p++) {
        const w = adj[p];
        if (level[w] < 0) { level[w] = level[v] + 1; queue[tail++] = w; }
      }
    }
    if (last <= ecc) break;
    ecc = last;
    let best = -1;
    for (let q = 0; q < tail; q++) {
      const v = queue[q];
      if (level[v] === last && (best < 0 || deg[v] < deg[best])) best = v;
    }
    if (best === node) break;
    node = best;
  }
  return node;
}

// ---------------------------------------------------------------------------------------------
// A small binary min-heap of (primary, secondary, node) with lazy deletion (stale entries are
// skipped by the caller). Ties: smaller secondary, then smaller node index: deterministic.

class MinHeap {
  private k1: Float64Array;
  private k2: Float64Array;
  private node: Int32Array;
  private size = 0;
  constructor(capacity: number) {
    this.k1 = new Float64Array(capacity);
    this.k2 = new Float64Array(capacity);
    this.node = new Int32Array(capacity);
  }
  get length(): number { return this.size; }
  private less(p: number, q: number): boolean {
    const a = this.k1[p], b = this.k1[q];
    if (a !== b) return a < b;
    const c = this.k2[p], d = this.k2[q];
    if (c !== d) return c < d;
    return this.node[p] < this.node[q];
  }
  private swap(p: number, q: number): void {
    let t = this.k1[p]; this.k1[p] = this.k1[q]; this.k1[q] = t;
    t = this.k2[p]; this.k2[p] = this.k2[q]; this.k2[q] = t;
    const u = this.node[p]; this.node[p] = this.node[q]; this.node[q] = u;
  }
  push(key1: number, key2: number, v: number): void {
    if (this.size === this.node.length) this.grow();
    let i = this.size++;
    this.k1[i] = key1; this.k2[i] = key2; this.node[i] = v;
    while (i > 0) {
      const p = (i - 1) >> 1;
      if (!this.less(i, p)) break;
      this.swap(i, p); i = p;
    }
  }
  /** Removes the smallest entry; returns its node and leaves its keys in lastKey1/lastKey2. */
  pop(): number {
    const top = this.node[0];
    this.lastKey1 = this.k1[0];
    this.lastKey2 = this.k2[0];
    this.size--;
    if (this.size > 0) {
      this.k1[0] = this.k1[this.size]; this.k2[0] = this.k2[this.size]; this.node[0] = this.node[this.size];
      let i = 0;
      for (;;) {
        const l = 2 * i + 1, r = l + 1;
        let s = i;
        if (l < this.size && this.less(l, s)) s = l;
        if (r < this.size && this.less(r, s)) s = r;
        if (s === i) break;
        this.swap(i, s); i = s;
      }
    }
    return top;
  }
  lastKey1 = 0;
  lastKey2 = 0;
  private grow(): void {
    const c = this.node.length * 2 + 16;
    const k1 = new Float64Array(c); k1.set(this.k1); this.k1 = k1;
    const k2 = new Float64Array(c); k2.set(this.k2); this.k2 = k2;
    const nd = new Int32Array(c); nd.set(this.node); this.node = nd;
  }
}

// ---------------------------------------------------------------------------------------------
// Downstream: repeatedly place the block whose still-unplaced upstream couplings (the stored
// blocks (I, J) of its row with J not yet placed) weigh least. A block with no unplaced
// upstream neighbour has weight exactly 0, so on an acyclic block graph this is a topological
// order (upstream first) and the permuted matrix is block lower triangular; inside a cycle the
// weakest couplings are the ones left above the diagonal.

function downstreamSlab(a: Bsr, t: Transposed, w: Float64Array, lo: number, hi: number, perm: Int32Array): void {
  const m = hi - lo;
  const count = new Int32Array(m);
  const key = new Float64Array(m);
  const placed = new Uint8Array(m);
  for (let i = 0; i < m; i++) {
    const g = lo + i;
    for (let k = a.rowPtr[g]; k < a.rowPtr[g + 1]; k++) {
      const j = a.colInd[k];
      if (j !== g && j >= lo && j < hi) { count[i]++; key[i] += w[k]; }
    }
    if (count[i] === 0) key[i] = 0;
  }
  const heap = new MinHeap(m + 16);
  for (let i = 0; i < m; i++) heap.push(key[i], 0, i);
  let next = lo;
  while (next < hi) {
    const v = heap.pop();
    if (placed[v] || heap.lastKey1 !== key[v]) continue; // stale entry
    placed[v] = 1;
    perm[next++] = lo + v;
    const g = lo + v;
    // v is now placed: every row I that couples to v loses that upstream weight
    for (let p = t.ptr[g]; p < t.ptr[g + 1]; p++) {
      const I = t.row[p] - lo;
      if (I < 0 || I >= m || I === v || placed[I]) continue;
      count[I]--;
      key[I] = count[I] === 0 ? 0 : Math.max(0, key[I] - w[t.block[p]]);
      heap.push(key[I], 0, I);
    }
  }
}

// ---------------------------------------------------------------------------------------------
// Minimum discarded fill (Persson & Peraire, SIAM J. Sci. Comput. 30(6), 2008; the idea from
// D'Azevedo, Forsyth & Tang, SIAM J. Matrix Anal. Appl. 13(3), 1992). Eliminating block k in
// block ILU(0) would create A_ij −= A_ik A_kk⁻¹ A_kj for every not-yet-eliminated pair i (a row
// coupling to k) and j (a column k couples to); pairs (i, j) outside the pattern are dropped.
// Their weight is taken as c_ik·c_kj (the coupling-weight proxy of ‖A_ii⁻¹A_ik A_kk⁻¹A_kj‖_F,
// submultiplicative), and the block with the least Σ (c_ik c_kj)² goes next; ties go to the
// block with fewer remaining neighbours, then the lower index. Weights come from the original
// matrix (not updated as elimination proceeds) to keep each step at O(deg³ log deg): after
// eliminating k, only k's remaining neighbours are re-scored.

function mdfSlab(a: Bsr, t: Transposed, w: Float64Array, lo: number, hi: number, perm: Int32Array): void {
  const m = hi - lo;
  const { rowPtr, colInd } = a;
  const done = new Uint8Array(m);
  // lazy deletion: a popped entry is current only when its keys match the node's latest score
  const key = new Float64Array(m);
  const degree = new Int32Array(m);
  const heap = new MinHeap(2 * m + 16);

  const score = (v: number): void => {
    const g = lo + v;
    let s = 0;
    let dg = 0;
    for (let p = t.ptr[g]; p < t.ptr[g + 1]; p++) {
      const i = t.row[p];
      if (i === g || i < lo || i >= hi || done[i - lo]) continue;
      dg++;
      const cik = w[t.block[p]];
      for (let q = rowPtr[g]; q < rowPtr[g + 1]; q++) {
        const j = colInd[q];
        if (j === g || j === i || j < lo || j >= hi || done[j - lo]) continue;
        if (binarySearch(colInd, rowPtr[i], rowPtr[i + 1] - 1, j) >= 0) continue;
        const f = cik * w[q];
        s += f * f;
      }
    }
    for (let q = rowPtr[g]; q < rowPtr[g + 1]; q++) {
      const j = colInd[q];
      if (j !== g && j >= lo && j < hi && !done[j - lo]) dg++;
    }
    key[v] = s;
    degree[v] = dg;
    heap.push(s, dg, v);
  };

  for (let v = 0; v < m; v++) score(v);
  let next = lo;
  while (next < hi) {
    const v = heap.pop();
    if (done[v] || heap.lastKey1 !== key[v] || heap.lastKey2 !== degree[v]) continue;
    done[v] = 1;
    perm[next++] = lo + v;
    const g = lo + v;
    for (let p = t.ptr[g]; p < t.ptr[g + 1]; p++) {
      const i = t.row[p] - lo;
      if (i >= 0 && i < m && !done[i]) score(i);
    }
    for (let q = rowPtr[g]; q < rowPtr[g + 1]; q++) {
      const j = colInd[q] - lo;
      if (j >= 0 && j < m && !done[j]) score(j);
    }
  }
}

function binarySearch(arr: Int32Array, lo: number, hi: number, x: number): number {
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const c = arr[mid];
    if (c === x) return mid;
    if (c < x) lo = mid + 1; else hi = mid - 1;
  }
  return -1;
}
