/**
 * Coordinate triples → CSR without per-entry objects. The general path sorts the triples into
 * row buckets IN PLACE (a counting sort whose scatter follows permutation cycles, "American flag"
 * style — common practice), so the column and value arrays become the CSR arrays and peak memory
 * stays at the triples plus the row pointer. Symmetric files need room for the mirrored entries
 * and scatter into fresh arrays instead.
 */

/** A pair found twice; the reader turns it into a line-numbered error. */
export interface DuplicateFound { row: number; col: number }

export interface AssembledCsr {
  rowPtr: Int32Array;
  colInd: Int32Array;
  values: Float64Array;
  /** Entries that were summed into an earlier one (0 when none). */
  nSummed: number;
  /** Set when duplicates === 'reject' and a pair occurs twice; the arrays are then unusable. */
  duplicate?: DuplicateFound;
}

/**
 * General triples (0-based) to CSR. `rows`, `cols`, `vals` hold nnz entries and are permuted in
 * place; the returned colInd/values are `cols`/`vals` themselves unless duplicates were summed
 * (then trimmed copies). rowsSorted: the caller saw nondecreasing rows, the bucket pass is skipped.
 */
export function assembleGeneral(
  nRows: number, rows: Int32Array, cols: Int32Array, vals: Float64Array, nnz: number,
  rowsSorted: boolean, duplicates: 'sum' | 'reject',
): AssembledCsr {
  const rowPtr = new Int32Array(nRows + 1);
  for (let k = 0; k < nnz; k++) rowPtr[rows[k] + 1]++;
  for (let i = 0; i < nRows; i++) rowPtr[i + 1] += rowPtr[i];
  if (!rowsSorted) bucketInPlace(nRows, rowPtr, rows, cols, vals);
  return finishRows(nRows, rowPtr, cols, vals, nnz, duplicates);
}

/**
 * Entries that arrived in row order: `counts[i+1]` holds the entries of row i and becomes the
 * row pointer in place; cols/vals are already grouped by row.
 */
export function assembleRowOrdered(
  nRows: number, counts: Int32Array, cols: Int32Array, vals: Float64Array, nnz: number, duplicates: 'sum' | 'reject',
): AssembledCsr {
  for (let i = 0; i < nRows; i++) counts[i + 1] += counts[i];
  return finishRows(nRows, counts, cols, vals, nnz, duplicates);
}

/**
 * Symmetric / skew-symmetric triples (lower triangle, 0-based) to the full CSR: every
 * off-diagonal (i, j, v) also gives (j, i, sign·v) with sign −1 for skew-symmetric.
 */
export function assembleSymmetric(
  nRows: number, rows: Int32Array, cols: Int32Array, vals: Float64Array, nnz: number,
  skew: boolean, duplicates: 'sum' | 'reject',
): AssembledCsr {
  const rowPtr = new Int32Array(nRows + 1);
  for (let k = 0; k < nnz; k++) {
    const r = rows[k], c = cols[k];
    rowPtr[r + 1]++;
    if (r !== c) rowPtr[c + 1]++;
  }
  for (let i = 0; i < nRows; i++) rowPtr[i + 1] += rowPtr[i];
  const total = rowPtr[nRows];
  const colInd = new Int32Array(total);
  const values = new Float64Array(total);
  const next = rowPtr.slice(0, nRows);
  const sign = skew ? -1 : 1;
  for (let k = 0; k < nnz; k++) {
    const r = rows[k], c = cols[k], v = vals[k];
    let t = next[r]++;
    colInd[t] = c;
    values[t] = v;
    if (r !== c) {
      t = next[c]++;
      colInd[t] = r;
      values[t] = sign * v;
    }
  }
  return finishRows(nRows, rowPtr, colInd, values, total, duplicates);
}

/** Number of entries a symmetric expansion produces (to check limits before allocating). */
export function expandedCount(rows: Int32Array, cols: Int32Array, nnz: number): number {
  let n = nnz;
  for (let k = 0; k < nnz; k++) if (rows[k] !== cols[k]) n++;
  return n;
}

/**
 * Move every triple into its row bucket; rowPtr holds the bucket starts. O(nnz) moves. With many
 * rows a first pass sorts into at most 1024 groups of consecutive rows (few, hot write fronts),
 * then each group, now small enough to stay in cache, is sorted into its rows (two-level MSD
 * radix sort, common practice).
 */
function bucketInPlace(nRows: number, rowPtr: Int32Array, rows: Int32Array, cols: Int32Array, vals: Float64Array): void {
  let shift = 0;
  while ((nRows >> shift) > 1024) shift++;
  if (shift === 0) { cycleSort(0, nRows, 0, rowPtr, rows, cols, vals); return; }
  const nGroups = ((nRows - 1) >> shift) + 1;
  const groupStart = new Int32Array(nGroups + 1);
  for (let g = 0; g <= nGroups; g++) groupStart[g] = rowPtr[Math.min(g << shift, nRows)];
  cycleSort(0, nGroups, shift, groupStart, rows, cols, vals);
  for (let g = 0; g < nGroups; g++) {
    const r0 = g << shift, r1 = Math.min((g + 1) << shift, nRows);
    cycleSort(r0, r1, 0, rowPtr, rows, cols, vals);
  }
}

