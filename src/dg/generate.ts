import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { buildSlabMesh, normalizeSlabMeshOptions, type SpaceTimeMesh, type SlabMeshOptions } from '../mesh/space-time.js';
import type { Bsr, Layout } from '../sparse/types.js';
import { MAX_INT32_INDEX } from '../sparse/types.js';
import { UserError } from '../util/errors.js';
import { VERSION } from '../version.js';
import { basisDimension } from './basis.js';
import { PHYSICS, PHYSICS_NAMES } from './physics/registry.js';
import type { Physics, PhysicsContext, PhysicsDefinition, PhysicsName } from './physics/types.js';
import { show } from './physics/fields.js';
import { ELEMENT_ORDERINGS, orderElements, type ElementOrdering } from './ordering.js';
import { assembleDg, prepareDiscretization, type Discretization, type ProgressSink } from './assemble.js';
import { scaleToAdmissible } from './positivity.js';
import { addPseudoTimeTerm } from './pseudo-time.js';
import { nonzeroBlockPattern, triangularStructure } from '../sparse/structure.js';
import { projectFunction } from './projection.js';
import { writeCaseFiles } from './write-case.js';
import { elementCentroids, MAX_RECORDED_CENTROIDS } from '../mesh/centroids.js';
import { meshQuality } from '../mesh/quality.js';
import { MAX_FRONT_ASPECT_RATIO, MAX_FRONT_GRADING, type FrontMapOptions } from '../mesh/front-map.js';

/**
 * Parameters of a generated space-time DG system (JSON: suite files `generate` objects and the
 * layout provenance). After parseGeneratorParams every field is present, defaults filled in.
 */
export interface GeneratorParams {
  physics: PhysicsName;
  /** Space dimension d (elements are (d+1)-simplices). */
  dim: 1 | 2 | 3;
  /** Polynomial total degree p: 0–4 (0–3 for 3D+t). */
  order: number;
  cells: number[];
  extent: number[];
  slabs: number;
  layersPerSlab: number;
  /** thickness = cfl · h / (max wave speed), h = min_k extent_k / cells_k; null when slabThickness is given. */
  cfl: number | null;
  slabThickness: number | null;
  periodic: boolean[];
  /** Mesh shear x → x + s t, or 'align' = the constant transport velocity (advection) / mean flow (acoustics). */
  shear: number[] | 'align';
  jitter: number;
  seed: number;
  ordering: ElementOrdering;
  /**
   * Drop stored blocks whose entries are all exactly zero (off-diagonal only), leaving the
   * numerical pattern; absent (false) keeps the full face pattern. Present only when true, so the
   * parameters of earlier cases stay as they were.
   */
  dropZeroBlocks?: boolean;
  /** Pseudo-time term M/Δτ added to the diagonal blocks, Δτ = pseudoCfl·h_K/λ (absent: none). */
  pseudoCfl?: number;
  /**
   * Front-aligned mesh map (src/mesh/front-map.ts), on when aspectRatio is given: the target aspect
   * ratio of the elements at the front x·n = x₀ + s·t. The four front fields are then filled in
   * (absent otherwise, so earlier cases keep their parameters).
   */
  aspectRatio?: number;
  /** Front normal n (d entries) or 'align' = the constant transport velocity's direction. */
  frontDirection?: number[] | 'align';
  /** Front speed s along n, or 'align' = the transport velocity's component a·n. */
  frontSpeed?: number | 'align';
  /** x₀ (n normalized), or 'center' = n·(L/2): through the domain centre at t = 0. */
  frontPosition?: number | 'center';
  /** Geometric growth ratio of the cell size per cell away from the front, 1 < r ≤ 3 (default 1.2). */
  frontGrading?: number;
  /** Physics-specific fields (velocity, diffusivity, soundSpeed, meanFlow, travelling, direction, initial, state, inflow). */
  [field: string]: unknown;
}

