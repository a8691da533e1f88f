/**
 * Space-time slab mesh of Ω × (0, T), Ω = Π_k [0, L_k] in d = 1, 2, 3 space dimensions.
 *
 * The space-time box is a lattice of (d+1)-dimensional boxes: cells[k] per space axis and
 * nSlabs·layersPerSlab layers in time (each slabThickness/layersPerSlab thick). Every box is cut into
 * (d+1)! Kuhn simplices (see kuhn.ts), time being the last coordinate, so the mesh is conforming in
 * space-time: across boxes, layers and slabs, and across periodic sides (vertices there are kept as
 * duplicates, one copy per side, so no element straddles the wrap; faces are matched by the faceShift
 * translation). Elements are numbered slab by slab, inside a slab layer by layer, box by box (space
 * axis 0 fastest), then by Kuhn permutation.
 *
 * Optional shear x_k → x_k + s_k t tilts the elements along a transport direction (volume preserving;
 * periodic images stay exact translates). Optional seeded jitter moves each vertex in SPACE only, by
 * up to jitter·h_k along axis k: time coordinates never move (slab interfaces stay flat t = const),
 * vertices on a non-periodic side keep their normal coordinate (they slide along the side or stay),
 * and the two copies of a periodic vertex move identically.
 *
 * Optional front map (front-map.ts): concentrates the points of one space axis at a moving planar
 * front and lets them travel with it, for thin elements aligned with its space-time trajectory.
 * Order of the moves: lattice → jitter (in cell units, so it scales with the graded cells) → front
 * map → shear. Time coordinates never move. Whenever jitter or the front map moved vertices, every
 * element's orientation is checked and an inverted one is refused (quality.ts).
 */
import { UserError } from '../util/errors.js';
import { kuhnPermutations, kuhnVertexOffsets } from './kuhn.js';
import { buildFaces } from './faces.js';
import { prepareFrontMap, type FrontMap, type FrontMapOptions, type FrontMapSummary } from './front-map.js';
import { checkElementOrientation } from './quality.js';

export { determinant } from './quality.js';

export interface SlabMeshOptions {
  dim: 1 | 2 | 3;
  /** Cells per space axis (length dim, positive integers). */
  cells: number[];
  /** Domain lengths L_k (length dim, > 0); default all 1. */
  extent?: number[];
  nSlabs: number;
  layersPerSlab: number;
  /** Time extent of one slab (> 0); T = nSlabs·slabThickness. */
  slabThickness: number;
  /** Periodic space axes (length dim). */
  periodic: boolean[];
  /** Shear s_k: x_k → x_k + s_k t (length dim); default none. */
  shear?: number[];
  /** Vertex jitter as a fraction of the cell size, 0 ≤ jitter < 0.5 (about 0.2 is safe); default 0. */
  jitter?: number;
  /** Seed of the jitter (integer 0 … 2^32 − 1); default 1. */
  seed?: number;
  /** Front-aligned grading (front-map.ts); default none. */
  front?: FrontMapOptions | null;
}

export { FaceKind, type FaceKindValue } from './face-kind.js';

export interface SpaceTimeMesh {
  /** Space dimension d; elements are (d+1)-simplices with d+2 vertices. */
  readonly dim: 1 | 2 | 3;
  readonly nVertices: number;
  /** (dim+1) per vertex, time last. */
  readonly coords: Float64Array;
  readonly nElements: number;
  /** (dim+2) vertex ids per element (no orientation requirement: Kuhn simplices of odd permutations are negatively oriented). */
  readonly elements: Int32Array;
  readonly nSlabs: number;
  /** Element offsets per slab, length nSlabs + 1. */
  readonly slabOffsets: Int32Array;
  readonly nFaces: number;
  readonly faceLeft: Int32Array;
  /** Local face of the left element = index of its opposite vertex. */
  readonly faceLeftLocal: Int32Array;
  /** −1 on the boundary. */
  readonly faceRight: Int32Array;
  /** −1 on the boundary. */
  readonly faceRightLocal: Int32Array;
  /** (dim+1) per face: add to a point of the left element's face to get the same point on the right one. */
  readonly faceShift: Float64Array;
  /** FaceKind per face. */
  readonly faceKind: Uint8Array;
  /** Space boundary: 2·axis + (0 low | 1 high); −1 for every other kind (periodic included). */
  readonly faceSide: Int8Array;
  /** The options with defaults filled in (for provenance). */
  readonly options: Readonly<Required<SlabMeshOptions>>;
  /** Final time T = nSlabs·slabThickness. */
  readonly finalTime: number;
  /** What the front map resolved to; null without one. */
  readonly front: FrontMapSummary | null;
}

