import { UserError, optionError } from '../util/errors.js';
import { preconditionerUses } from '../precond/registry.js';
import { PARTITION_METHODS, type PartitionMethod } from '../sparse/partition.js';
import { SEQUENCE_FIELDS, parseSequencePolicy, type InitialGuess, type ReusePolicy, type SequenceField } from './sequence-policy.js';
import { defaultDeflate } from './options.js';
/**
 * A solver recipe: one named combination of Krylov method, preconditioner, ordering and
 * stopping rule. Used by `slabbench solve` (built from options) and by suite files.
 */
export type KrylovName = 'gmres' | 'fgmres' | 'bicgstab' | 'gmres-dr' | 'gcro-dr' | 'none';
export type PreconditionerName = 'none' | 'jacobi' | 'block-jacobi' | 'block-gs' | 'ilu0' | 'block-ilu0' | 'block-iluk' | 'slab'
  | 'p-multigrid' | 'air' | 'schwarz' | 'direct';
export type SweepDirection = 'forward' | 'backward' | 'symmetric';
export type OrderingName = 'natural' | 'rcm' | 'downstream' | 'mdf';
export type PreconditionSide = 'right' | 'left';
export type Orthogonalization = 'mgs' | 'cgs2';
export type BlockInverse = 'lu' | 'inverse';

export const KRYLOV_NAMES: readonly KrylovName[] = ['gmres', 'fgmres', 'bicgstab', 'gmres-dr', 'gcro-dr', 'none'];
/** The deflated GMRES variants: they read `deflate` (src/solvers/gmres-dr.ts, gcro-dr.ts). */
export const DEFLATED_KRYLOV: readonly KrylovName[] = ['gmres-dr', 'gcro-dr'];
export function isDeflatedKrylov(k: KrylovName): boolean {
  return DEFLATED_KRYLOV.includes(k);
}
export const PRECONDITIONER_NAMES: readonly PreconditionerName[] = [
  'none', 'jacobi', 'block-jacobi', 'block-gs', 'ilu0', 'block-ilu0', 'block-iluk', 'slab',
  'p-multigrid', 'air', 'schwarz', 'direct',
];
/** Schwarz: restricted (Cai & Sarkis 1999) or plain additive combination of subdomain solves. */
export type SchwarzKind = 'restricted' | 'additive';
export const SCHWARZ_KINDS: readonly SchwarzKind[] = ['restricted', 'additive'];
/** Schwarz subdomain solve: a registered preconditioner (one application) or 'exact' (dense LU). */
export type SubdomainSolver = Exclude<PreconditionerName, 'schwarz' | 'slab'> | 'exact';
export const SUBDOMAIN_SOLVERS: readonly SubdomainSolver[] = [
  ...PRECONDITIONER_NAMES.filter((n): n is Exclude<PreconditionerName, 'schwarz' | 'slab'> => n !== 'schwarz' && n !== 'slab'), 'exact',
];
export type PartitionSlabsMode = 'across' | 'within';
export const PARTITION_SLABS: readonly PartitionSlabsMode[] = ['across', 'within'];
export const SWEEP_DIRECTIONS: readonly SweepDirection[] = ['forward', 'backward', 'symmetric'];
export const ORDERING_NAMES: readonly OrderingName[] = ['natural', 'rcm', 'downstream', 'mdf'];

export interface Recipe {
  /** Display name (suite files name their recipes). */
  name: string;
  /** 'none' = stationary iteration x ← x + ω M⁻¹ (b − A x). */
  krylov: KrylovName;
  /** GMRES/FGMRES basis size per cycle. */
  restart: number;
  /** GMRES-DR/GCRO-DR: harmonic Ritz vectors kept at each restart (and carried, GCRO-DR), below restart. */
  deflate?: number;
  side: PreconditionSide;
  orthogonalization: Orthogonalization;
  preconditioner: PreconditionerName;
  /** Block Gauss–Seidel sweep direction. */
  sweep: SweepDirection;
  /** Block ordering for block-gs and block-ilu0. */
  ordering: OrderingName;
  /** Relaxation factor: block-gs (SOR), and the stationary update. */
  omega: number;
  /** Number of block-gs sweeps per application. */
  sweeps: number;
  /** Diagonal shift added to pivots/diagonal blocks before factorizing (0 = none: a zero pivot fails). */
  shift: number;
  /** Block-jacobi diagonal block solve: LU with partial pivoting, or explicit inverse. */
  blockInverse: BlockInverse;
  /** Block ILU(k): level of fill k (0 = the pattern of A, i.e. block ILU(0)). */
  fillLevel: number;
  /** Stop when ‖r‖ ≤ rtol · reference norm (‖b‖ or ‖r₀‖, see relativeTo) … */
  rtol: number;
  /** … or when ‖r‖ ≤ atol (absolute). 0 disables. */
  atol: number;
  /** Maximum total iterations (inner Krylov steps, or stationary steps), whatever the restart. */
  maxIterations: number;
  /** Stop (residual-growth) when ‖r‖ > divergence · reference norm. */
  divergence: number;
  /** What relative residuals divide by: ‖b‖ ('rhs') or ‖r₀‖ ('start-residual'). */
  relativeTo: 'rhs' | 'start-residual';
  /** Slab preconditioner: how each slab is solved. */
  inner?: Recipe;
  /** Schwarz: number of parts (default 4). */
  parts?: number;
  /** Schwarz: overlap in block layers, 0–2 (default 1). */
  overlap?: number;
  /** Schwarz: restricted (default) or additive. */
  schwarzKind?: SchwarzKind;
  /** Schwarz subdomain solve (default block-ilu0); the other recipe fields reach it unchanged. */
  subdomain?: SubdomainSolver;
  /** Schwarz partition: across slabs (default) or every part inside one slab. */
  partitionSlabs?: PartitionSlabsMode;
  /** Schwarz partition: graph bisection (default) or coordinate bisection of the layout's centroids. */
  partitionMethod?: PartitionMethod;
  /** AIR preconditioner options (filled with DEFAULT_AIR_OPTIONS when preconditioner is air). */
  air?: AirOptions;
  /** p-multigrid preconditioner: levels, cycle, smoother, coarse solve (defaults: DEFAULT_P_MULTIGRID). */
  pMultigrid?: PMultigridOptions;
  /** Sequences only (src/solvers/sequence-policy.ts): when the preconditioner is rebuilt (absent: every system). */
  reuse?: ReusePolicy;
  /** reuse "fixed": systems one set-up serves. */
  reuseSystems?: number;
  /** reuse "on-growth": rebuild after a solve needing more than this factor × the iterations right after the last rebuild. */
  refreshFactor?: number;
  /** Sequences only: x₀ = 0 (absent) or the previous system's solution. */
  initialGuess?: InitialGuess;
}