export const MAX_ORDER = 4;
export const MAX_ORDER_3D = 3;
const COMMON_FIELDS = [
  'physics', 'dim', 'order', 'cells', 'extent', 'slabs', 'layersPerSlab', 'cfl', 'slabThickness',
  'periodic', 'shear', 'jitter', 'seed', 'ordering', 'dropZeroBlocks', 'pseudoCfl', ...['aspectRatio', 'frontDirection', 'frontSpeed', 'frontPosition', 'frontGrading'],
];
const FRONT_FIELDS = ['frontDirection', 'frontSpeed', 'frontPosition', 'frontGrading'];
export const DEFAULT_FRONT_GRADING = 1.2;
/** Largest generated value array (entries), checked before anything is allocated. */
export const MAX_GENERATED_VALUES = 1.5e9;

export type FieldLabel = (field: string) => string;

/**
 * Validate a raw parameter object. `where` prefixes messages ("suite.json: matrices[2].generate");
 * `label` may map a field to another name (the CLI names its options). Everything is checked here —
 * sizes, limits, expressions sampled over the space-time box — so no work starts on bad input.
 */
export function parseGeneratorParams(obj: unknown, where: string, label?: FieldLabel): GeneratorParams {
  const name: FieldLabel = label ?? ((f) => `${where}.${f}`);
  const fail = (field: string, what: string): never => { throw new UserError(`${name(field)}: ${what}`); };
  if (typeof obj !== 'object' || obj === null || Array.isArray(obj)) throw new UserError(`${where}: expected an object of generator parameters`);
  const raw = obj as Record<string, unknown>;
  const physicsName = raw.physics;
  if (typeof physicsName !== 'string' || !PHYSICS.has(physicsName as PhysicsName)) {
    fail('physics', `expected one of ${PHYSICS_NAMES.join(', ')}, got ${show(physicsName)}`);
  }
  const def = PHYSICS.get(physicsName as PhysicsName) as PhysicsDefinition;
  for (const key of Object.keys(raw)) {
    if (COMMON_FIELDS.includes(key) || def.fields.includes(key)) continue;
    const owner = [...PHYSICS.values()].find((p) => p.fields.includes(key));
    if (owner) fail(key, `does not apply to physics ${def.name} (it belongs to ${owner.name})`);
    fail(key, `unknown field (expected one of ${[...COMMON_FIELDS, ...def.fields].join(', ')})`);
  }
  const dim = raw.dim ?? 2;
  if (dim !== 1 && dim !== 2 && dim !== 3) fail('dim', `expected 1, 2 or 3, got ${show(dim)}`);
  const d = dim as 1 | 2 | 3;
  const maxOrder = d === 3 ? MAX_ORDER_3D : MAX_ORDER;
  const order = raw.order ?? 1;
  if (typeof order !== 'number' || !Number.isInteger(order) || order < 0 || order > maxOrder) {
    fail('order', `expected an integer 0..${maxOrder} for ${d}D+t, got ${show(order)}`);
  }
  const perAxis = <T>(field: string, dflt: T, check: (v: unknown) => boolean, what: string): T[] => {
    let v = raw[field];
    if (v === undefined) v = dflt;
    if (!Array.isArray(v)) v = new Array(d).fill(v);
    if ((v as unknown[]).length === 1 && d > 1) v = new Array(d).fill((v as unknown[])[0]);
    const a = v as unknown[];
    if (a.length !== d) fail(field, `expected ${d} entr${d > 1 ? 'ies' : 'y'} (one per space axis) or one value for all, got ${show(a)}`);
    a.forEach((x, i) => { if (!check(x)) fail(field, `expected ${what}${d > 1 ? ` (entry ${i})` : ''}, got ${show(x)}`); });
    return a as T[];
  };
  const posInt = (x: unknown): boolean => typeof x === 'number' && Number.isInteger(x) && x >= 1;
  const posNum = (x: unknown): boolean => typeof x === 'number' && Number.isFinite(x) && x > 0;
  const cells = perAxis<number>('cells', 8, posInt, 'a positive integer number of cells');
  const extent = perAxis<number>('extent', 1, posNum, 'a positive length');
  const periodic = perAxis<boolean>('periodic', false, (x) => typeof x === 'boolean', 'true or false');
  const slabs = raw.slabs ?? 4;
  if (!posInt(slabs)) fail('slabs', `expected a positive integer, got ${show(slabs)}`);
  const layersPerSlab = raw.layersPerSlab ?? 1;
  if (!posInt(layersPerSlab)) fail('layersPerSlab', `expected a positive integer, got ${show(layersPerSlab)}`);
  let cfl: number | null = null;
  let slabThickness: number | null = null;
  if (raw.cfl !== undefined && raw.cfl !== null && raw.slabThickness !== undefined && raw.slabThickness !== null) {
    fail('cfl', 'give either a CFL number or a slab thickness, not both');
  }
  if (raw.slabThickness !== undefined && raw.slabThickness !== null) {
    if (!posNum(raw.slabThickness)) fail('slabThickness', `expected a positive number, got ${show(raw.slabThickness)}`);
    slabThickness = raw.slabThickness as number;
  } else {
    const c = raw.cfl ?? 0.5;
    if (!posNum(c)) fail('cfl', `expected a number > 0, got ${show(c)}`);
    cfl = c as number;
  }
  let shear: number[] | 'align';
  if (raw.shear === 'align') shear = 'align';
  else shear = perAxis<number>('shear', 0, (x) => typeof x === 'number' && Number.isFinite(x), "a finite number (or 'align' for all axes)");
  const jitter = raw.jitter ?? 0;
  if (typeof jitter !== 'number' || !(jitter >= 0 && jitter < 0.5)) fail('jitter', `expected a number in [0, 0.5), got ${show(jitter)}`);
  const seed = raw.seed ?? 1;
  if (typeof seed !== 'number' || !Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) fail('seed', `expected an integer 0..4294967295, got ${show(seed)}`);
  const ordering = raw.ordering ?? 'natural';
  if (typeof ordering !== 'string' || !ELEMENT_ORDERINGS.includes(ordering as ElementOrdering)) {
    fail('ordering', `expected one of ${ELEMENT_ORDERINGS.join(', ')}, got ${show(ordering)}`);
  }
  const dropZeroBlocks = raw.dropZeroBlocks ?? false;
  if (typeof dropZeroBlocks !== 'boolean') fail('dropZeroBlocks', `expected true or false, got ${show(dropZeroBlocks)}`);
  const pseudoCfl = raw.pseudoCfl;
  if (pseudoCfl !== undefined && !(typeof pseudoCfl === 'number' && Number.isFinite(pseudoCfl) && pseudoCfl > 0)) {
    fail('pseudoCfl', `expected a number > 0 (the pseudo-time CFL number), got ${show(pseudoCfl)}`);
  }
  const front = parseFrontFields(raw, d, fail, name);
  const ctx: PhysicsContext = { dim: d, extent, periodic, label: name };
  const physicsFields = def.normalize(raw, ctx);
  const params: GeneratorParams = {
    physics: def.name, dim: d, order: order as number, cells, extent, slabs: slabs as number,
    layersPerSlab: layersPerSlab as number, cfl, slabThickness, periodic, shear, jitter: jitter as number,
    seed: seed as number, ordering: ordering as ElementOrdering, ...(dropZeroBlocks ? { dropZeroBlocks: true } : {}),
    ...(pseudoCfl !== undefined ? { pseudoCfl: pseudoCfl as number } : {}), ...front, ...physicsFields,
  };
  // Everything that depends on the physics: slab thickness, shear, sizes, expressions over [0, T].
  resolveGenerator(params, name);
  return params;
}