/** Largest mesh built (elements); checked before allocating. */
export const MAX_MESH_ELEMENTS = 20_000_000;

/**
 * Where error messages point: a prefix (e.g. "suite.json: matrices[2].generate"; default
 * "mesh option"), or a function naming each field ('cells', 'jitter', 'front.aspectRatio', …).
 */
export type MeshLabel = string | ((field: string) => string);

function meshFieldName(where: MeshLabel | undefined): (field: string) => string {
  if (typeof where === 'function') return where;
  return (field) => (where === undefined ? `mesh option ${field}` : `${where}.${field}`);
}

/** Validates the options and returns them with defaults; errors are labelled by `where`. */
export function normalizeSlabMeshOptions(opts: SlabMeshOptions, where?: MeshLabel): Required<SlabMeshOptions> {
  const name = meshFieldName(where);
  const fail = (field: string, what: string): never => { throw new UserError(`${name(field)}: ${what}`); };
  const show = (x: unknown): string => (typeof x === 'number' ? String(x) : JSON.stringify(x) ?? String(x));
  if (typeof opts !== 'object' || opts === null) throw new UserError(`${typeof where === 'string' ? where : 'mesh options'}: expected an object`);
  const dim = opts.dim;
  if (dim !== 1 && dim !== 2 && dim !== 3) fail('dim', `expected 1, 2 or 3, got ${String(dim)}`);
  const arrayOf = (field: string, v: unknown, check: (x: unknown) => boolean, what: string): void => {
    if (!Array.isArray(v)) fail(field, `expected an array of ${dim} entries, each ${what}`);
    const a = v as unknown[];
    if (a.length !== dim) fail(field, `expected ${dim} entries (one per space axis), got ${a.length}`);
    a.forEach((x, i) => { if (!check(x)) fail(`${field}[${i}]`, `expected ${what}, got ${show(x)}`); });
  };
  const posInt = (x: unknown): boolean => typeof x === 'number' && Number.isInteger(x) && x >= 1;
  const posFinite = (x: unknown): boolean => typeof x === 'number' && Number.isFinite(x) && x > 0;
  arrayOf('cells', opts.cells, posInt, 'a positive integer');
  const extent = opts.extent ?? new Array<number>(dim).fill(1);
  arrayOf('extent', extent, posFinite, 'a positive number');
  if (!posInt(opts.nSlabs)) fail('nSlabs', `expected a positive integer, got ${show(opts.nSlabs)}`);
  if (!posInt(opts.layersPerSlab)) fail('layersPerSlab', `expected a positive integer, got ${show(opts.layersPerSlab)}`);
  if (!posFinite(opts.slabThickness)) fail('slabThickness', `expected a positive number, got ${show(opts.slabThickness)}`);
  arrayOf('periodic', opts.periodic, (x) => typeof x === 'boolean', 'true or false');
  const shear = opts.shear ?? new Array<number>(dim).fill(0);
  arrayOf('shear', shear, (x) => typeof x === 'number' && Number.isFinite(x), 'a finite number');
  const jitter = opts.jitter ?? 0;
  if (typeof jitter !== 'number' || !(jitter >= 0 && jitter < 0.5)) fail('jitter', `expected a number in [0, 0.5), got ${show(jitter)}`);
  const seed = opts.seed ?? 1;
  if (typeof seed !== 'number' || !Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) {
    fail('seed', `expected an integer in 0..4294967295, got ${show(seed)}`);
  }
  const D = dim + 1;
  let nBoxes = opts.nSlabs * opts.layersPerSlab;
  for (const c of opts.cells) nBoxes *= c;
  let fact = 1;
  for (let k = 2; k <= D; k++) fact *= k;
  const nElements = nBoxes * fact;
  if (nElements > MAX_MESH_ELEMENTS) {
    fail('cells', `mesh would have ${nElements} elements (limit ${MAX_MESH_ELEMENTS}); reduce cells, nSlabs or layersPerSlab`);
  }
  const out: Required<SlabMeshOptions> = {
    dim, cells: [...opts.cells], extent: [...extent], nSlabs: opts.nSlabs, layersPerSlab: opts.layersPerSlab,
    slabThickness: opts.slabThickness, periodic: [...opts.periodic], shear: [...shear], jitter, seed,
    front: opts.front ?? null,
  };
  if (out.front !== null) frontMapOf(out, where);
  return out;
}

