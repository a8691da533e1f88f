/**
 * Layout sidecar: `NAME.layout.json` beside `NAME.mtx` (or `NAME.mtx.gz`), e.g.
 *   { "schema": "slabbench-layout/1", "blockSize": 6, "slabOffsets": [0, 40, 80],
 *     "modes": { "nEquations": 2, "arrangement": "equation-major", "degrees": [0, 1, 1] },
 *     "provenance": { "generator": "duct-pulse", "order": 2 } }
 * A system of a generated sequence also has "sequence": { "kind": "newton" | "slabs", "index", "count", … }.
 * slabOffsets are BLOCK-row offsets: slab s holds block rows slabOffsets[s] .. slabOffsets[s+1]-1.
 * Optional "centroids": { "nCoordinates": 3, "values": [x0, y0, t0, x1, …] }, one point per block
 * row (the coordinate partitioner's input; generated cases write element centroids).
 */
import { existsSync, readFileSync } from 'node:fs';
import type { CentroidLayout, Layout, ModalLayout } from './types.js';
import { MAX_CENTROID_COORDINATES, MAX_INT32_INDEX, MODE_ARRANGEMENTS } from './types.js';
import { UserError, fileError } from '../util/errors.js';
import { writeFileAtomicSync } from '../util/atomic-write.js';

export const LAYOUT_SCHEMA = 'slabbench-layout/1';

/** Sidecar path of a matrix file: strips `.gz`, then `.mtx`, and appends `.layout.json`. */
export function layoutPathFor(mtxPath: string): string {
  let base = mtxPath;
  if (/\.gz$/i.test(base)) base = base.slice(0, -3);
  if (/\.mtx$/i.test(base)) base = base.slice(0, -4);
  else if (/\.npz$/i.test(base)) base = base.slice(0, -4);
  return `${base}.layout.json`;
}

function describe(x: unknown): string {
  if (x === null) return 'null';
  if (Array.isArray(x)) return 'an array';
  if (typeof x === 'string') return `"${x.length > 30 ? `${x.slice(0, 27)}...` : x}"`;
  if (typeof x === 'object') return 'an object';
  return String(x);
}

/**
 * Check a parsed layout object; `where` names the file in messages. Returns it typed.
 * Unknown extra fields are kept (the format is open), known ones must be well formed.
 */