/** The front-map fields with defaults filled in, or none when aspectRatio is absent (then none may be given). */
function parseFrontFields(
  raw: Record<string, unknown>, d: number, fail: (field: string, what: string) => never, name: FieldLabel,
): Partial<GeneratorParams> {
  if (raw.aspectRatio === undefined) {
    const given = FRONT_FIELDS.find((f) => raw[f] !== undefined);
    if (given !== undefined) fail(given, `has no effect without ${name('aspectRatio')} (the target aspect ratio switches the front-aligned mesh map on)`);
    return {};
  }
  const ar = raw.aspectRatio;
  if (typeof ar !== 'number' || !(ar > 1 && ar <= MAX_FRONT_ASPECT_RATIO)) {
    fail('aspectRatio', `expected a target aspect ratio 1 < A ≤ ${MAX_FRONT_ASPECT_RATIO}, got ${show(ar)}`);
  }
  let direction = raw.frontDirection ?? 'align';
  if (direction !== 'align') {
    if (typeof direction === 'number') direction = [direction];
    const a = direction as unknown[];
    if (!Array.isArray(a) || a.length !== d || !a.every((v) => typeof v === 'number' && Number.isFinite(v))) {
      fail('frontDirection', `expected ${d} finite number${d > 1 ? 's' : ''} (the front normal) or 'align', got ${show(direction)}`);
    }
    if (!a.some((v) => v !== 0)) fail('frontDirection', 'expected a nonzero normal, got all zeros');
  }
  const speed = raw.frontSpeed ?? 'align';
  if (speed !== 'align' && !(typeof speed === 'number' && Number.isFinite(speed))) fail('frontSpeed', `expected a finite number or 'align', got ${show(speed)}`);
  const position = raw.frontPosition ?? 'center';
  if (position !== 'center' && !(typeof position === 'number' && Number.isFinite(position))) fail('frontPosition', `expected a finite number or 'center', got ${show(position)}`);
  const grading = raw.frontGrading ?? DEFAULT_FRONT_GRADING;
  if (typeof grading !== 'number' || !(grading > 1 && grading <= MAX_FRONT_GRADING)) {
    fail('frontGrading', `expected a growth ratio of the cell size per cell, 1 < r ≤ ${MAX_FRONT_GRADING}, got ${show(grading)}`);
  }
  return {
    aspectRatio: ar as number, frontDirection: direction as number[] | 'align', frontSpeed: speed as number | 'align',
    frontPosition: position as number | 'center', frontGrading: grading as number,
  };
}