/**
 * In-place bucket pass: entries in slots start[b0] .. start[b1]-1 have keys (rows >> shift) in
 * [b0, b1); afterwards bucket b holds slots start[b] .. start[b+1]-1. Follows permutation cycles.
 */
function cycleSort(
  b0: number, b1: number, shift: number, start: Int32Array, rows: Int32Array, cols: Int32Array, vals: Float64Array,
): void {
  const next = start.slice(b0, b1);
  for (let b = b0; b < b1; b++) {
    const end = start[b + 1];
    let k = next[b - b0];
    while (k < end) {
      let r = rows[k];
      let key = r >> shift;
      if (key === b) { k++; continue; }
      // Carry the entry out of slot k along its cycle until an entry of bucket b comes back.
      let c = cols[k], v = vals[k];
      while (key !== b) {
        const t = next[key - b0]++;
        const r2 = rows[t], c2 = cols[t], v2 = vals[t];
        rows[t] = r; cols[t] = c; vals[t] = v;
        r = r2; c = c2; v = v2;
        key = r >> shift;
      }
      rows[k] = r; cols[k] = c; vals[k] = v;
      k++;
    }
    next[b - b0] = k;
  }
}

/** Sort each row by column, then sum or report duplicates. */
function finishRows(
  nRows: number, rowPtr: Int32Array, cols: Int32Array, vals: Float64Array, nnz: number,
  duplicates: 'sum' | 'reject',
): AssembledCsr {
  let anyDup = false;
  for (let i = 0; i < nRows; i++) {
    const s = rowPtr[i], e = rowPtr[i + 1];
    let sorted = true;
    for (let k = s + 1; k < e; k++) {
      if (cols[k] <= cols[k - 1]) {
        if (cols[k] === cols[k - 1]) anyDup = true;
        else { sorted = false; break; }
      }
    }
    if (sorted) continue;
    if (e - s <= 24) insertionSort(cols, vals, s, e);
    else heapSort(cols, vals, s, e);
    for (let k = s + 1; k < e; k++) if (cols[k] === cols[k - 1]) { anyDup = true; break; }
  }
  if (!anyDup) return { rowPtr, colInd: subarrayIfShort(cols, nnz), values: subarrayIfShort(vals, nnz), nSummed: 0 };
  if (duplicates === 'reject') {
    for (let i = 0; i < nRows; i++) {
      for (let k = rowPtr[i] + 1; k < rowPtr[i + 1]; k++) {
        if (cols[k] === cols[k - 1]) return { rowPtr, colInd: cols, values: vals, nSummed: 0, duplicate: { row: i, col: cols[k] } };
      }
    }
  }
  // Sum duplicates while compacting in place.
  let w = 0;
  let start = 0;
  for (let i = 0; i < nRows; i++) {
    const e = rowPtr[i + 1];
    const rowStart = w;
    for (let k = start; k < e; k++) {
      if (w > rowStart && cols[w - 1] === cols[k]) vals[w - 1] += vals[k];
      else { cols[w] = cols[k]; vals[w] = vals[k]; w++; }
    }
    start = e;
    rowPtr[i + 1] = w;
  }
  return { rowPtr, colInd: cols.slice(0, w), values: vals.slice(0, w), nSummed: nnz - w };
}

function subarrayIfShort<T extends Int32Array | Float64Array>(a: T, n: number): T {
  return (a.length === n ? a : a.subarray(0, n)) as T;
}

function insertionSort(cols: Int32Array, vals: Float64Array, s: number, e: number): void {
  for (let k = s + 1; k < e; k++) {
    const c = cols[k], v = vals[k];
    let t = k - 1;
    while (t >= s && cols[t] > c) { cols[t + 1] = cols[t]; vals[t + 1] = vals[t]; t--; }
    cols[t + 1] = c; vals[t + 1] = v;
  }
}

/** In-place heap sort of cols[s..e) carrying vals: O(n log n) on any input, no scratch. */
function heapSort(cols: Int32Array, vals: Float64Array, s: number, e: number): void {
  const n = e - s;
  for (let root = (n >> 1) - 1; root >= 0; root--) siftDown(cols, vals, s, root, n);
  for (let end = n - 1; end > 0; end--) {
    const c = cols[s], v = vals[s];
    cols[s] = cols[s + end]; vals[s] = vals[s + end];
    cols[s + end] = c; vals[s + end] = v;
    siftDown(cols, vals, s, 0, end);
  }
}

function siftDown(cols: Int32Array, vals: Float64Array, s: number, root: number, n: number): void {
  const c = cols[s + root], v = vals[s + root];
  let i = root;
  for (;;) {
    let child = 2 * i + 1;
    if (child >= n) break;
    if (child + 1 < n && cols[s + child + 1] > cols[s + child]) child++;
    if (cols[s + child] <= c) break;
    cols[s + i] = cols[s + child]; vals[s + i] = vals[s + child];
    i = child;
  }
  cols[s + i] = c; vals[s + i] = v;
}