/** The prepared front map of normalized options (validated: throws UserError naming the front field). */
function frontMapOf(o: Required<SlabMeshOptions>, where?: MeshLabel): FrontMap {
  const label = meshFieldName(where);
  const name = (field: string): string => label(`front.${field}`);
  const m = { dim: o.dim, cells: o.cells, extent: o.extent, periodic: o.periodic, shear: o.shear, layerThickness: o.slabThickness / o.layersPerSlab };
  return prepareFrontMap(o.front as FrontMapOptions, m, name, o.nSlabs * o.slabThickness);
}

/** Builds the slab mesh; throws UserError naming the bad option (see normalizeSlabMeshOptions). */
export function buildSlabMesh(opts: SlabMeshOptions, where?: MeshLabel): SpaceTimeMesh {
  const o = normalizeSlabMeshOptions(opts, where);
  const d = o.dim;
  const D = d + 1;
  const nT = o.nSlabs * o.layersPerSlab;
  // Lattice of vertices: axis k has cells[k]+1 points (time: nT+1); vertex id = Σ i_k·stride_k, axis 0 fastest.
  const nPts = new Int32Array(D);
  for (let k = 0; k < d; k++) nPts[k] = o.cells[k] + 1;
  nPts[d] = nT + 1;
  const stride = new Int32Array(D);
  let nVertices = 1;
  for (let k = 0; k < D; k++) { stride[k] = nVertices; nVertices *= nPts[k]; }
  const front = o.front === null ? null : frontMapOf(o, where);
  const coords = buildCoordinates(o, nPts, stride, nVertices, front);

  // Elements: slab, layer, space box (axis 0 fastest), Kuhn permutation.
  const perms = kuhnPermutations(D);
  const offsets = kuhnVertexOffsets(D);
  const nKuhn = perms.length / D;
  let nSpaceBoxes = 1;
  for (let k = 0; k < d; k++) nSpaceBoxes *= o.cells[k];
  const nElements = nT * nSpaceBoxes * nKuhn;
  const nv = D + 1;
  const elements = new Int32Array(nElements * nv);
  const offsetIds = new Int32Array(nKuhn * nv);
  for (let s = 0; s < nKuhn; s++) {
    for (let j = 0; j < nv; j++) {
      let id = 0;
      for (let a = 0; a < D; a++) id += offsets[(s * nv + j) * D + a] * stride[a];
      offsetIds[s * nv + j] = id;
    }
  }
  let e = 0;
  for (let layer = 0; layer < nT; layer++) {
    for (let box = 0; box < nSpaceBoxes; box++) {
      let r = box;
      let corner = layer * stride[d];
      for (let k = 0; k < d; k++) {
        const i = r % o.cells[k];
        r = (r - i) / o.cells[k];
        corner += i * stride[k];
      }
      for (let s = 0; s < nKuhn; s++, e++) {
        for (let j = 0; j < nv; j++) elements[e * nv + j] = corner + offsetIds[s * nv + j];
      }
    }
  }
  const perSlab = o.layersPerSlab * nSpaceBoxes * nKuhn;
  const slabOffsets = new Int32Array(o.nSlabs + 1);
  for (let s = 0; s <= o.nSlabs; s++) slabOffsets[s] = s * perSlab;

  if (o.jitter > 0 || front !== null) {
    const moved = [o.jitter > 0 ? 'jitter' : '', front !== null ? 'front' : ''].filter((x) => x !== '');
    const label = meshFieldName(where);
    const cause = moved.map((f) => label(f === 'front' ? 'front.aspectRatio' : f)).join(' with ');
    const hint = front === null ? 'use a smaller jitter (0.2 or less is safe)' : 'lower the jitter, the aspect ratio or the grading';
    checkElementOrientation(coords, elements, nElements, D, slabOffsets, cause, hint);
  }

  const faces = buildFaces({ D, nVertices, elements, nElements, nPts, stride, periodic: o.periodic, extent: o.extent, slabOffsets });
  return {
    dim: d, nVertices, coords, nElements, elements, nSlabs: o.nSlabs, slabOffsets,
    ...faces, options: o, finalTime: o.nSlabs * o.slabThickness, front: front?.summary ?? null,
  };
}