export function validateLayout(obj: unknown, where: string): Layout {
  if (typeof obj !== 'object' || obj === null || Array.isArray(obj)) {
    throw fileError(where, undefined, `expected a JSON object with "blockSize", found ${describe(obj)}`);
  }
  const o = obj as Record<string, unknown>;
  if (o.schema !== undefined && o.schema !== LAYOUT_SCHEMA) {
    throw fileError(where, undefined, `schema: expected "${LAYOUT_SCHEMA}", found ${describe(o.schema)}`);
  }
  const bs = o.blockSize;
  if (bs === undefined) throw fileError(where, undefined, 'blockSize: missing (a positive integer is required)');
  if (typeof bs !== 'number' || !Number.isInteger(bs) || bs < 1 || bs > 4096) {
    throw fileError(where, undefined, `blockSize: expected an integer 1..4096, found ${describe(bs)}`);
  }
  if (o.slabOffsets !== undefined) {
    const s = o.slabOffsets;
    if (!Array.isArray(s)) throw fileError(where, undefined, `slabOffsets: expected an array of block-row offsets, found ${describe(s)}`);
    if (s.length < 2) throw fileError(where, undefined, `slabOffsets: expected at least 2 entries (0 and the number of block rows), found ${s.length}`);
    for (let i = 0; i < s.length; i++) {
      const v = s[i];
      if (typeof v !== 'number' || !Number.isInteger(v) || v < 0 || v > MAX_INT32_INDEX) {
        throw fileError(where, undefined, `slabOffsets[${i}]: expected a non-negative integer, found ${describe(v)}`);
      }
      if (i === 0 && v !== 0) throw fileError(where, undefined, `slabOffsets[0]: expected 0 (offsets start at the first block row), found ${v}`);
      if (i > 0 && v <= (s[i - 1] as number)) {
        throw fileError(where, undefined, `slabOffsets[${i}]: expected more than slabOffsets[${i - 1}] = ${s[i - 1]} (strictly increasing), found ${v}`);
      }
    }
  }
  if (o.zeroBlocks !== undefined) {
    const z = o.zeroBlocks as Record<string, unknown> | null;
    if (typeof z !== 'object' || z === null || Array.isArray(z)) throw fileError(where, undefined, `zeroBlocks: expected an object { count, share }, found ${describe(z)}`);
    if (typeof z.count !== 'number' || !Number.isInteger(z.count) || z.count < 0) throw fileError(where, undefined, `zeroBlocks.count: expected a non-negative integer, found ${describe(z.count)}`);
    if (typeof z.share !== 'number' || !(z.share >= 0 && z.share <= 1)) throw fileError(where, undefined, `zeroBlocks.share: expected a number from 0 to 1, found ${describe(z.share)}`);
  }
  if (o.elementQuality !== undefined) validateElementQuality(o.elementQuality, where);
  if (o.modes !== undefined) validateModes(o.modes, bs, where);
  if (o.centroids !== undefined) validateCentroids(o.centroids, where);
  if (o.sequence !== undefined) {
    const q = o.sequence as Record<string, unknown> | null;
    if (typeof q !== 'object' || q === null || Array.isArray(q)) throw fileError(where, undefined, `sequence: expected an object { kind, index, count, … }, found ${describe(q)}`);
    if (q.kind !== 'newton' && q.kind !== 'slabs') throw fileError(where, undefined, `sequence.kind: expected "newton" or "slabs", found ${describe(q.kind)}`);
    if (typeof q.count !== 'number' || !Number.isInteger(q.count) || q.count < 1) throw fileError(where, undefined, `sequence.count: expected a positive integer, found ${describe(q.count)}`);
    if (typeof q.index !== 'number' || !Number.isInteger(q.index) || q.index < 1 || q.index > q.count) {
      throw fileError(where, undefined, `sequence.index: expected an integer from 1 to ${q.count} (sequence.count), found ${describe(q.index)}`);
    }
  }
  if (o.provenance !== undefined && (typeof o.provenance !== 'object' || o.provenance === null || Array.isArray(o.provenance))) {
    throw fileError(where, undefined, `provenance: expected an object, found ${describe(o.provenance)}`);
  }
  return o as Layout;
}

/** `elementQuality`: { aspectRatio: { min, median, max }, minJacobianDeterminant }, positive finite, min ≤ median ≤ max. */
function validateElementQuality(q: unknown, where: string): void {
  const bad = (field: string, what: string): never => { throw fileError(where, undefined, `elementQuality${field}: ${what}`); };
  const isObject = (x: unknown): x is Record<string, unknown> => typeof x === 'object' && x !== null && !Array.isArray(x);
  if (!isObject(q)) bad('', `expected an object { "aspectRatio", "minJacobianDeterminant" }, found ${describe(q)}`);
  const o = q as Record<string, unknown>;
  const ar = o.aspectRatio;
  if (!isObject(ar)) bad('.aspectRatio', `expected an object { "min", "median", "max" }, found ${describe(ar)}`);
  const a = ar as Record<string, unknown>;
  for (const k of ['min', 'median', 'max']) {
    const v = a[k];
    if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) bad(`.aspectRatio.${k}`, `expected a positive number, found ${describe(v)}`);
  }
  if (!((a.min as number) <= (a.median as number) && (a.median as number) <= (a.max as number))) {
    bad('.aspectRatio', `expected min ≤ median ≤ max, found ${a.min as number}, ${a.median as number}, ${a.max as number}`);
  }
  const det = o.minJacobianDeterminant;
  if (typeof det !== 'number' || !Number.isFinite(det) || det <= 0) {
    bad('.minJacobianDeterminant', `expected a positive number (no inverted or flat element), found ${describe(det)}`);
  }
}

const MODES_FIELDS = ['nEquations', 'arrangement', 'degrees'];

/**
 * The `modes` section: { nEquations, arrangement, degrees }, every field required, no others;
 * degrees non-negative integers, non-decreasing from 0 (hierarchical order), and
 * nEquations · degrees.length = blockSize. Errors name the field path (modes.degrees[3]).
 */