export const DEFAULT_RECIPE: Readonly<Recipe> = Object.freeze({
  name: 'gmres-none',
  krylov: 'gmres',
  restart: 30,
  side: 'right',
  orthogonalization: 'mgs',
  preconditioner: 'none',
  sweep: 'forward',
  ordering: 'natural',
  omega: 1,
  sweeps: 1,
  shift: 0,
  blockInverse: 'inverse',
  fillLevel: 1,
  rtol: 1e-8,
  atol: 0,
  maxIterations: 1000,
  divergence: 1e10,
  relativeTo: 'rhs',
});

// ---------------------------------------------------------------------------------------------
// Validation: suite-file recipes (parseRecipe) and command-line options (recipeFromOptions).
// Added by the solvers area; the types above are unchanged.
// ---------------------------------------------------------------------------------------------

export const BLOCK_INVERSES: readonly BlockInverse[] = ['lu', 'inverse'];
export const PRECONDITION_SIDES: readonly PreconditionSide[] = ['right', 'left'];
export const ORTHOGONALIZATIONS: readonly Orthogonalization[] = ['mgs', 'cgs2'];
export const RELATIVE_TO: readonly Recipe['relativeTo'][] = ['rhs', 'start-residual'];

/** Inner recipe a slab preconditioner uses when none is given: GMRES(30) + block ILU(0) to 1e-10. */
export const DEFAULT_INNER_RECIPE: Readonly<Recipe> = Object.freeze({
  ...DEFAULT_RECIPE,
  name: 'slab-inner',
  preconditioner: 'block-ilu0',
  rtol: 1e-10,
  maxIterations: 500,
});

type FieldSpec =
  | { kind: 'enum'; values: readonly string[] }
  | { kind: 'int'; min: number; max: number }
  | { kind: 'number'; min: number; minOpen: boolean; max?: number; maxOpen?: boolean };

type ScalarField = Exclude<keyof Recipe, 'name' | 'inner' | 'air' | 'pMultigrid' | SequenceField>;

/** One spec per recipe field: the single source for suite files and command-line options. */
const FIELD_SPECS: Record<ScalarField, FieldSpec> = {
  krylov: { kind: 'enum', values: KRYLOV_NAMES },
  restart: { kind: 'int', min: 1, max: 10000 },
  deflate: { kind: 'int', min: 0, max: 9999 },
  side: { kind: 'enum', values: PRECONDITION_SIDES },
  orthogonalization: { kind: 'enum', values: ORTHOGONALIZATIONS },
  preconditioner: { kind: 'enum', values: PRECONDITIONER_NAMES },
  sweep: { kind: 'enum', values: SWEEP_DIRECTIONS },
  ordering: { kind: 'enum', values: ORDERING_NAMES },
  omega: { kind: 'number', min: 0, minOpen: true },
  sweeps: { kind: 'int', min: 1, max: 1000 },
  shift: { kind: 'number', min: 0, minOpen: false },
  blockInverse: { kind: 'enum', values: BLOCK_INVERSES },
  fillLevel: { kind: 'int', min: 0, max: 64 },
  rtol: { kind: 'number', min: 0, minOpen: false, max: 1, maxOpen: true },
  atol: { kind: 'number', min: 0, minOpen: false },
  maxIterations: { kind: 'int', min: 0, max: 1e9 },
  divergence: { kind: 'number', min: 1, minOpen: true },
  relativeTo: { kind: 'enum', values: RELATIVE_TO },
  parts: { kind: 'int', min: 1, max: 1 << 20 },
  overlap: { kind: 'int', min: 0, max: 2 },
  schwarzKind: { kind: 'enum', values: SCHWARZ_KINDS },
  subdomain: { kind: 'enum', values: SUBDOMAIN_SOLVERS },
  partitionSlabs: { kind: 'enum', values: PARTITION_SLABS },
  partitionMethod: { kind: 'enum', values: PARTITION_METHODS },
};

function describeSpec(s: FieldSpec): string {
  if (s.kind === 'enum') return `one of ${s.values.join(', ')}`;
  if (s.kind === 'int') return `an integer from ${s.min} to ${s.max}`;
  const lo = `${s.minOpen ? '>' : '≥'} ${s.min}`;
  const hi = s.max === undefined ? '' : ` and ${s.maxOpen ? '<' : '≤'} ${s.max}`;
  return `a finite number ${lo}${hi}`;
}

/** Check one value against its spec; returns an error text or undefined. `fromText`: value is a CLI string. */
function checkValue(spec: FieldSpec, raw: unknown, fromText: boolean): { value?: string | number; error?: string } {
  const shown = typeof raw === 'string' ? JSON.stringify(raw) : String(raw);
  const expected = `expected ${describeSpec(spec)}, got ${shown}`;
  if (spec.kind === 'enum') {
    return typeof raw === 'string' && spec.values.includes(raw) ? { value: raw } : { error: expected };
  }
  let v: number;
  if (typeof raw === 'number') v = raw;
  else if (fromText && typeof raw === 'string' && raw.trim() !== '' && /^[-+0-9.eE]+$/.test(raw.trim())) v = Number(raw);
  else return { error: expected };
  if (!Number.isFinite(v)) return { error: expected };
  if (spec.kind === 'int') {
    return Number.isInteger(v) && v >= spec.min && v <= spec.max ? { value: v } : { error: expected };
  }
  if (spec.minOpen ? !(v > spec.min) : !(v >= spec.min)) return { error: expected };
  if (spec.max !== undefined && (spec.maxOpen ? !(v < spec.max) : !(v <= spec.max))) return { error: expected };
  return { value: v };
}