/** The mesh map of resolved front fields; 'align' takes the constant transport velocity a. */
function resolveFront(params: GeneratorParams, align: readonly number[] | null, name: FieldLabel): FrontMapOptions | null {
  if (params.aspectRatio === undefined) return null;
  const d = params.dim;
  const needAlign = (field: string): number[] => {
    if (!align) throw new UserError(`${name(field)}: 'align' needs a constant transport velocity (advection with constant velocity, or acoustics' mean flow); give it explicitly`);
    return align.slice(0, d);
  };
  let n = params.frontDirection === 'align' || params.frontDirection === undefined ? needAlign('frontDirection') : params.frontDirection;
  const norm = Math.hypot(...n);
  if (!(norm > 0)) throw new UserError(`${name('frontDirection')}: 'align' needs a nonzero transport velocity`);
  n = n.map((v) => v / norm);
  let speed: number;
  if (params.frontSpeed === 'align' || params.frontSpeed === undefined) {
    const a = needAlign('frontSpeed');
    speed = a.reduce((s, v, k) => s + v * n[k], 0);
  } else speed = params.frontSpeed;
  const position = params.frontPosition === 'center' || params.frontPosition === undefined
    ? n.reduce((s, v, k) => s + (v * params.extent[k]) / 2, 0) : params.frontPosition;
  return { direction: n, position, speed, grading: params.frontGrading ?? DEFAULT_FRONT_GRADING, aspectRatio: params.aspectRatio };
}

/** Mesh option fields named as generator parameters (front.grading → frontGrading, …). */
function meshLabel(name: FieldLabel): (field: string) => string {
  const front: Record<string, string> = {
    'front.direction': 'frontDirection', 'front.position': 'frontPosition', 'front.speed': 'frontSpeed',
    'front.grading': 'frontGrading', 'front.aspectRatio': 'aspectRatio',
  };
  return (field) => name(front[field] ?? (field === 'nSlabs' ? 'slabs' : field));
}

/** What a parameter set turns into before the mesh is built. */
export interface ResolvedGenerator {
  readonly definition: PhysicsDefinition;
  readonly physics: Physics;
  readonly meshOptions: SlabMeshOptions;
  readonly slabThickness: number;
  readonly finalTime: number;
  readonly nElements: number;
  readonly nBasis: number;
  readonly blockSize: number;
}

