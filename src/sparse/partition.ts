/**
 * Partitioning the block rows into P parts by recursive graph bisection of the block graph or by
 * recursive coordinate bisection of their centroids, written here (no well-kept partitioner
 * exists on npm).
 *
 * The graph: one vertex per block row, an edge I–J when block (I, J) or (J, I) is stored (I ≠ J),
 * i.e. the symmetrized block pattern. Each bisection of a vertex set:
 * 1. a pseudo-peripheral start vertex by repeated breadth-first searches (George & Liu, Computer
 *    Solution of Large Sparse Positive Definite Systems, 1981, §4.3.2; from memory): from the first
 *    unplaced vertex, take a vertex of smallest degree in the last BFS level, repeat while the
 *    number of levels grows (at most 8 rounds);
 * 2. the set ordered by BFS level structure from that vertex (a disconnected set continues from the
 *    next unvisited vertex), the first share of vertices is the left side (shares proportional to
 *    the number of parts each side receives, so P need not be a power of two);
 * 3. boundary refinement by greedy pairwise swaps in the spirit of Kernighan & Lin (Bell Syst. Tech.
 *    J. 49, 1970; from memory): a few passes that swap the left and right vertex of largest gain
 *    (cut edges removed minus created) while the pair's combined gain is positive; sizes never change.
 *
 * Or recursive coordinate bisection on one point per block row (the layout's element centroids):
 * each set is cut across the axis along which its points spread furthest (bounding box), at the
 * same proportional share, points ordered by that coordinate (ties by block row) — Berger &
 * Bokhari, A partitioning strategy for nonuniform problems on multiprocessors, IEEE Trans.
 * Computers C-36(5), 1987 (from memory). No refinement: the cut is purely geometric, so its edge
 * cut is whatever the geometry gives (reported the same way).
 *
 * Slabs: 'across' (default) bisects the whole space-time graph (parts may hold several slabs:
 * time-parallel); 'within' makes every part lie inside one slab: parts are shared out over the
 * slabs in proportion to their block rows (at least one each, so P ≥ number of slabs), and each
 * slab is bisected on its own.
 *
 * All figures are in the caller's block-row numbering. The permutation maps new → old (as
 * permute.ts expects) and lists part 0's block rows in ascending order, then part 1's, …
 */
import type { Bsr, Centroids } from './types.js';

export type PartitionSlabs = 'across' | 'within';
/** graph: recursive graph bisection of the block graph; coordinates: recursive coordinate bisection. */
export type PartitionMethod = 'graph' | 'coordinates';
export const PARTITION_METHODS: readonly PartitionMethod[] = ['graph', 'coordinates'];

export interface Partition {
  nParts: number;
  /** How the parts were found (describePartition of a given assignment: 'given'). */
  method: PartitionMethod | 'given';
  /** part[I] = the part owning block row I. */
  part: Int32Array;
  /** New → old block-row permutation grouping each part's rows (ascending inside a part). */
  perm: Int32Array;
  /** partOffsets[p]..partOffsets[p+1] in the permuted numbering are part p's rows. */
  partOffsets: Int32Array;
  /** Block rows per part. */
  sizes: number[];
  /** Stored off-diagonal blocks (I, J) with part[I] ≠ part[J]: the interface blocks. */
  edgeCut: number;
  /** Interface blocks by the part of their row. */
  cutBlocksPerPart: number[];
  /** Distinct outside block columns each part's rows reference (its halo), in blocks. */
  haloBlocksPerPart: number[];
  /** haloBlocksPerPart × bs × 8: bytes a part receives for one exchange of a vector. */
  haloBytesPerPart: number[];
  /** Parts each part receives from (its neighbours in the partition). */
  neighboursPerPart: number[];
}

/** Symmetrized adjacency of the block graph without self loops (CSR of vertices). */
export function blockGraph(a: Bsr): { ptr: Int32Array; adj: Int32Array } {
  const nb = a.nBlockRows;
  const deg = new Int32Array(nb);
  for (let I = 0; I < nb; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      const J = a.colInd[k];
      if (J !== I && J < nb) { deg[I]++; deg[J]++; }
    }
  }
  const ptr = new Int32Array(nb + 1);
  for (let I = 0; I < nb; I++) ptr[I + 1] = ptr[I] + deg[I];
  const fill = ptr.slice(0, nb);
  const raw = new Int32Array(ptr[nb]);
  for (let I = 0; I < nb; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      const J = a.colInd[k];
      if (J !== I && J < nb) { raw[fill[I]++] = J; raw[fill[J]++] = I; }
    }
  }
  // sort and deduplicate each list
  const outPtr = new Int32Array(nb + 1);
  let w = 0;
  for (let I = 0; I < nb; I++) {
    const row = raw.subarray(ptr[I], ptr[I + 1]).sort();
    let last = -1;
    for (let t = 0; t < row.length; t++) if (row[t] !== last) { raw[w++] = row[t]; last = row[t]; }
    outPtr[I + 1] = w;
  }
  return { ptr: outPtr, adj: raw.slice(0, w) };
}