/** Checks between fields (same wording for suite files and options). Returns [field, message] or undefined. */
function crossCheck(r: Recipe, isInner: boolean): [keyof Recipe, string] | undefined {
  if (r.preconditioner === 'block-gs' && !(r.omega < 2)) {
    return ['omega', `block-gs relaxation must be below 2, got ${r.omega}`];
  }
  if (r.krylov === 'fgmres' && r.side === 'left') return ['side', 'fgmres preconditions on the right only'];
  if (r.deflate !== undefined && isDeflatedKrylov(r.krylov) && !(r.deflate < r.restart)) {
    return ['deflate', `${r.krylov} keeps deflate harmonic Ritz vectors of a restart-${r.restart} cycle, so deflate must be below restart; got deflate ${r.deflate}`];
  }
  if (r.inner && r.preconditioner !== 'slab') return ['inner', 'an inner recipe is only used by preconditioner slab'];
  if (isInner && r.preconditioner === 'slab') return ['preconditioner', 'a slab inner recipe cannot itself use slab'];
  if (r.air && r.preconditioner !== 'air') return ['air', 'AIR options are only used by preconditioner air'];
  const pmg = pMultigridCrossCheck(r);
  if (pmg) return pmg;
  return undefined;
}

/** A deflated method without `deflate` gets defaultDeflate(restart) (recorded in results like any field it reads). */
function fillDeflate(r: Recipe): void {
  if (isDeflatedKrylov(r.krylov) && r.deflate === undefined) r.deflate = defaultDeflate(r.restart);
}

/**
 * Validate a recipe from a suite file (JSON). Missing fields take DEFAULT_RECIPE values
 * (DEFAULT_INNER_RECIPE for `inner`); unknown fields are rejected so that a typo cannot silently
 * fall back to a default. `where` names the object, e.g. "suite.json: recipes[2]".
 * A slab recipe without `inner` gets DEFAULT_INNER_RECIPE.
 */
export function parseRecipe(obj: unknown, where: string): Recipe {
  return parseRecipeAt(obj, where, false);
}

function parseRecipeAt(obj: unknown, where: string, isInner: boolean, defaults?: Readonly<Recipe>): Recipe {
  if (obj === null || typeof obj !== 'object' || Array.isArray(obj)) {
    throw new UserError(`${where}: expected an object with recipe fields`);
  }
  const src = obj as Record<string, unknown>;
  const base = defaults ?? (isInner ? DEFAULT_INNER_RECIPE : DEFAULT_RECIPE);
  const out: Record<string, unknown> = { ...base };
  delete out.inner;
  for (const key of Object.keys(src)) {
    if (key === 'name') {
      if (typeof src.name !== 'string' || src.name.trim() === '') {
        throw new UserError(`${where}.name: expected a non-empty string`);
      }
      out.name = src.name;
      continue;
    }
    if (key === 'inner' || key === 'air' || key === 'pMultigrid') continue;
    if (!isInner && (SEQUENCE_FIELDS as readonly string[]).includes(key)) continue;
    const spec = (FIELD_SPECS as Record<string, FieldSpec | undefined>)[key];
    if (!spec) {
      throw new UserError(`${where}: unknown field "${key}" (recipe fields: name, ${Object.keys(FIELD_SPECS).join(', ')}, inner, air, pMultigrid${isInner ? "" : `, ${SEQUENCE_FIELDS.join(", ")}`})`);
    }
    const c = checkValue(spec, src[key], false);
    if (c.error) throw new UserError(`${where}.${key}: ${c.error}`);
    out[key] = c.value;
  }
  if (src.name === undefined) out.name = isInner ? base.name : `${out.krylov}-${out.preconditioner}`;
  const recipe = out as unknown as Recipe;
  fillDeflate(recipe);
  if (src.inner !== undefined) {
    if (isInner) throw new UserError(`${where}.inner: an inner recipe cannot have its own inner recipe`);
    recipe.inner = parseRecipeAt(src.inner, `${where}.inner`, true);
  }
  if (src.air !== undefined) recipe.air = parseAirOptions(src.air, `${where}.air`);
  if (src.pMultigrid !== undefined) recipe.pMultigrid = parsePMultigrid(src.pMultigrid, `${where}.pMultigrid`);
  else if (recipe.preconditioner === 'p-multigrid') recipe.pMultigrid = defaultPMultigrid();
  const bad = crossCheck(recipe, isInner);
  if (bad) throw new UserError(`${where}.${bad[0]}: ${bad[1]}`);
  if (!isInner) Object.assign(recipe, parseSequencePolicy(src, where, recipe.preconditioner) ?? {});
  const given = Object.keys(src).filter((k) => k === 'inner' || k === 'air' || k === 'pMultigrid' || k in FIELD_SPECS) as RecipeField[];
  const unused = firstUnused(recipe, given);
  if (unused) throw new UserError(`${where}.${unused.field}: ${unused.why}`);
  if (recipe.preconditioner === 'slab' && !recipe.inner) recipe.inner = { ...DEFAULT_INNER_RECIPE };
  if (recipe.preconditioner === 'air' && !recipe.air) recipe.air = { ...DEFAULT_AIR_OPTIONS };
  return recipe;
}

// ---------------------------------------------------------------------------------------------
// Applicability: which recipe fields each method reads. A field set explicitly (given in a suite
// file or on the command line) that neither the Krylov method nor the preconditioner reads is an
// error, and results record only the fields that were read (`recordedRecipe`).
// ---------------------------------------------------------------------------------------------

/** A recipe field a method can declare it reads (scalar fields and the slab inner recipe). */
export type RecipeField = ScalarField | 'inner' | 'air' | 'pMultigrid';

/** Fields every recipe uses whatever its methods: the two choices and the stopping rule. */
export const COMMON_RECIPE_FIELDS: readonly ScalarField[] = [
  'krylov', 'preconditioner', 'rtol', 'atol', 'maxIterations', 'divergence', 'relativeTo',
];

/**
 * The fields each Krylov method reads beyond the common ones (checked against the code: gmres.ts,
 * bicgstab.ts, stationary.ts via krylovOptionsFromRecipe). FGMRES preconditions on the right only,
 * so it does not read `side`; stationary iteration reads `omega` as its step factor. Adding a
 * Krylov method: add its row here.
 */
export const KRYLOV_USES: Readonly<Record<KrylovName, readonly ScalarField[]>> = {
  gmres: ['restart', 'side', 'orthogonalization'],
  fgmres: ['restart', 'orthogonalization'],
  bicgstab: [],
  'gmres-dr': ['restart', 'deflate', 'orthogonalization'],
  'gcro-dr': ['restart', 'deflate', 'orthogonalization'],
  none: ['omega'],
};