export function resolveGenerator(params: GeneratorParams, label?: FieldLabel): ResolvedGenerator {
  const name: FieldLabel = label ?? ((f) => `generator parameter ${f}`);
  const d = params.dim;
  const def = PHYSICS.get(params.physics) as PhysicsDefinition;
  const ctx: PhysicsContext = { dim: d, extent: params.extent, periodic: params.periodic, label: name };
  const physics = def.create(params, ctx);
  let slabThickness: number;
  if (params.slabThickness !== null) {
    slabThickness = params.slabThickness;
  } else {
    let h = Infinity;
    for (let k = 0; k < d; k++) h = Math.min(h, params.extent[k] / params.cells[k]);
    if (!(physics.maxWaveSpeed > 0)) {
      throw new UserError(`${name('cfl')}: the largest wave speed is 0, so a CFL number sets no slab thickness; give the slab thickness instead`);
    }
    slabThickness = ((params.cfl as number) * h) / physics.maxWaveSpeed;
  }
  let shear: number[];
  if (params.shear === 'align') {
    if (!physics.alignVelocity) {
      throw new UserError(`${name('shear')}: 'align' needs a constant transport velocity (advection with constant velocity, or acoustics' mean flow)`);
    }
    shear = physics.alignVelocity.slice(0, d);
  } else {
    shear = params.shear;
  }
  const finalTime = slabThickness * params.slabs;
  const meshOptions: SlabMeshOptions = {
    dim: d, cells: params.cells, extent: params.extent, nSlabs: params.slabs, layersPerSlab: params.layersPerSlab,
    slabThickness, periodic: params.periodic, shear, jitter: params.jitter, seed: params.seed,
    front: resolveFront(params, physics.alignVelocity ?? null, name),
  };
  let nElements = params.slabs * params.layersPerSlab;
  for (let k = 0; k < d; k++) nElements *= params.cells[k];
  for (let k = 2; k <= d + 1; k++) nElements *= k;
  const nBasis = basisDimension(d + 1, params.order);
  const blockSize = nBasis * physics.nEquations;
  // Upper bound of the blocks: the diagonal plus one per face (d + 2 faces per element).
  const maxValues = nElements * (d + 3) * blockSize * blockSize;
  if (maxValues > MAX_GENERATED_VALUES || nElements * blockSize > MAX_INT32_INDEX) {
    throw new UserError(`${name('cells')}: ${nElements} elements with ${blockSize}×${blockSize} blocks would need about ${(maxValues * 8 / 2 ** 30).toFixed(1)} GiB of matrix values (limit ${(MAX_GENERATED_VALUES * 8 / 2 ** 30).toFixed(0)} GiB); reduce cells, slabs or order`);
  }
  normalizeSlabMeshOptions(meshOptions, meshLabel(name));
  def.check(params, ctx, finalTime);
  return { definition: def, physics, meshOptions, slabThickness, finalTime, nElements, nBasis, blockSize };
}

/** The discretization of a parameter set: mesh, physics, element order, tables and BSR pattern. */
export function buildDiscretization(params: GeneratorParams): { resolved: ResolvedGenerator; disc: Discretization } {
  const resolved = resolveGenerator(params);
  const mesh: SpaceTimeMesh = buildSlabMesh(resolved.meshOptions, meshLabel((f) => `generator parameter ${f}`));
  const ordering = orderElements(mesh, params.ordering, params.seed, (X, xo, out) => resolved.physics.transportVelocity(X, xo, out));
  const disc = prepareDiscretization(mesh, resolved.physics, params.order, ordering);
  return { resolved, disc };
}

export interface GeneratedSystem {
  bsr: Bsr;
  rhs: Float64Array;
  layout: Layout;
  /** Coefficients of the L² projection of the exact solution (block-row order), when one is known (computed on first access). */
  exactSolution?: Float64Array;
}

/**
 * Build the mesh, assemble the Jacobian and right-hand side. Linear physics: the matrix is the DG
 * operator and the right-hand side its data terms (solve for the DG solution). Burgers: the
 * Jacobian at the projected state and −residual (solve for the Newton update).
 */
export function generateSystem(params: GeneratorParams, onProgress?: ProgressSink): GeneratedSystem {
  return generateWithDiscretization(params, onProgress).system;
}

