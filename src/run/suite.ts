/**
 * Suite files: which matrices and which solver recipes a sweep runs.
 *
 *   { "schema": "slabbench-suite/1", "description": "…",
 *     "matrices": [ { "name": "duct-pulse", "note": "invented scenario", "generate": { …generator parameters… } },
 *                   { "name": "mine", "file": "A.mtx", "rhs": "b.mtx", "blockSize": 6 },
 *                   { "name": "steps", "sequence": [ { "file": "J1.mtx", "rhs": "r1.mtx" }, { "file": "J2.mtx", "rhs": "r2.mtx" } ] },
 *                   { "name": "bore", "generate": { … }, "sequence": { "kind": "newton", "steps": 3 } } ],
 *     "recipes":  [ { "name": "gmres-block-ilu0", "krylov": "gmres", "preconditioner": "block-ilu0", … } ] }
 *
 * Paths are relative to the suite file. Every error is one line naming the file and the field path.
 */
import { existsSync } from 'node:fs';
import { dirname, resolve, isAbsolute } from 'node:path';
import { createHash } from 'node:crypto';
import type { Recipe } from '../solvers/recipe.js';
import { UserError } from '../util/errors.js';
import { SUITE_SCHEMA } from './results-types.js';
import type { SuiteParsers } from './deps.js';
import { readJsonFile } from '../util/json-file.js';
import { layoutPathFor, readLayoutFor } from '../sparse/layout.js';
import { expandRecipeGrid, gridRecipeName } from './recipe-grid.js';
import { SEQUENCE_FIELDS } from '../solvers/sequence-policy.js';

/** Names become file names (cache, reports) and CSV cells: keep them plain. */
export const NAME_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._+-]{0,79}$/;

export interface FileMatrixEntry {
  kind: 'file';
  name: string;
  note?: string;
  /** As written in the suite (relative to the suite file). */
  file: string;
  rhs?: string;
  /** Absolute paths. */
  filePath: string;
  rhsPath?: string;
  blockSize?: number;
}

export interface GeneratedMatrixEntry {
  kind: 'generate';
  name: string;
  note?: string;
  /** Generator parameters as validated by parseGeneratorParams. */
  generate: unknown;
  /** The object as written (canonical JSON of it keys the cache). */
  generateRaw: Record<string, unknown>;
  /**
   * Optional committed copy of this case (`NAME.mtx` with `NAME.rhs.mtx` and `NAME.layout.json`
   * beside it), used instead of generating when its layout records the same generator parameters.
   */
  prebuilt?: string;
  prebuiltPath?: string;
  /** A generated sequence (src/dg/sequence.ts: newton steps or slab marching), validated; absent: one system. */
  sequence?: unknown;
  /** The `sequence` object as written (part of the cache key). */
  sequenceRaw?: Record<string, unknown>;
}

/** One system of a sequence given as files. */
export interface SequenceFile {
  /** As written (relative to the suite file). */
  file: string;
  rhs: string;
  /** Absolute paths. */
  filePath: string;
  rhsPath: string;
}

/** A sequence of systems sharing one pattern, given as an ordered list of Matrix Market (or .npz) files. */
export interface SequenceFilesEntry {
  kind: 'sequence-files';
  name: string;
  note?: string;
  files: SequenceFile[];
  blockSize?: number;
}

export type SuiteMatrix = FileMatrixEntry | GeneratedMatrixEntry | SequenceFilesEntry;

/** Largest number of files of a sequence entry. */
export const MAX_SEQUENCE_FILES = 1000;

/** True when a suite entry is a sequence of systems (files or generated). */
export function isSequenceEntry(m: SuiteMatrix): boolean {
  return m.kind === 'sequence-files' || (m.kind === 'generate' && m.sequence !== undefined);
}

export interface Suite {
  /** Path as given by the user (used in messages). */
  path: string;
  /** Absolute folder of the suite file: relative matrix paths start here. */
  dir: string;
  description?: string;
  matrices: SuiteMatrix[];
  recipes: Recipe[];
  /** Identity of the parsed content (see ResultsDoc.suite.fingerprint). */
  fingerprint: string;
  /** Suite-level timing protocol (command-line options override it). */
  timing?: SuiteTiming;
  /** Recipes that were parameter grids (a field given as a list), when there were any. */
  grids?: SuiteGrid[];
}