/** The fields a recipe's Krylov method and preconditioner read (common ones included), or 'all'. */
export function usedRecipeFields(r: Pick<Recipe, 'krylov' | 'preconditioner'>): ReadonlySet<RecipeField> | 'all' {
  const pc = preconditionerUses(r.preconditioner);
  if (pc === 'all') return 'all';
  return new Set<RecipeField>([...COMMON_RECIPE_FIELDS, ...(KRYLOV_USES[r.krylov] ?? []), ...pc]);
}

/** Which methods read a field, for the error text ("only block-gs, block-ilu0 read it"). */
function readersOf(field: RecipeField): string[] {
  const out: string[] = [];
  for (const k of KRYLOV_NAMES) if (KRYLOV_USES[k].includes(field as ScalarField)) out.push(k === 'none' ? 'krylov none (stationary iteration)' : k);
  for (const p of PRECONDITIONER_NAMES) {
    const u = preconditionerUses(p);
    if (u === 'all' || u.includes(field)) out.push(p);
  }
  return out;
}

/**
 * The first of `given` that the recipe's methods do not read, with the reason, or undefined.
 * `given` lists the fields the user set explicitly, in the order they were given.
 */
function firstUnused(r: Recipe, given: readonly RecipeField[]): { field: RecipeField; why: string } | undefined {
  const used = usedRecipeFields(r);
  if (used === 'all') return undefined;
  for (const field of given) {
    if (used.has(field)) continue;
    const readers = readersOf(field);
    const combo = r.krylov === 'none' ? `stationary iteration + ${r.preconditioner}` : `${r.krylov} + ${r.preconditioner}`;
    return { field, why: `has no effect with ${combo}${readers.length ? ` (read only by ${readers.join(', ')})` : ''}; remove it` };
  }
  return undefined;
}

/**
 * The recipe as results record it: the name and only the fields its methods read (in field
 * order), with the inner recipe trimmed the same way. A preconditioner registered without a
 * `uses` list keeps every field.
 */
export type RecordedRecipe = Pick<Recipe, 'name' | 'krylov' | 'preconditioner' | 'rtol' | 'atol' | 'maxIterations' | 'divergence' | 'relativeTo'>
  & Partial<Omit<Recipe, 'inner'>> & { inner?: RecordedRecipe };

export function recordedRecipe(r: Recipe): RecordedRecipe {
  const used = usedRecipeFields(r);
  const out: Record<string, unknown> = { name: r.name };
  for (const f of RECIPE_FIELDS) if (used === 'all' || used.has(f)) out[f] = r[f];
  if (r.inner && (used === 'all' || used.has('inner'))) out.inner = recordedRecipe(r.inner);
  if (r.air && (used === 'all' || used.has('air'))) out.air = { ...r.air };
  if (r.pMultigrid && (used === 'all' || used.has('pMultigrid'))) out.pMultigrid = r.pMultigrid;
  // the sequence policy, when set (a recipe without one rebuilds every system from x₀ = 0)
  for (const f of SEQUENCE_FIELDS) if (r[f] !== undefined) out[f] = r[f];
  return out as RecordedRecipe;
}

/** Command-line flag (without "--") for each recipe field. Inner fields take the prefix "inner-". */
export const RECIPE_FLAGS: Readonly<Record<ScalarField, string>> = {
  krylov: 'krylov',
  restart: 'restart',
  deflate: 'deflate',
  side: 'side',
  orthogonalization: 'ortho',
  preconditioner: 'precond',
  sweep: 'sweep',
  ordering: 'ordering',
  omega: 'omega',
  sweeps: 'sweeps',
  shift: 'shift',
  blockInverse: 'block-inverse',
  fillLevel: 'fill-level',
  rtol: 'rtol',
  atol: 'atol',
  maxIterations: 'max-iters',
  divergence: 'divergence',
  relativeTo: 'relative-to',
  parts: 'parts',
  overlap: 'overlap',
  schwarzKind: 'schwarz-kind',
  subdomain: 'subdomain-precond',
  partitionSlabs: 'partition-slabs',
  partitionMethod: 'partition-method',
};

/** commander's camelCase key for a flag ("max-iters" → "maxIters", "inner-precond" → "innerPrecond"). */
export function flagKey(flag: string): string {
  return flag.replace(/-([a-z])/g, (_m, c: string) => c.toUpperCase());
}

/** Short description of a recipe field's accepted values (for --help). */
export function describeRecipeField(field: ScalarField): string {
  return describeSpec(FIELD_SPECS[field]);
}

export const RECIPE_FIELDS: readonly ScalarField[] = Object.keys(FIELD_SPECS) as ScalarField[];

/**
 * Build a recipe from parsed command-line options (commander's camelCase keys, string values).
 * Options not given take DEFAULT_RECIPE values; `--inner-<flag>` options fill the slab inner recipe
 * (defaults DEFAULT_INNER_RECIPE) and are rejected unless --precond slab.
 */