/** generateSystem, also returning the discretization (mesh, element order) for error measurement. */
export function generateWithDiscretization(
  params: GeneratorParams, onProgress?: ProgressSink,
): { system: GeneratedSystem; disc: Discretization } {
  const { resolved, disc } = buildDiscretization(params);
  const { state, scaledElements } = initialState(disc, params);
  return { system: assembleCase(params, resolved, disc, state, scaledElements, onProgress), disc };
}

/**
 * The state a nonlinear physics linearizes about: the L² projection of its `state` expression,
 * scaled toward element means where it is not admissible (Euler); null for linear physics.
 */
export function initialState(disc: Discretization, params: GeneratorParams): { state: Float64Array | null; scaledElements: number } {
  const { mesh, physics, ordering } = disc;
  let state: Float64Array | null = null;
  if (physics.state) state = projectFunction(mesh, params.order, physics.nEquations, ordering.inv, physics.state);
  // a projected discontinuous state can undershoot (negative pressure): scale those elements
  const scaledElements = state && physics.kind === 'nonlinear-system' ? scaleToAdmissible(disc, physics, state) : 0;
  return { state, scaledElements };
}

/** Assemble the case at a state (null for linear physics): matrix, right-hand side −R(state) and layout. */
export function assembleCase(
  params: GeneratorParams, resolved: ResolvedGenerator, disc: Discretization, state: Float64Array | null,
  scaledElements: number, onProgress?: ProgressSink,
): GeneratedSystem {
  const { mesh, physics, tables, ordering } = disc;
  const assembled = assembleDg(disc, state, { onProgress });
  const { residual } = assembled;
  for (let i = 0; i < residual.length; i++) residual[i] = -residual[i];
  const full = assembled.bsr as Bsr;
  // the pseudo-time term goes on the diagonal blocks of the face pattern (always kept when dropping)
  const pseudoTime = params.pseudoCfl !== undefined ? addPseudoTimeTerm(disc, full, params.pseudoCfl) : null;
  const zeroOnFacePattern = countZeroBlocks(full);
  const bsr = params.dropZeroBlocks === true ? dropZeroBlocks(full) : full;
  const zeroKept = bsr === full ? zeroOnFacePattern : countZeroBlocks(bsr);
  const slabOffsets: number[] = Array.from(mesh.slabOffsets);
  const layout: Layout = {
    blockSize: disc.bs,
    slabOffsets,
    elementQuality: meshQuality(mesh),
    zeroBlocks: { count: zeroKept, share: bsr.colInd.length === 0 ? 0 : zeroKept / bsr.colInd.length },
    modes: { nEquations: physics.nEquations, arrangement: 'equation-major', degrees: Array.from(tables.basis.degrees) },
    provenance: {
      generator: 'slabbench generate',
      slabbenchVersion: VERSION,
      physics: params.physics,
      dim: params.dim,
      order: params.order,
      nElements: mesh.nElements,
      nSlabs: mesh.nSlabs,
      nEquations: physics.nEquations,
      nBasis: tables.nb,
      unknowns: 'element block: unknown (equation i, basis function b) at i*nBasis + b; basis orthonormal (PKD) on the reference simplex',
      elementOrdering: params.ordering,
      downstreamCyclesCut: ordering.cyclesCut,
      slabThickness: resolved.slabThickness,
      finalTime: resolved.finalTime,
      quadratureDegree: 2 * params.order + physics.extraQuadratureDegree(params.order),
      system: physics.state ? 'Newton step: Jacobian at the projected state, rhs = -residual' : 'linear: DG operator, rhs = data terms',
      blockPattern: params.dropZeroBlocks === true
        ? `numerical: the ${zeroOnFacePattern} off-diagonal blocks of the face pattern whose entries are all exactly zero are dropped`
        : 'full face pattern: one block per element pair sharing a face, zero or not',
      droppedZeroBlocks: full.colInd.length - bsr.colInd.length,
      ...(mesh.front ? { frontMap: { ...mesh.front } } : {}),
      ...(pseudoTime ? { pseudoTime: { cfl: params.pseudoCfl, minDtau: pseudoTime.minDtau, maxDtau: pseudoTime.maxDtau, term: 'M/dtau added to the diagonal blocks; rhs unchanged' } } : {}),
      physicsSummary: physics.kind === 'nonlinear-system' ? { ...physics.summary, stateScaledElements: scaledElements } : physics.summary,
      params: { ...params },
      ...(mesh.nElements > MAX_RECORDED_CENTROIDS ? { centroids: `not recorded: more than ${MAX_RECORDED_CENTROIDS} elements` } : {}),
    },
    ...(mesh.nElements <= MAX_RECORDED_CENTROIDS ? { centroids: { nCoordinates: mesh.dim + 1, values: elementCentroids(mesh, ordering.perm) } } : {}),
  };
  const out: GeneratedSystem = { bsr, rhs: residual, layout };
  const exact = physics.exact;
  if (exact) {
    // Projected on first access: it costs a high-order quadrature with an expression evaluation
    // per point, which writing a case never needs.
    let cached: Float64Array | undefined;
    Object.defineProperty(out, 'exactSolution', {
      enumerable: true,
      get: () => (cached ??= projectFunction(mesh, params.order, physics.nEquations, ordering.inv, exact)),
    });
  }
  return out;
}