interface Graph { ptr: Int32Array; adj: Int32Array }

/**
 * BFS over the vertices with mark[v] === tag from `start`; writes the visit order into `order`
 * from position `pos`, levels into `level`. Returns the new position and the last level's first index.
 */
function bfs(g: Graph, start: number, mark: Int32Array, tag: number, seen: Int32Array, seenTag: number,
  order: Int32Array, pos: number, level: Int32Array): { end: number; lastLevelStart: number; nLevels: number } {
  let head = pos, tail = pos;
  order[tail++] = start; seen[start] = seenTag; level[start] = 0;
  let lastLevelStart = pos, curLevel = 0;
  while (head < tail) {
    const v = order[head];
    if (level[v] !== curLevel) { curLevel = level[v]; lastLevelStart = head; }
    head++;
    for (let k = g.ptr[v]; k < g.ptr[v + 1]; k++) {
      const u = g.adj[k];
      if (mark[u] === tag && seen[u] !== seenTag) { seen[u] = seenTag; level[u] = level[v] + 1; order[tail++] = u; }
    }
  }
  return { end: tail, lastLevelStart, nLevels: curLevel + 1 };
}

/** Degree of v inside the set tagged `tag`. */
function innerDegree(g: Graph, v: number, mark: Int32Array, tag: number): number {
  let d = 0;
  for (let k = g.ptr[v]; k < g.ptr[v + 1]; k++) if (mark[g.adj[k]] === tag) d++;
  return d;
}

/** Shares parts first..first+k−1 out over a set of block rows. */
interface Splitter {
  split(set: Int32Array, first: number, k: number): void;
}

class Bisector implements Splitter {
  private readonly mark: Int32Array;
  private readonly seen: Int32Array;
  private readonly level: Int32Array;
  private readonly order: Int32Array;
  private tagCounter = 1;
  private seenCounter = 1;
  constructor(private readonly g: Graph, nb: number, private readonly part: Int32Array) {
    this.mark = new Int32Array(nb);
    this.seen = new Int32Array(nb);
    this.level = new Int32Array(nb);
    this.order = new Int32Array(nb);
  }

  /** Assign parts first..first+k−1 to the vertices in `set`. */
  split(set: Int32Array, first: number, k: number): void {
    if (k <= 1 || set.length <= 1) { for (const v of set) this.part[v] = first; return; }
    const kLeft = Math.floor(k / 2);
    const nLeft = Math.round((set.length * kLeft) / k);
    const ordered = this.levelOrder(set);
    const left = ordered.slice(0, nLeft);
    const right = ordered.slice(nLeft);
    this.refine(left, right);
    left.sort(); right.sort();
    this.split(left, first, kLeft);
    this.split(right, first + kLeft, k - kLeft);
  }

  /** The set in BFS level order from a pseudo-peripheral vertex, component after component. */
  private levelOrder(set: Int32Array): Int32Array {
    const { g, mark, seen, level, order } = this;
    const tag = ++this.tagCounter;
    for (const v of set) mark[v] = tag;
    const out = new Int32Array(set.length);
    let filled = 0;
    const done = ++this.seenCounter; // vertices already placed in `out`
    for (let s = 0; s < set.length; s++) {
      if (seen[set[s]] === done) continue;
      let start = set[s];
      let levels = 0;
      for (let rounds = 0; rounds < 8; rounds++) {
        const t = ++this.seenCounter;
        const r = bfs(g, start, mark, tag, seen, t, order, 0, level);
        if (r.nLevels <= levels) break;
        levels = r.nLevels;
        let best = order[r.lastLevelStart], bestDeg = Infinity;
        for (let i = r.lastLevelStart; i < r.end; i++) {
          const d = innerDegree(g, order[i], mark, tag);
          if (d < bestDeg) { bestDeg = d; best = order[i]; }
        }
        if (best === start) break;
        start = best;
      }
      // final BFS from start: its component in level order; mark as placed
      const t = ++this.seenCounter;
      const r = bfs(g, start, mark, tag, seen, t, order, 0, level);
      for (let i = 0; i < r.end; i++) { out[filled++] = order[i]; }
      for (let i = 0; i < r.end; i++) seen[order[i]] = done;
    }
    // a BFS stays inside one connected component, so it never reaches (or re-tags) placed vertices
    return out;
  }