function validateModes(m: unknown, bs: number, where: string): asserts m is ModalLayout {
  const bad = (field: string, what: string): never => { throw fileError(where, undefined, `modes${field}: ${what}`); };
  if (typeof m !== 'object' || m === null || Array.isArray(m)) {
    bad('', `expected an object { "nEquations", "arrangement", "degrees" }, found ${describe(m)}`);
  }
  const o = m as Record<string, unknown>;
  for (const k of Object.keys(o)) {
    if (!MODES_FIELDS.includes(k)) bad(`.${k}`, `unknown field (expected ${MODES_FIELDS.join(', ')})`);
  }
  for (const k of MODES_FIELDS) if (o[k] === undefined) bad(`.${k}`, 'missing');
  const ne = o.nEquations;
  if (typeof ne !== 'number' || !Number.isInteger(ne) || ne < 1 || ne > bs) {
    bad('.nEquations', `expected an integer 1..${bs} (the block size), found ${describe(ne)}`);
  }
  if (typeof o.arrangement !== 'string' || !(MODE_ARRANGEMENTS as readonly string[]).includes(o.arrangement)) {
    bad('.arrangement', `expected one of ${MODE_ARRANGEMENTS.map((a) => `"${a}"`).join(', ')}, found ${describe(o.arrangement)}`);
  }
  const d = o.degrees;
  if (!Array.isArray(d)) bad('.degrees', `expected an array with the total degree of each mode, found ${describe(d)}`);
  const degrees = d as unknown[];
  if (degrees.length === 0) bad('.degrees', 'expected at least one mode, found an empty array');
  for (let a = 0; a < degrees.length; a++) {
    const v = degrees[a];
    if (typeof v !== 'number' || !Number.isInteger(v) || v < 0 || v > 1000) {
      bad(`.degrees[${a}]`, `expected an integer 0..1000, found ${describe(v)}`);
    }
    if (a === 0 && v !== 0) bad('.degrees[0]', `expected 0 (the first mode is the constant), found ${v}`);
    if (a > 0 && (v as number) < (degrees[a - 1] as number)) {
      bad(`.degrees[${a}]`, `expected at least degrees[${a - 1}] = ${degrees[a - 1]} (modes in hierarchical order, degree non-decreasing), found ${v}`);
    }
  }
  if ((ne as number) * degrees.length !== bs) {
    bad('', `nEquations ${ne} × ${degrees.length} degrees = ${(ne as number) * degrees.length} unknowns per block, but blockSize is ${bs}`);
  }
}

/**
 * The `centroids` field: { nCoordinates: 1..MAX_CENTROID_COORDINATES, values: finite numbers, a
 * multiple of nCoordinates }; whether there is one point per block row is checked against the
 * matrix (checkLayoutFits).
 */
function validateCentroids(c: unknown, where: string): asserts c is CentroidLayout {
  const bad = (field: string, what: string): never => { throw fileError(where, undefined, `centroids${field}: ${what}`); };
  if (typeof c !== 'object' || c === null || Array.isArray(c)) bad('', `expected an object { "nCoordinates", "values" }, found ${describe(c)}`);
  const o = c as Record<string, unknown>;
  for (const k of Object.keys(o)) if (k !== 'nCoordinates' && k !== 'values') bad(`.${k}`, 'unknown field (expected nCoordinates, values)');
  const nc = o.nCoordinates;
  if (typeof nc !== 'number' || !Number.isInteger(nc) || nc < 1 || nc > MAX_CENTROID_COORDINATES) {
    bad('.nCoordinates', `expected an integer 1..${MAX_CENTROID_COORDINATES} (coordinates per point), found ${describe(nc)}`);
  }
  const v = o.values;
  if (!Array.isArray(v)) bad('.values', `expected a flat array of coordinates (nCoordinates per block row), found ${describe(v)}`);
  const values = v as unknown[];
  for (let i = 0; i < values.length; i++) {
    if (typeof values[i] !== 'number' || !Number.isFinite(values[i])) bad(`.values[${i}]`, `expected a finite number, found ${describe(values[i])}`);
  }
  if (values.length % (nc as number) !== 0) bad('.values', `${values.length} numbers are not a multiple of nCoordinates ${nc as number}`);
}