/** Lattice coordinates with jitter, front map and shear; time levels exactly s·thickness at slab interfaces. */
function buildCoordinates(o: Required<SlabMeshOptions>, nPts: Int32Array, stride: Int32Array, nVertices: number, front: FrontMap | null): Float64Array {
  const d = o.dim;
  const D = d + 1;
  const coords = new Float64Array(nVertices * D);
  const h = o.extent.map((L, k) => L / o.cells[k]);
  const idx = new Int32Array(D);
  const jitter = new Float64Array(d);
  const pre = new Float64Array(d); // jittered lattice coordinates, before the front map and the shear
  const fk = front === null ? -1 : front.summary.axis;
  for (let v = 0; v < nVertices; v++) {
    let r = v;
    for (let k = 0; k < D; k++) { idx[k] = r % nPts[k]; r = (r - idx[k]) / nPts[k]; }
    const slab = Math.floor(idx[d] / o.layersPerSlab);
    const inSlab = idx[d] - slab * o.layersPerSlab;
    const t = slab * o.slabThickness + (inSlab * o.slabThickness) / o.layersPerSlab;
    coords[v * D + d] = t;
    for (let k = 0; k < d; k++) {
      jitter[k] = 0;
      if (o.jitter > 0) {
        const onSide = idx[k] === 0 || idx[k] === o.cells[k];
        if (!(onSide && !o.periodic[k])) {
          // canonical periodic index: both copies of a periodic vertex draw the same number
          let key = idx[d];
          for (let a = d - 1; a >= 0; a--) {
            const ia = o.periodic[a] && idx[a] === o.cells[a] ? 0 : idx[a];
            key = key * nPts[a] + ia;
          }
          jitter[k] = o.jitter * h[k] * (2 * hashUniform(o.seed, key, k) - 1);
        }
      }
      // the last lattice point uses L_k itself so that periodic images differ by exactly L_k
      pre[k] = (idx[k] === o.cells[k] ? o.extent[k] : idx[k] * h[k]) + jitter[k];
    }
    for (let k = 0; k < d; k++) {
      let x = pre[k];
      if (k === fk && front !== null) {
        const N = o.cells[k];
        const j = jitter[k] / h[k]; // in cell units: the jitter scales with the graded cells
        if (o.periodic[k] && idx[k] === N) x = front.position(j, pre, t, false) + o.extent[k]; // the low copy, moved by L
        else x = front.position(idx[k] + j, pre, t, !o.periodic[k] && (idx[k] === 0 || idx[k] === N));
      }
      coords[v * D + k] = x + o.shear[k] * t;
    }
  }
  return coords;
}

/** Deterministic uniform number in [0, 1) from (seed, key, axis): integer hash (murmur3 finalizer, common practice). */
function hashUniform(seed: number, key: number, axis: number): number {
  let hsh = (seed ^ 0x9e3779b9) >>> 0;
  const mix = (x: number): void => {
    hsh = Math.imul(hsh ^ x, 0x85ebca6b) >>> 0;
    hsh ^= hsh >>> 13;
    hsh = Math.imul(hsh, 0xc2b2ae35) >>> 0;
    hsh ^= hsh >>> 16;
  };
  mix(key >>> 0);
  mix(Math.floor(key / 4294967296) >>> 0);
  mix(axis + 1);
  return (hsh >>> 0) / 4294967296;
}