/** Stored blocks whose bs² entries are all exactly 0 (upwind faces whose coupling vanishes, …). */
export function countZeroBlocks(a: Bsr): number {
  const bb = a.bs * a.bs;
  const nBlocks = a.colInd.length;
  let count = 0;
  for (let k = 0; k < nBlocks; k++) {
    let zero = true;
    for (let q = k * bb; q < (k + 1) * bb; q++) if (a.values[q] !== 0) { zero = false; break; }
    if (zero) count++;
  }
  return count;
}

/**
 * The numerical block pattern: a copy without the off-diagonal blocks whose entries are all exactly
 * zero. Diagonal blocks always stay (every factorization needs them). The matrix is unchanged as an
 * operator; only the pattern (and with it the ILU(0) pattern) shrinks.
 */
export function dropZeroBlocks(a: Bsr): Bsr {
  const { nBlockRows: nb, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const keep = new Uint8Array(colInd.length);
  let kept = 0;
  for (let I = 0; I < nb; I++) {
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      let nonzero = colInd[k] === I;
      for (let q = k * bb; !nonzero && q < (k + 1) * bb; q++) if (values[q] !== 0) nonzero = true;
      if (nonzero) { keep[k] = 1; kept++; }
    }
  }
  const outPtr = new Int32Array(nb + 1);
  const outCol = new Int32Array(kept);
  const outVal = new Float64Array(kept * bb);
  let p = 0;
  for (let I = 0; I < nb; I++) {
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      if (!keep[k]) continue;
      outCol[p] = colInd[k];
      outVal.set(values.subarray(k * bb, (k + 1) * bb), p * bb);
      p++;
    }
    outPtr[I + 1] = p;
  }
  return { nBlockRows: nb, nBlockCols: a.nBlockCols, bs, rowPtr: outPtr, colInd: outCol, values: outVal };
}

/** Generate and write NAME.mtx, NAME.rhs.mtx and NAME.layout.json into outDir. */
export async function writeGeneratedCase(
  params: GeneratorParams, outDir: string, name: string, onProgress?: ProgressSink, opts: { gzip?: boolean } = {},
): Promise<{ mtx: string; rhs: string; layout: string; triangularUnderPermutation: boolean }> {
  if (!/^[A-Za-z0-9][A-Za-z0-9._-]*$/.test(name)) {
    throw new UserError(`case name '${name}': use letters, digits, '.', '_' and '-' (it becomes a file name)`);
  }
  const system = generateSystem(params, onProgress);
  mkdirSync(outDir, { recursive: true });
  const paths = {
    mtx: join(outDir, `${name}.mtx${opts.gzip ? '.gz' : ''}`), rhs: join(outDir, `${name}.rhs.mtx`), layout: join(outDir, `${name}.layout.json`),
  };
  await writeCaseFiles(paths, system, name);
  // a matrix whose numerically nonzero block graph has no cycles is solved by one sweep: say so
  const triangularUnderPermutation = triangularStructure(nonzeroBlockPattern(system.bsr)).triangularUnderPermutation;
  return { ...paths, triangularUnderPermutation };
}