/** Check a layout against the matrix it describes (square, divisible, last slab offset). */
export function checkLayoutFits(layout: Layout, nRows: number, nCols: number, where: string): void {
  const bs = layout.blockSize;
  if (nRows % bs !== 0 || nCols % bs !== 0) {
    throw fileError(where, undefined, `blockSize: ${bs} does not divide the matrix size ${nRows}×${nCols}`);
  }
  const s = layout.slabOffsets;
  if (s !== undefined && s[s.length - 1] !== nRows / bs) {
    throw fileError(where, undefined, `slabOffsets: last entry must be the number of block rows, ${nRows / bs}, found ${s[s.length - 1]}`);
  }
  const problem = layout.centroids !== undefined ? centroidsProblem(layout.centroids, nRows / bs) : undefined;
  if (problem !== undefined) throw fileError(where, undefined, problem);
}

/** Why a centroids field does not fit a matrix of nBlockRows block rows (field named), or undefined. */
export function centroidsProblem(c: CentroidLayout, nBlockRows: number): string | undefined {
  const want = nBlockRows * c.nCoordinates;
  if (c.values.length === want) return undefined;
  return `centroids.values: expected ${nBlockRows} points (one per block row) × ${c.nCoordinates} coordinates = ${want} numbers, found ${c.values.length}`;
}

/** Read and validate a layout file. */
export function readLayout(path: string): Layout {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw fileError(path, undefined, code === 'ENOENT' ? 'no such file' : `cannot read (${code ?? String(e)})`);
  }
  let obj: unknown;
  try {
    obj = JSON.parse(text);
  } catch (e) {
    const msg = (e as Error).message;
    const m = /position (\d+)/.exec(msg);
    const line = m ? text.slice(0, Number(m[1])).split('\n').length : undefined;
    // V8 messages sometimes quote the text around the error (with its newlines): keep the first clause.
    const what = msg.replace(/ in JSON at position \d+.*$/s, '').replace(/, \.\.\.".*$/s, '').replace(/, ".*$/s, '').replace(/\s+/g, ' ');
    throw fileError(path, line, `not valid JSON (${what})`);
  }
  return validateLayout(obj, path);
}

/** The layout sidecar of a matrix file, or undefined when there is none. */
export function readLayoutFor(mtxPath: string): Layout | undefined {
  const p = layoutPathFor(mtxPath);
  return existsSync(p) ? readLayout(p) : undefined;
}

const CENTROIDS_SLOT = '\u0000centroids';

/** Write a layout file atomically (schema first, offsets on one line). Invalid layouts are refused. */
export function writeLayout(path: string, layout: Layout): void {
  try {
    validateLayout(layout, path);
  } catch (e) {
    if (e instanceof UserError) throw new UserError(`refusing to write an invalid layout: ${e.message}`);
    throw e;
  }
  const { schema: _schema, blockSize, slabOffsets, modes, provenance, centroids, ...rest } = layout as Layout & { schema?: string };
  void _schema;
  const ordered: Record<string, unknown> = { schema: LAYOUT_SCHEMA, blockSize };
  if (slabOffsets !== undefined) ordered.slabOffsets = Array.from(slabOffsets);
  if (modes !== undefined) ordered.modes = { nEquations: modes.nEquations, arrangement: modes.arrangement, degrees: Array.from(modes.degrees) };
  Object.assign(ordered, rest);
  if (provenance !== undefined) ordered.provenance = provenance;
  // one point per block row, last: spliced in as one line after formatting (not one line per number)
  if (centroids !== undefined) ordered.centroids = { nCoordinates: centroids.nCoordinates, values: CENTROIDS_SLOT };
  let text = JSON.stringify(ordered, null, 2);
  // Keep arrays of plain numbers on one line: a long slabOffsets list stays readable.
  text = text.replace(/\[\s*(-?[\d.eE+-]+(?:,\s*-?[\d.eE+-]+)*)\s*\]/g, (_m, body: string) => `[${body.split(/,\s*/).join(', ')}]`);
  if (centroids !== undefined) text = text.replace(JSON.stringify(CENTROIDS_SLOT), () => `[${centroids.values.join(', ')}]`);
  writeFileAtomicSync(path, `${text}\n`);
}