/** One grid recipe of the suite file and the recipes it expanded to. */
export interface SuiteGrid {
  /** Position in the file's `recipes` array. */
  recipeIndex: number;
  /** The fields given as lists, in file order. */
  fields: string[];
  /** Names of the expanded recipes, in expansion order (last listed field fastest). */
  recipes: string[];
}

/** `"timing": { "repeats": R, "warmup": true|false }` in a suite file. */
export interface SuiteTiming {
  repeats?: number;
  warmup?: boolean;
}

/** Largest accepted repeat count (suite files and --repeats). */
export const MAX_REPEATS = 100;

function parseTiming(v: unknown, fail: (field: string, what: string) => never): SuiteTiming {
  if (!isPlainObject(v)) return fail('timing', `expected an object such as { "repeats": 3, "warmup": true }, got ${describe(v)}`);
  const out: SuiteTiming = {};
  for (const [k, x] of Object.entries(v)) {
    if (k === 'repeats') {
      if (typeof x !== 'number' || !Number.isInteger(x) || x < 1 || x > MAX_REPEATS) fail('timing.repeats', `expected an integer from 1 to ${MAX_REPEATS}, got ${describe(x)}`);
      out.repeats = x as number;
    } else if (k === 'warmup') {
      if (typeof x !== 'boolean') fail('timing.warmup', `expected true or false, got ${describe(x)}`);
      out.warmup = x as boolean;
    } else {
      fail(`timing.${k}`, 'unknown key (expected repeats, warmup)');
    }
  }
  return out;
}

const TOP_KEYS = new Set(['schema', 'description', 'matrices', 'recipes', 'timing', '$comment']);
const FILE_KEYS = new Set(['name', 'note', 'file', 'rhs', 'blockSize']);
const GEN_KEYS = new Set(['name', 'note', 'generate', 'prebuilt', 'sequence']);
const SEQ_KEYS = new Set(['name', 'note', 'sequence', 'blockSize']);

function isPlainObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function describe(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'an array';
  if (typeof v === 'string') return JSON.stringify(v.length > 40 ? `${v.slice(0, 40)}…` : v);
  if (typeof v === 'object') return 'an object';
  return String(v);
}