  /** Greedy pairwise swaps (Kernighan–Lin style) lowering the cut between left and right. */
  private refine(left: Int32Array, right: Int32Array): void {
    if (left.length === 0 || right.length === 0) return;
    const { g, mark } = this;
    const tl = ++this.tagCounter, tr = ++this.tagCounter;
    for (const v of left) mark[v] = tl;
    for (const v of right) mark[v] = tr;
    const gain = (v: number, own: number, other: number): number => {
      let ext = 0, int = 0;
      for (let k = g.ptr[v]; k < g.ptr[v + 1]; k++) {
        const m = mark[g.adj[k]];
        if (m === other) ext++; else if (m === own) int++;
      }
      return ext - int;
    };
    const adjacent = (u: number, v: number): boolean => {
      for (let k = g.ptr[u]; k < g.ptr[u + 1]; k++) if (g.adj[k] === v) return true;
      return false;
    };
    for (let pass = 0; pass < 4; pass++) {
      const candL = Array.from(left, (v, i) => ({ i, g: gain(v, tl, tr) })).filter((c) => c.g >= -1).sort((a, b) => b.g - a.g);
      const candR = Array.from(right, (v, i) => ({ i, g: gain(v, tr, tl) })).filter((c) => c.g >= -1).sort((a, b) => b.g - a.g);
      let swaps = 0;
      const n = Math.min(candL.length, candR.length, 64);
      for (let t = 0; t < n; t++) {
        const a = left[candL[t].i], b = right[candR[t].i];
        if (mark[a] !== tl || mark[b] !== tr) continue;
        const ga = gain(a, tl, tr), gb = gain(b, tr, tl);
        const total = ga + gb - (adjacent(a, b) ? 2 : 0);
        if (total <= 0) continue;
        mark[a] = tr; mark[b] = tl;
        left[candL[t].i] = b; right[candR[t].i] = a;
        swaps++;
      }
      if (swaps === 0) break;
    }
  }
}

/** Recursive coordinate bisection (see the file comment). */
class CoordinateBisector implements Splitter {
  constructor(private readonly points: Centroids, private readonly part: Int32Array) {}

  split(set: Int32Array, first: number, k: number): void {
    if (k <= 1 || set.length <= 1) { for (const v of set) this.part[v] = first; return; }
    const kLeft = Math.floor(k / 2);
    const nLeft = Math.round((set.length * kLeft) / k);
    const { nCoordinates: nc, values } = this.points;
    let axis = 0, widest = -1;
    for (let d = 0; d < nc; d++) {
      let lo = Infinity, hi = -Infinity;
      for (const v of set) { const x = values[v * nc + d]; if (x < lo) lo = x; if (x > hi) hi = x; }
      if (hi - lo > widest) { widest = hi - lo; axis = d; }
    }
    const ordered = set.slice().sort((u, v) => values[u * nc + axis] - values[v * nc + axis] || u - v);
    const left = ordered.slice(0, nLeft).sort();
    const right = ordered.slice(nLeft).sort();
    this.split(left, first, kLeft);
    this.split(right, first + kLeft, k - kLeft);
  }
}