export function recipeFromOptions(opts: Record<string, unknown>): Recipe {
  for (const prefix of ['', 'inner-']) {
    if (opts[flagKey(`${prefix}order`)] !== undefined) {
      throw optionError(`--${prefix}order`, `the block ordering option is now --${prefix}ordering (like the recipe field "ordering"; --order is generate's polynomial order)`);
    }
  }
  const outer: Record<string, unknown> = { ...DEFAULT_RECIPE };
  const inner: Record<string, unknown> = { ...DEFAULT_INNER_RECIPE };
  const givenOuter: RecipeField[] = [];
  const givenInner: RecipeField[] = [];
  let innerGiven: string | undefined;
  for (const field of RECIPE_FIELDS) {
    const flag = RECIPE_FLAGS[field];
    for (const [target, prefix] of [[outer, ''], [inner, 'inner-']] as const) {
      const raw = opts[flagKey(prefix + flag)];
      if (raw === undefined) continue;
      const c = checkValue(FIELD_SPECS[field], raw, true);
      if (c.error) throw optionError(`--${prefix}${flag}`, c.error);
      target[field] = c.value;
      (prefix ? givenInner : givenOuter).push(field);
      if (prefix) innerGiven ??= `--${prefix}${flag}`;
    }
  }
  outer.name = `${outer.krylov}-${outer.preconditioner}`;
  const recipe = outer as unknown as Recipe;
  fillDeflate(recipe);
  const outerAir = airOptionsFromFlags(opts, '');
  const innerAir = airOptionsFromFlags(opts, 'inner-');
  if (innerAir.firstFlag) innerGiven ??= innerAir.firstFlag;
  if (recipe.preconditioner === 'slab') { recipe.inner = inner as unknown as Recipe; fillDeflate(recipe.inner); } else if (innerGiven) throw optionError(innerGiven, 'inner options are only used with --precond slab');
  if (outerAir.options) {
    if (recipe.preconditioner !== 'air') throw optionError(outerAir.firstFlag!, 'AIR options are only used with --precond air');
    recipe.air = outerAir.options;
  } else if (recipe.preconditioner === 'air') recipe.air = { ...DEFAULT_AIR_OPTIONS };
  if (recipe.inner) {
    if (innerAir.options) {
      if (recipe.inner.preconditioner !== 'air') throw optionError(innerAir.firstFlag!, 'AIR options are only used with --inner-precond air');
      recipe.inner.air = innerAir.options;
    } else if (recipe.inner.preconditioner === 'air') recipe.inner.air = { ...DEFAULT_AIR_OPTIONS };
  }
  applyPMultigridFlags(opts, recipe);
  for (const [r, prefix] of [[recipe, ''], [recipe.inner, 'inner-']] as const) {
    if (!r) continue;
    const bad = crossCheck(r, prefix !== '');
    if (bad) {
      const f = bad[0] === 'inner' || bad[0] === 'air' ? 'precond' : RECIPE_FLAGS[bad[0] as ScalarField];
      throw optionError(`--${prefix}${f}`, bad[1]);
    }
    const unused = firstUnused(r, prefix ? givenInner : givenOuter);
    if (unused) {
      const f = unused.field === 'inner' || unused.field === 'air' || unused.field === 'pMultigrid' ? 'precond' : RECIPE_FLAGS[unused.field as ScalarField];
      throw optionError(`--${prefix}${f}`, unused.why);
    }
  }
  return recipe;
}

// ---------------------------------------------------------------------------------------------
// AIR options (preconditioner air): a nested recipe object `air` in suite files, `--air-<flag>`
// (and `--inner-air-<flag>` for a slab inner recipe) on the command line.
// ---------------------------------------------------------------------------------------------

export type AirRelaxation = 'f' | 'ff' | 'fc' | 'ffc' | 'fcf' | 'cf';
export const AIR_RELAXATIONS: readonly AirRelaxation[] = ['f', 'ff', 'fc', 'ffc', 'fcf', 'cf'];
export const AIR_PROLONGATIONS: readonly AirOptions['prolongation'][] = ['one-point', 'injection'];
export const AIR_CYCLES: readonly AirOptions['cycle'][] = ['V', 'W'];

export interface AirOptions {
  /** Strength threshold θ: block row i strongly depends on j ≠ i when ‖A_ij‖_F ≥ θ·max_{k≠i}‖A_ik‖_F. */
  strength: number;
  /** ℓAIR neighbourhood: F points within this many strong connections (through F points). */
  distance: number;
  /** P = [W; I] with W the one-point rule, or injection P = [0; I]. */
  prolongation: 'one-point' | 'injection';
  /** Post-relaxation pattern of block Jacobi sweeps on F and C points, in order. */
  relaxation: AirRelaxation;
  /** Pre-relaxation pattern ('none' = no pre-relaxation). */
  preRelaxation: AirRelaxation | 'none';
  /** Repetitions of the relaxation pattern(s) per level visit. */
  sweeps: number;
  /** Most levels, the coarsest included. */
  maxLevels: number;
  /** Coarsening stops at a level with at most this many scalar unknowns. */
  coarsest: number;
  cycle: 'V' | 'W';
  /** 'block-diagonal': AIR is built on D⁻¹A (D = block diagonal of A) and applied to D⁻¹r; 'none': on A. */
  scaling: 'block-diagonal' | 'none';
}

export const DEFAULT_AIR_OPTIONS: Readonly<AirOptions> = Object.freeze({
  strength: 0.25,
  distance: 2,
  prolongation: 'one-point',
  relaxation: 'ffc',
  preRelaxation: 'none',
  sweeps: 1,
  maxLevels: 25,
  coarsest: 256,
  cycle: 'V',
  scaling: 'block-diagonal',
});

const AIR_SPECS: Record<keyof AirOptions, FieldSpec> = {
  strength: { kind: 'number', min: 0, minOpen: false, max: 1, maxOpen: true },
  distance: { kind: 'int', min: 1, max: 8 },
  prolongation: { kind: 'enum', values: AIR_PROLONGATIONS },
  relaxation: { kind: 'enum', values: AIR_RELAXATIONS },
  preRelaxation: { kind: 'enum', values: ['none', ...AIR_RELAXATIONS] },
  sweeps: { kind: 'int', min: 1, max: 100 },
  maxLevels: { kind: 'int', min: 1, max: 50 },
  coarsest: { kind: 'int', min: 1, max: 2048 },
  cycle: { kind: 'enum', values: AIR_CYCLES },
  scaling: { kind: 'enum', values: ['block-diagonal', 'none'] },
};

export const AIR_FIELDS: readonly (keyof AirOptions)[] = Object.keys(AIR_SPECS) as (keyof AirOptions)[];

/** Command-line flag (without "--") of each AIR option; the inner twin is "inner-" + flag. */
export const AIR_FLAGS: Readonly<Record<keyof AirOptions, string>> = {
  strength: 'air-strength',
  distance: 'air-distance',
  prolongation: 'air-prolongation',
  relaxation: 'air-relax',
  preRelaxation: 'air-pre-relax',
  sweeps: 'air-sweeps',
  maxLevels: 'air-max-levels',
  coarsest: 'air-coarsest',
  cycle: 'air-cycle',
  scaling: 'air-scaling',
};

export function describeAirField(field: keyof AirOptions): string {
  return describeSpec(AIR_SPECS[field]);
}