/** Stable JSON (sorted keys) so the fingerprint and cache keys do not depend on key order. */
export function canonicalJson(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(canonicalJson).join(',')}]`;
  if (isPlainObject(v)) {
    return `{${Object.keys(v).sort().filter((k) => v[k] !== undefined)
      .map((k) => `${JSON.stringify(k)}:${canonicalJson(v[k])}`).join(',')}}`;
  }
  return JSON.stringify(v) ?? 'null';
}

export function shortHash(text: string): string {
  return createHash('sha256').update(text).digest('hex').slice(0, 16);
}

/**
 * Validate a parsed suite object. `file` is the name used in messages, `dir` the folder relative
 * paths start from. Does not touch the file system (readSuite checks that files exist).
 */
export function parseSuite(obj: unknown, file: string, dir: string, parsers: SuiteParsers): Suite {
  const fail = (field: string, what: string): never => {
    throw new UserError(`${file}: ${field ? `${field}: ` : ''}${what}`);
  };
  if (!isPlainObject(obj)) fail('', `expected a JSON object with "schema": "${SUITE_SCHEMA}", got ${describe(obj)}`);
  const top = obj as Record<string, unknown>;
  if (top.schema !== SUITE_SCHEMA) {
    fail('schema', top.schema === undefined
      ? `missing; expected "${SUITE_SCHEMA}"`
      : `expected "${SUITE_SCHEMA}", got ${describe(top.schema)}`);
  }
  for (const k of Object.keys(top)) if (!TOP_KEYS.has(k)) fail(k, `unknown key (expected one of ${[...TOP_KEYS].join(', ')})`);
  if (top.description !== undefined && typeof top.description !== 'string') fail('description', `expected a string, got ${describe(top.description)}`);
  const timing = top.timing !== undefined ? parseTiming(top.timing, fail) : undefined;

  if (!Array.isArray(top.matrices)) fail('matrices', `expected an array, got ${describe(top.matrices)}`);
  if (!Array.isArray(top.recipes)) fail('recipes', `expected an array, got ${describe(top.recipes)}`);
  const rawMatrices = top.matrices as unknown[];
  const rawRecipes = top.recipes as unknown[];
  if (rawMatrices.length === 0) fail('matrices', 'expected at least one matrix');
  if (rawRecipes.length === 0) fail('recipes', 'expected at least one recipe');

  const checkName = (v: unknown, field: string, seen: Map<string, number>, kind: string): string => {
    if (typeof v !== 'string') return fail(field, `expected a string, got ${describe(v)}`);
    if (!NAME_PATTERN.test(v)) return fail(field, `expected letters, digits, '.', '_', '+' or '-' (up to 80, starting with a letter or digit), got ${describe(v)}`);
    const prev = seen.get(v);
    if (prev !== undefined) return fail(field, `duplicate ${kind} name "${v}" (also ${kind === 'matrix' ? 'matrices' : 'recipes'}[${prev}])`);
    return v;
  };

  const matrices: SuiteMatrix[] = [];
  const matrixNames = new Map<string, number>();
  rawMatrices.forEach((m, i) => {
    const at = `matrices[${i}]`;
    if (!isPlainObject(m)) return fail(at, `expected an object, got ${describe(m)}`);
    const name = checkName(m.name, `${at}.name`, matrixNames, 'matrix');
    matrixNames.set(name, i);
    if (m.note !== undefined && typeof m.note !== 'string') fail(`${at}.note`, `expected a string, got ${describe(m.note)}`);
    const note = m.note as string | undefined;
    const hasFile = m.file !== undefined;
    const hasGen = m.generate !== undefined;
    const fileList = Array.isArray(m.sequence);
    if (fileList && !hasFile && !hasGen) {
      matrices.push(parseSequenceFiles(m, at, name, note, dir, fail));
      return undefined;
    }
    if (hasFile === hasGen) fail(at, 'expected exactly one of "file" (a Matrix Market file), "generate" (generator parameters) or "sequence" (a list of { "file", "rhs" })');
    if (hasFile) {
      for (const k of Object.keys(m)) if (!FILE_KEYS.has(k)) fail(`${at}.${k}`, `unknown key for a file matrix (expected ${[...FILE_KEYS].join(', ')})`);
      if (typeof m.file !== 'string' || m.file === '') fail(`${at}.file`, `expected a path to a .mtx, .mtx.gz or .npz file, got ${describe(m.file)}`);
      const f = m.file as string;
      if (!/\.(mtx(\.gz)?|npz)$/i.test(f)) fail(`${at}.file`, `expected a path ending in .mtx, .mtx.gz or .npz, got ${describe(f)}`);
      if (m.rhs !== undefined && (typeof m.rhs !== 'string' || m.rhs === '')) fail(`${at}.rhs`, `expected a path to a Matrix Market vector, got ${describe(m.rhs)}`);
      if (m.blockSize !== undefined && !(Number.isInteger(m.blockSize) && (m.blockSize as number) >= 1 && (m.blockSize as number) <= 4096)) {
        fail(`${at}.blockSize`, `expected an integer from 1 to 4096, got ${describe(m.blockSize)}`);
      }
      const rhs = m.rhs as string | undefined;
      matrices.push({
        kind: 'file', name, note, file: f, rhs,
        filePath: isAbsolute(f) ? f : resolve(dir, f),
        rhsPath: rhs === undefined ? undefined : isAbsolute(rhs) ? rhs : resolve(dir, rhs),
        blockSize: m.blockSize as number | undefined,
      });
    } else {
      for (const k of Object.keys(m)) if (!GEN_KEYS.has(k)) fail(`${at}.${k}`, `unknown key for a generated matrix (expected ${[...GEN_KEYS].join(', ')}; rhs and block size come from the generator)`);
      if (!isPlainObject(m.generate)) fail(`${at}.generate`, `expected an object of generator parameters, got ${describe(m.generate)}`);
      const generate = parsers.parseGeneratorParams(m.generate, `${file}: ${at}.generate`);
      if (m.prebuilt !== undefined && (typeof m.prebuilt !== 'string' || !/\.mtx(\.gz)?$/i.test(m.prebuilt))) {
        fail(`${at}.prebuilt`, `expected a path ending in .mtx or .mtx.gz (a committed copy of the case), got ${describe(m.prebuilt)}`);
      }
      const prebuilt = m.prebuilt as string | undefined;
      let sequence: unknown;
      if (m.sequence !== undefined) {
        if (!isPlainObject(m.sequence)) fail(`${at}.sequence`, `expected { "kind": "newton", "steps": N } or { "kind": "slabs" } with generate, got ${describe(m.sequence)}`);
        if (prebuilt !== undefined) fail(`${at}.prebuilt`, 'a generated sequence has no committed copy (it is built into the cache); remove prebuilt');
        if (!parsers.parseSequenceSpec) fail(`${at}.sequence`, 'generated sequences are not supported by this build');
        sequence = parsers.parseSequenceSpec!(m.sequence, `${file}: ${at}.sequence`, generate);
      }
      matrices.push({
        kind: 'generate', name, note, generate, generateRaw: m.generate as Record<string, unknown>,
        prebuilt, prebuiltPath: prebuilt === undefined ? undefined : isAbsolute(prebuilt) ? prebuilt : resolve(dir, prebuilt),
        ...(sequence !== undefined ? { sequence, sequenceRaw: m.sequence as Record<string, unknown> } : {}),
      });
    }
    return undefined;
  });

  const recipes: Recipe[] = [];
  const recipeNames = new Map<string, number>();
  const grids: SuiteGrid[] = [];
  rawRecipes.forEach((r, i) => {
    const at = `recipes[${i}]`;
    if (!isPlainObject(r)) return fail(at, `expected an object, got ${describe(r)}`);
    if (r.name !== undefined && typeof r.name !== 'string' && !Array.isArray(r.name)) fail(`${at}.name`, `expected a string, got ${describe(r.name)}`);
    // A field given as a list is a parameter grid: one recipe per value (src/run/recipe-grid.ts).
    const points = expandRecipeGrid(r, `${file}: ${at}`);
    const names: string[] = [];
    for (const point of points) {
      let recipe: Recipe;
      try {
        recipe = parsers.parseRecipe(point.raw, `${file}: ${at}`);
      } catch (e) {
        if (point.values.length === 0 || !(e instanceof UserError)) throw e;
        throw new UserError(`${e.message} (grid point ${point.values.map(([k, v]) => `${k} = ${JSON.stringify(v)}`).join(', ')})`, e.exitCode);
      }
      // Without a name the recipe parser's default ("krylov-preconditioner") names it; duplicates are still errors.
      const base = (r.name as string | undefined) ?? recipe.name;
      const name = checkName(gridRecipeName(base, point.values), `${at}.name`, recipeNames, 'recipe');
      recipeNames.set(name, i);
      recipes.push({ ...recipe, name });
      names.push(name);
    }
    if (points.length > 1 || points[0]!.values.length > 0) {
      grids.push({ recipeIndex: i, fields: points[0]!.values.map(([k]) => k), recipes: names });
    }
    return undefined;
  });

  // recipes that set a sequence policy need a sequence to act on
  if (!matrices.some(isSequenceEntry)) {
    rawRecipes.forEach((r, i) => {
      const key = isPlainObject(r) ? SEQUENCE_FIELDS.find((k) => r[k] !== undefined) : undefined;
      if (key) fail(`recipes[${i}].${key}`, 'has no effect: the suite has no sequence matrices (a "sequence" entry); remove it');
    });
  }

  const fingerprint = shortHash(canonicalJson({
    matrices: matrices.map((m) => m.kind === 'file'
      ? { name: m.name, file: m.file, rhs: m.rhs, blockSize: m.blockSize }
      : m.kind === 'sequence-files'
        ? { name: m.name, sequence: m.files.map((f) => ({ file: f.file, rhs: f.rhs })), blockSize: m.blockSize }
        : { name: m.name, generate: m.generateRaw, ...(m.sequenceRaw ? { sequence: m.sequenceRaw } : {}) }),
    recipes,
  }));
  const suite: Suite = { path: file, dir, description: top.description as string | undefined, matrices, recipes, fingerprint, ...(timing ? { timing } : {}) };
  if (grids.length > 0) suite.grids = grids;
  return suite;
}

/** A sequence given as a list of files: `"sequence": [ { "file": "J1.mtx", "rhs": "r1.mtx" }, … ]`. */
function parseSequenceFiles(
  m: Record<string, unknown>, at: string, name: string, note: string | undefined, dir: string,
  fail: (field: string, what: string) => never,
): SequenceFilesEntry {
  for (const k of Object.keys(m)) if (!SEQ_KEYS.has(k)) fail(`${at}.${k}`, `unknown key for a sequence of files (expected ${[...SEQ_KEYS].join(', ')})`);
  const list = m.sequence as unknown[];
  if (list.length < 1) fail(`${at}.sequence`, 'expected at least one { "file", "rhs" } entry');
  if (list.length > MAX_SEQUENCE_FILES) fail(`${at}.sequence`, `expected at most ${MAX_SEQUENCE_FILES} systems, got ${list.length}`);
  if (m.blockSize !== undefined && !(Number.isInteger(m.blockSize) && (m.blockSize as number) >= 1 && (m.blockSize as number) <= 4096)) {
    fail(`${at}.blockSize`, `expected an integer from 1 to 4096, got ${describe(m.blockSize)}`);
  }
  const abs = (p: string): string => (isAbsolute(p) ? p : resolve(dir, p));
  const files = list.map((e, k): SequenceFile => {
    const where = `${at}.sequence[${k}]`;
    if (!isPlainObject(e)) return fail(where, `expected { "file": "….mtx", "rhs": "….mtx" }, got ${describe(e)}`);
    for (const key of Object.keys(e)) if (key !== 'file' && key !== 'rhs') fail(`${where}.${key}`, 'unknown key (expected file, rhs)');
    if (typeof e.file !== 'string' || !/\.(mtx(\.gz)?|npz)$/i.test(e.file)) fail(`${where}.file`, `expected a path ending in .mtx, .mtx.gz or .npz, got ${describe(e.file)}`);
    if (typeof e.rhs !== 'string' || e.rhs === '') fail(`${where}.rhs`, `expected a path to a Matrix Market vector (each system of a sequence has its own right-hand side), got ${describe(e.rhs)}`);
    return { file: e.file as string, rhs: e.rhs as string, filePath: abs(e.file as string), rhsPath: abs(e.rhs as string) };
  });
  return { kind: 'sequence-files', name, note, files, blockSize: m.blockSize as number | undefined };
}

/** Read, parse and validate a suite file; also checks that every referenced file exists. */
export function readSuite(path: string, parsers: SuiteParsers): Suite {
  const obj = readJsonFile(path, 'suite file');
  const suite = parseSuite(obj, path, dirname(resolve(path)), parsers);
  suite.matrices.forEach((m, i) => {
    if (m.kind === 'sequence-files') {
      m.files.forEach((f, k) => {
        if (!existsSync(f.filePath)) throw new UserError(`${path}: matrices[${i}].sequence[${k}].file: no such file "${f.file}" (looked for ${f.filePath})`);
        if (!existsSync(f.rhsPath)) throw new UserError(`${path}: matrices[${i}].sequence[${k}].rhs: no such file "${f.rhs}" (looked for ${f.rhsPath})`);
      });
      return;
    }
    if (m.kind !== 'file') return;
    if (!existsSync(m.filePath)) throw new UserError(`${path}: matrices[${i}].file: no such file "${m.file}" (looked for ${m.filePath})`);
    if (m.rhsPath !== undefined && !existsSync(m.rhsPath)) throw new UserError(`${path}: matrices[${i}].rhs: no such file "${m.rhs}" (looked for ${m.rhsPath})`);
    // a layout beside the matrix fixes the block size: a different suite blockSize would fail every run
    if (m.blockSize !== undefined) {
      const layout = readLayoutFor(m.filePath);
      if (layout !== undefined && layout.blockSize !== m.blockSize) {
        throw new UserError(`${path}: matrices[${i}].blockSize: ${m.blockSize} disagrees with ${layoutPathFor(m.filePath)} (blockSize ${layout.blockSize}); remove blockSize or fix the layout`);
      }
    }
  });
  return suite;
}

/**
 * Keep the matrices and recipes named in `onlyMatrix` / `onlyRecipe` (suite order kept).
 * A name that is not in the suite is an error, so a typo never silently runs nothing.
 */
export function selectFromSuite(suite: Suite, onlyMatrix?: string[], onlyRecipe?: string[]): { matrices: SuiteMatrix[]; recipes: Recipe[] } {
  const pick = <T extends { name: string }>(items: T[], wanted: string[] | undefined, option: string): T[] => {
    if (!wanted || wanted.length === 0) return items;
    const names = new Set(items.map((x) => x.name));
    for (const w of wanted) {
      if (!names.has(w)) throw new UserError(`option ${option}: "${w}" is not in ${suite.path} (there: ${[...names].join(', ')})`);
    }
    const keep = new Set(wanted);
    return items.filter((x) => keep.has(x.name));
  };
  return { matrices: pick(suite.matrices, onlyMatrix, '--only-matrix'), recipes: pick(suite.recipes, onlyRecipe, '--only-recipe') };
}

/** readSuite with the real recipe and generator-parameter parsers (library convenience). */
export async function loadSuite(path: string): Promise<Suite> {
  const real = await import('./real-deps.js');
  return readSuite(path, real);
}