/** Figures of a given part assignment (sizes, cut, halo, neighbours, grouping permutation). */
export function describePartition(a: Bsr, part: Int32Array, nParts: number, method: Partition['method'] = 'given'): Partition {
  const nb = a.nBlockRows;
  const sizes = new Array<number>(nParts).fill(0);
  for (let I = 0; I < nb; I++) sizes[part[I]]++;
  const partOffsets = new Int32Array(nParts + 1);
  for (let p = 0; p < nParts; p++) partOffsets[p + 1] = partOffsets[p] + sizes[p];
  const fill = partOffsets.slice(0, nParts);
  const perm = new Int32Array(nb);
  for (let I = 0; I < nb; I++) perm[fill[part[I]]++] = I;
  const cutBlocksPerPart = new Array<number>(nParts).fill(0);
  const haloBlocksPerPart = new Array<number>(nParts).fill(0);
  const neighboursPerPart = new Array<number>(nParts).fill(0);
  const stampCol = new Int32Array(a.nBlockCols).fill(-1);
  const stampPart = new Int32Array(nParts).fill(-1);
  let edgeCut = 0;
  for (let p = 0; p < nParts; p++) {
    for (let q = partOffsets[p]; q < partOffsets[p + 1]; q++) {
      const I = perm[q];
      for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
        const J = a.colInd[k];
        const pj = J < nb ? part[J] : -1;
        if (pj === p) continue;
        edgeCut++; cutBlocksPerPart[p]++;
        if (stampCol[J] !== p) { stampCol[J] = p; haloBlocksPerPart[p]++; }
        if (pj >= 0 && stampPart[pj] !== p) { stampPart[pj] = p; neighboursPerPart[p]++; }
      }
    }
  }
  const bytes = a.bs * 8;
  return {
    nParts, method, part, perm, partOffsets, sizes, edgeCut, cutBlocksPerPart, haloBlocksPerPart,
    haloBytesPerPart: haloBlocksPerPart.map((h) => h * bytes), neighboursPerPart,
  };
}

/**
 * Partition the block rows of a square BSR matrix into nParts parts (1 ≤ nParts ≤ nBlockRows;
 * the caller validates and names the option). Deterministic: no random choices. Method
 * 'coordinates' needs `centroids` (one point per block row).
 */
export function partitionBlocks(
  a: Bsr, nParts: number,
  opts: { slabs?: PartitionSlabs; slabOffsets?: Int32Array; method?: PartitionMethod; centroids?: Centroids } = {},
): Partition {
  const nb = a.nBlockRows;
  if (!Number.isInteger(nParts) || nParts < 1 || nParts > nb) {
    throw new RangeError(`partitionBlocks: nParts ${nParts} must be an integer from 1 to ${nb}`);
  }
  const method = opts.method ?? 'graph';
  const part = new Int32Array(nb);
  let bis: Splitter;
  if (method === 'coordinates') {
    const c = opts.centroids;
    if (!c || c.values.length !== nb * c.nCoordinates) {
      throw new RangeError(`partitionBlocks: coordinate bisection needs one point per block row (${nb} block rows, ${c ? `${c.values.length / c.nCoordinates} points` : 'no centroids'})`);
    }
    bis = new CoordinateBisector(c, part);
  } else {
    bis = new Bisector(blockGraph(a), nb, part);
  }
  const offs = opts.slabOffsets;
  if (opts.slabs === 'within' && offs && offs.length >= 2) {
    const nSlabs = offs.length - 1;
    if (nParts < nSlabs) throw new RangeError(`partitionBlocks: parts inside slabs need at least one part per slab (${nSlabs} slabs, ${nParts} parts)`);
    // parts per slab: one each, the rest by largest remaining rows per part (proportional share)
    const per = new Array<number>(nSlabs).fill(1);
    for (let extra = nParts - nSlabs; extra > 0; extra--) {
      let best = 0, bestLoad = -1;
      for (let s = 0; s < nSlabs; s++) {
        const rows = offs[s + 1] - offs[s];
        const load = per[s] < rows ? rows / per[s] : -1;
        if (load > bestLoad) { bestLoad = load; best = s; }
      }
      per[best]++;
    }
    let first = 0;
    for (let s = 0; s < nSlabs; s++) {
      const set = new Int32Array(offs[s + 1] - offs[s]);
      for (let i = 0; i < set.length; i++) set[i] = offs[s] + i;
      bis.split(set, first, per[s]);
      first += per[s];
    }
  } else {
    const all = new Int32Array(nb);
    for (let i = 0; i < nb; i++) all[i] = i;
    bis.split(all, 0, nParts);
  }
  return describePartition(a, part, nParts, method);
}

/** JSON-ready summary of a partition (for stats and results). */
export function partitionSummary(p: Partition, withPermutation: boolean): Record<string, unknown> {
  const out: Record<string, unknown> = {
    parts: p.nParts,
    partitionMethod: p.method,
    partSizes: p.sizes,
    edgeCut: p.edgeCut,
    cutBlocksPerPart: p.cutBlocksPerPart,
    haloBytesPerPart: p.haloBytesPerPart,
    neighboursPerPart: p.neighboursPerPart,
  };
  if (withPermutation) out.permutation = Array.from(p.perm);
  return out;
}