/** Validate a suite file's `air` object; `where` names it (e.g. "suite.json: recipes[2].air"). */
export function parseAirOptions(obj: unknown, where: string): AirOptions {
  if (obj === null || typeof obj !== 'object' || Array.isArray(obj)) {
    throw new UserError(`${where}: expected an object with AIR options (${AIR_FIELDS.join(', ')})`);
  }
  const out: Record<string, unknown> = { ...DEFAULT_AIR_OPTIONS };
  for (const [key, raw] of Object.entries(obj as Record<string, unknown>)) {
    const spec = (AIR_SPECS as Record<string, FieldSpec | undefined>)[key];
    if (!spec) throw new UserError(`${where}: unknown field "${key}" (AIR options: ${AIR_FIELDS.join(', ')})`);
    const c = checkValue(spec, raw, false);
    if (c.error) throw new UserError(`${where}.${key}: ${c.error}`);
    out[key] = c.value;
  }
  return out as unknown as AirOptions;
}

/** AIR options from command-line values (commander keys); undefined when no `--<prefix>air-…` flag was given. */
export function airOptionsFromFlags(opts: Record<string, unknown>, prefix: '' | 'inner-'): { options?: AirOptions; firstFlag?: string } {
  let given: string | undefined;
  const out: Record<string, unknown> = { ...DEFAULT_AIR_OPTIONS };
  for (const field of AIR_FIELDS) {
    const flag = prefix + AIR_FLAGS[field];
    const raw = opts[flagKey(flag)];
    if (raw === undefined) continue;
    const c = checkValue(AIR_SPECS[field], raw, true);
    if (c.error) throw optionError(`--${flag}`, c.error);
    out[field] = c.value;
    given ??= `--${flag}`;
  }
  return given ? { options: out as unknown as AirOptions, firstFlag: given } : {};
}

// ---------------------------------------------------------------------------------------------
// p-multigrid options (recipe field `pMultigrid`; CLI flags --pmg-…). Read by src/precond/p-multigrid.ts.
// ---------------------------------------------------------------------------------------------

export type PMultigridCycle = 'v' | 'w';
export const PMG_CYCLES: readonly PMultigridCycle[] = ['v', 'w'];
/** Single-level preconditioners a p-multigrid level can smooth with. */
export type PMultigridSmootherName = 'jacobi' | 'block-jacobi' | 'block-gs' | 'ilu0' | 'block-ilu0' | 'block-iluk';
export const PMG_SMOOTHERS: readonly PMultigridSmootherName[] = ['jacobi', 'block-jacobi', 'block-gs', 'ilu0', 'block-ilu0', 'block-iluk'];

/** One smoothing step on a level: x ← x + ω M⁻¹(b − A x) (for block-gs ω is its SOR factor and the step is 1). */
export interface PMultigridSmoother {
  preconditioner: PMultigridSmootherName;
  /** Damping of the step; for block-gs the relaxation inside the sweep (the step is then 1). */
  omega: number;
  /** block-gs only. */
  sweep: SweepDirection;
  /** block-gs and block-ilu0 only. */
  ordering: OrderingName;
  /** block-jacobi and block-gs only. */
  blockInverse: BlockInverse;
  /** Diagonal shift before factorizing (every smoother). */
  shift: number;
  /** block-iluk only: level of fill. */
  fillLevel: number;
}

export interface PMultigridOptions {
  /** Polynomial degrees of the levels, finest first, strictly decreasing; absent = p, p−1, …, 0. */
  levels?: number[];
  /** 'v': one coarse-grid correction per level; 'w': two. */
  cycle: PMultigridCycle;
  /** Smoothing steps before and after the coarse-grid correction, on every level but the coarsest. */
  preSweeps: number;
  postSweeps: number;
  smoother: PMultigridSmoother;
  /** How the coarsest level is solved (any recipe but slab or p-multigrid). */
  coarse: Recipe;
}

/** Coarsest-level default: GMRES(30) + block ILU(0) to rtol 1e-6, at most 200 iterations. */
export const DEFAULT_PMG_COARSE_RECIPE: Readonly<Recipe> = Object.freeze({
  ...DEFAULT_RECIPE,
  name: 'pmg-coarse',
  preconditioner: 'block-ilu0',
  rtol: 1e-6,
  maxIterations: 200,
});

export const DEFAULT_PMG_SMOOTHER: Readonly<PMultigridSmoother> = Object.freeze({
  preconditioner: 'block-gs', omega: 1, sweep: 'symmetric', ordering: 'natural', blockInverse: 'inverse', shift: 0, fillLevel: 1,
});

/** A fresh copy of the default p-multigrid options. */
export function defaultPMultigrid(): PMultigridOptions {
  return { cycle: 'v', preSweeps: 1, postSweeps: 1, smoother: { ...DEFAULT_PMG_SMOOTHER }, coarse: { ...DEFAULT_PMG_COARSE_RECIPE } };
}

/**
 * True when the p-multigrid cycle is not a fixed linear map: its coarse solve is a Krylov method,
 * or a stationary iteration that may stop early (more than one step with rtol or atol > 0).
 */
export function pMultigridIsVariable(o: PMultigridOptions): boolean {
  const c = o.coarse;
  if (c.krylov !== 'none') return true;
  return c.maxIterations > 1 && (c.rtol > 0 || c.atol > 0);
}

/** Which smoother options each smoother reads (others are errors: an option without effect). */
const SMOOTHER_USES: Record<PMultigridSmootherName, readonly (keyof PMultigridSmoother)[]> = {
  'jacobi': ['omega', 'shift'],
  'block-jacobi': ['omega', 'blockInverse', 'shift'],
  'block-gs': ['omega', 'sweep', 'ordering', 'blockInverse', 'shift'],
  'ilu0': ['omega', 'shift'],
  'block-ilu0': ['omega', 'ordering', 'shift'],
  'block-iluk': ['omega', 'ordering', 'shift', 'fillLevel'],
};

const SMOOTHER_SPECS: Record<Exclude<keyof PMultigridSmoother, 'preconditioner'>, FieldSpec> = {
  omega: { kind: 'number', min: 0, minOpen: true, max: 2, maxOpen: true },
  sweep: { kind: 'enum', values: SWEEP_DIRECTIONS },
  ordering: { kind: 'enum', values: ORDERING_NAMES },
  blockInverse: { kind: 'enum', values: BLOCK_INVERSES },
  shift: { kind: 'number', min: 0, minOpen: false },
  fillLevel: { kind: 'int', min: 0, max: 64 },
};
const PMG_SWEEPS_SPEC: FieldSpec = { kind: 'int', min: 0, max: 100 };
const PMG_FIELDS = ['levels', 'cycle', 'preSweeps', 'postSweeps', 'smoother', 'coarse'];

/** Check a levels list (degrees, finest first, strictly decreasing, ≥ 2 entries); returns an error text or undefined. */
function levelsProblem(v: unknown): string | undefined {
  const shown = Array.isArray(v) ? `[${v.map((x) => JSON.stringify(x)).join(', ')}]` : JSON.stringify(v);
  if (!Array.isArray(v) || v.length < 2 || v.length > 64) return `expected a list of at least 2 polynomial degrees, finest first, got ${shown}`;
  for (let i = 0; i < v.length; i++) {
    const d = v[i];
    if (typeof d !== 'number' || !Number.isInteger(d) || d < 0 || d > 1000) return `expected integer degrees 0..1000, got ${shown}`;
    if (i > 0 && !(d < (v[i - 1] as number))) return `expected strictly decreasing degrees (finest first), got ${shown}`;
  }
  return undefined;
}

/** Checks between the p-multigrid options and their recipe (same wording for suites and options). */
function pMultigridCrossCheck(r: Recipe): [keyof Recipe, string] | undefined {
  if (r.pMultigrid && r.preconditioner !== 'p-multigrid') return ['pMultigrid', 'p-multigrid options are only used by preconditioner p-multigrid'];
  if (r.preconditioner !== 'p-multigrid' || !r.pMultigrid) return undefined;
  if ((r.krylov === 'gmres' || r.krylov === 'bicgstab' || isDeflatedKrylov(r.krylov)) && pMultigridIsVariable(r.pMultigrid)) {
    const c = r.pMultigrid.coarse;
    return ['krylov', `p-multigrid with a ${c.krylov === 'none' ? 'stationary coarse solve that stops at rtol' : `${c.krylov} coarse solve`} changes between applications (variable); ${r.krylov} needs a fixed preconditioner: use krylov fgmres, or a coarse solve with krylov none and rtol 0 (a fixed number of steps)`];
  }
  return undefined;
}

/** Validate a suite file's `pMultigrid` object; missing fields take the defaults, unknown fields are errors. */
export function parsePMultigrid(obj: unknown, where: string): PMultigridOptions {
  if (obj === null || typeof obj !== 'object' || Array.isArray(obj)) throw new UserError(`${where}: expected an object with p-multigrid options (${PMG_FIELDS.join(', ')})`);
  const src = obj as Record<string, unknown>;
  const out = defaultPMultigrid();
  for (const key of Object.keys(src)) {
    if (!PMG_FIELDS.includes(key)) throw new UserError(`${where}: unknown field "${key}" (p-multigrid fields: ${PMG_FIELDS.join(', ')})`);
  }
  if (src.levels !== undefined) {
    const bad = levelsProblem(src.levels);
    if (bad) throw new UserError(`${where}.levels: ${bad}`);
    out.levels = [...(src.levels as number[])];
  }
  if (src.cycle !== undefined) {
    const c = checkValue({ kind: 'enum', values: PMG_CYCLES }, src.cycle, false);
    if (c.error) throw new UserError(`${where}.cycle: ${c.error}`);
    out.cycle = c.value as PMultigridCycle;
  }
  for (const k of ['preSweeps', 'postSweeps'] as const) {
    if (src[k] === undefined) continue;
    const c = checkValue(PMG_SWEEPS_SPEC, src[k], false);
    if (c.error) throw new UserError(`${where}.${k}: ${c.error}`);
    out[k] = c.value as number;
  }
  if (src.smoother !== undefined) out.smoother = parseSmoother(src.smoother, `${where}.smoother`, false);
  if (src.coarse !== undefined) out.coarse = parseCoarse(src.coarse, `${where}.coarse`);
  const bad = pmgOwnProblem(out);
  if (bad) throw new UserError(`${where}.${bad[0]}: ${bad[1]}`);
  return out;
}

/** Checks inside the options: at least one smoothing step. */
function pmgOwnProblem(o: PMultigridOptions): [string, string] | undefined {
  if (o.preSweeps + o.postSweeps === 0) return ['postSweeps', 'preSweeps and postSweeps are both 0: the levels above the coarsest would do nothing'];
  return undefined;
}

function parseSmoother(obj: unknown, where: string, fromText: boolean): PMultigridSmoother {
  if (obj === null || typeof obj !== 'object' || Array.isArray(obj)) throw new UserError(`${where}: expected an object (preconditioner, omega, sweep, ordering, blockInverse, shift, fillLevel)`);
  const src = obj as Record<string, unknown>;
  const out: PMultigridSmoother = { ...DEFAULT_PMG_SMOOTHER };
  if (src.preconditioner !== undefined) {
    const c = checkValue({ kind: 'enum', values: PMG_SMOOTHERS }, src.preconditioner, fromText);
    if (c.error) throw new UserError(`${where}.preconditioner: ${c.error}`);
    out.preconditioner = c.value as PMultigridSmootherName;
  }
  const uses = SMOOTHER_USES[out.preconditioner];
  for (const key of Object.keys(src)) {
    if (key === 'preconditioner') continue;
    const spec = (SMOOTHER_SPECS as Record<string, FieldSpec | undefined>)[key];
    if (!spec) throw new UserError(`${where}: unknown field "${key}" (smoother fields: preconditioner, ${Object.keys(SMOOTHER_SPECS).join(', ')})`);
    if (!uses.includes(key as keyof PMultigridSmoother)) {
      throw new UserError(`${where}.${key}: not used by smoother ${out.preconditioner} (it reads ${uses.join(', ')})`);
    }
    const c = checkValue(spec, src[key], fromText);
    if (c.error) throw new UserError(`${where}.${key}: ${c.error}`);
    (out as unknown as Record<string, unknown>)[key] = c.value;
  }
  return out;
}

function parseCoarse(obj: unknown, where: string): Recipe {
  if (obj === null || typeof obj !== 'object' || Array.isArray(obj)) throw new UserError(`${where}: expected an object with recipe fields`);
  const src = obj as Record<string, unknown>;
  if (src.inner !== undefined) throw new UserError(`${where}.inner: the coarse solve cannot use preconditioner slab`);
  if (src.pMultigrid !== undefined) throw new UserError(`${where}.pMultigrid: the coarse solve cannot itself use p-multigrid`);
  if (src.preconditioner === 'slab' || src.preconditioner === 'p-multigrid') {
    checkCoarse({ preconditioner: src.preconditioner } as Recipe, (f, m) => new UserError(`${where}.${f}: ${m}`));
  }
  const r = parseRecipeAt(src, where, false, DEFAULT_PMG_COARSE_RECIPE);
  if (src.name === undefined) r.name = DEFAULT_PMG_COARSE_RECIPE.name;
  return checkCoarse(r, (f, m) => new UserError(`${where}.${f}: ${m}`));
}

function checkCoarse(r: Recipe, err: (field: string, msg: string) => Error): Recipe {
  if (r.preconditioner === 'slab' || r.preconditioner === 'p-multigrid') {
    throw err('preconditioner', `the coarse solve cannot use ${r.preconditioner}; expected a single-level preconditioner`);
  }
  return r;
}

/** CLI flags (without "--") of the p-multigrid options. Coarse recipe fields take "pmg-coarse-" + their recipe flag. */
export const PMG_FLAGS = {
  levels: 'pmg-levels',
  cycle: 'pmg-cycle',
  preSweeps: 'pmg-pre-sweeps',
  postSweeps: 'pmg-post-sweeps',
  smoother: 'pmg-smoother',
  omega: 'pmg-smoother-omega',
  sweep: 'pmg-smoother-sweep',
  ordering: 'pmg-smoother-ordering',
  blockInverse: 'pmg-smoother-block-inverse',
  shift: 'pmg-smoother-shift',
  fillLevel: 'pmg-smoother-fill-level',
} as const;
export const PMG_COARSE_PREFIX = 'pmg-coarse-';

/**
 * Fill the pMultigrid options of the recipe that uses p-multigrid (the outer one, or the slab inner
 * one) from --pmg-… flags; such flags without a p-multigrid recipe are an error.
 */
function applyPMultigridFlags(opts: Record<string, unknown>, recipe: Recipe): void {
  const given: string[] = [];
  const raw = (flag: string): unknown => { const v = opts[flagKey(flag)]; if (v !== undefined) given.push(`--${flag}`); return v; };
  const levels = raw(PMG_FLAGS.levels);
  const cycle = raw(PMG_FLAGS.cycle);
  const pre = raw(PMG_FLAGS.preSweeps);
  const post = raw(PMG_FLAGS.postSweeps);
  const smoother: Record<string, unknown> = {};
  const sm = raw(PMG_FLAGS.smoother);
  if (sm !== undefined) smoother.preconditioner = sm;
  for (const k of ['omega', 'sweep', 'ordering', 'blockInverse', 'shift', 'fillLevel'] as const) {
    const v = raw(PMG_FLAGS[k]);
    if (v !== undefined) smoother[k] = v;
  }
  const coarseRaw: Record<string, unknown> = {};
  for (const field of RECIPE_FIELDS) {
    const v = raw(PMG_COARSE_PREFIX + RECIPE_FLAGS[field]);
    if (v !== undefined) coarseRaw[field] = v;
  }
  const target = recipe.preconditioner === 'p-multigrid' ? recipe
    : recipe.inner?.preconditioner === 'p-multigrid' ? recipe.inner : undefined;
  if (target) target.pMultigrid = defaultPMultigrid();
  if (given.length === 0) return;
  if (!target) throw optionError(given[0], 'p-multigrid options are only used with --precond p-multigrid (or --inner-precond p-multigrid)');
  const o = target.pMultigrid as PMultigridOptions;
  if (levels !== undefined) {
    const list = typeof levels === 'string' && /^\s*\d+(\s*,\s*\d+)*\s*$/.test(levels) ? levels.split(',').map((s) => Number(s.trim())) : levels;
    const bad = levelsProblem(list);
    if (bad) throw optionError(`--${PMG_FLAGS.levels}`, bad.replace(/^expected a list/, 'expected a comma-separated list').replace(/got .*$/, `got ${JSON.stringify(levels)}`));
    o.levels = list as number[];
  }
  if (cycle !== undefined) {
    const c = checkValue({ kind: 'enum', values: PMG_CYCLES }, cycle, true);
    if (c.error) throw optionError(`--${PMG_FLAGS.cycle}`, c.error);
    o.cycle = c.value as PMultigridCycle;
  }
  for (const [k, v] of [['preSweeps', pre], ['postSweeps', post]] as const) {
    if (v === undefined) continue;
    const c = checkValue(PMG_SWEEPS_SPEC, v, true);
    if (c.error) throw optionError(`--${PMG_FLAGS[k]}`, c.error);
    o[k] = c.value as number;
  }
  const bad = pmgOwnProblem(o);
  if (bad) throw optionError(`--${PMG_FLAGS[bad[0] as 'postSweeps']}`, bad[1]);
  try {
    o.smoother = parseSmoother(smoother, 'smoother', true);
  } catch (e) {
    if (!(e instanceof UserError)) throw e;
    const m = /^smoother(?:\.(\w+))?: (.*)$/.exec(e.message);
    const f = m?.[1];
    const flag = f !== undefined && f in PMG_FLAGS ? PMG_FLAGS[f as keyof typeof PMG_FLAGS] : PMG_FLAGS.smoother;
    throw optionError(`--${flag}`, m ? m[2] : e.message);
  }
  const coarse: Record<string, unknown> = { ...DEFAULT_PMG_COARSE_RECIPE };
  for (const [field, v] of Object.entries(coarseRaw)) {
    const c = checkValue(FIELD_SPECS[field as ScalarField], v, true);
    if (c.error) throw optionError(`--${PMG_COARSE_PREFIX}${RECIPE_FLAGS[field as ScalarField]}`, c.error);
    coarse[field] = c.value;
  }
  const cr = coarse as unknown as Recipe;
  fillDeflate(cr);
  const cBad = crossCheck(cr, false);
  if (cBad) throw optionError(`--${PMG_COARSE_PREFIX}${RECIPE_FLAGS[cBad[0] as ScalarField] ?? cBad[0]}`, cBad[1]);
  const cUnused = firstUnused(cr, Object.keys(coarseRaw) as RecipeField[]);
  if (cUnused) throw optionError(`--${PMG_COARSE_PREFIX}${RECIPE_FLAGS[cUnused.field as ScalarField]}`, cUnused.why);
  o.coarse = checkCoarse(cr, (f, m) => optionError(`--${PMG_COARSE_PREFIX}${RECIPE_FLAGS[f as ScalarField]}`, m));
}
