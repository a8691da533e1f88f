/**
 * The results document of a sweep (results.json) and its CSV twin (results.csv).
 * Types live in results-types.ts; this file builds, validates, and writes them.
 */
import { blockPattern } from '../report/pattern.js';
import { execFileSync } from 'node:child_process';
import { realpathSync, readFileSync } from 'node:fs';
import { cpus } from 'node:os';
import { fileURLToPath } from 'node:url';
import type { Bsr } from '../sparse/types.js';
import { writeFileAtomicSync } from '../util/atomic-write.js';
import { UserError } from '../util/errors.js';
import { VERSION } from '../version.js';
import { RESULTS_SCHEMA, type MatrixInfo, type ResultsDoc, type RunRecord } from './results-types.js';

/** Folder holding slabbench's package.json (src/run and dist/run are both two levels down). */
function packageRoot(): string {
  return fileURLToPath(new URL('../../', import.meta.url));
}

/**
 * Commit of the slabbench checkout being measured, when it is a git work tree; undefined otherwise
 * (an installed package inside someone else's repository does not borrow that repository's commit).
 */
export function gitCommit(root: string = packageRoot()): string | undefined {
  try {
    const out = execFileSync('git', ['rev-parse', '--show-toplevel', 'HEAD'], {
      cwd: root, encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'], timeout: 5000,
    }).trim().split('\n');
    if (out.length !== 2) return undefined;
    if (realpathSync(out[0]) !== realpathSync(root)) return undefined;
    return /^[0-9a-f]{40,64}$/.test(out[1]) ? out[1] : undefined;
  } catch {
    return undefined; // no git, not a repository, or no commit yet
  }
}

export interface Environment {
  slabbench: string;
  commit?: string;
  node: string;
  cpu: string;
  date: string;
}

export function environment(): Environment {
  const commit = gitCommit();
  return {
    slabbench: VERSION,
    ...(commit ? { commit } : {}),
    node: process.version,
    cpu: cpus()[0]?.model?.trim() || 'unknown',
    date: new Date().toISOString(),
  };
}

export function matrixInfo(
  base: { name: string; source: 'file' | 'generated'; path: string; note?: string },
  loaded: {
    csr: { nRows: number; values: Float64Array }; bsr: Bsr; bs: number; blockSizeSource?: string; slabOffsets?: Int32Array;
    /** A loaded system's sizes and block structure, read without building a format it does not hold. */
    n?: number; nnz?: number; blockStructure?: () => Bsr;
  },
): MatrixInfo {
  const bsr = loaded.blockStructure ? loaded.blockStructure() : loaded.bsr;
  return {
    name: base.name,
    source: base.source,
    path: base.path,
    ...(base.note !== undefined ? { note: base.note } : {}),
    n: loaded.n ?? loaded.csr.nRows,
    nnz: loaded.nnz ?? loaded.csr.values.length,
    bs: loaded.bs,
    nBlockRows: bsr.nBlockRows,
    nBlocks: bsr.colInd.length,
    nSlabs: loaded.slabOffsets && loaded.slabOffsets.length >= 2 ? loaded.slabOffsets.length - 1 : 1,
    // 64 cells keep results.json small; the report draws whatever grid it is given.
    pattern: blockPattern(bsr, loaded.slabOffsets, 64),
    ...(loaded.blockSizeSource !== undefined ? { blockSizeSource: loaded.blockSizeSource } : {}),
  };
}

/** Sum of the counted buffers (matrix, preconditioner, Krylov basis, work): machine-independent, unlike RSS. */
export function bufferBytes(r: RunRecord): number | undefined {
  const m = r.result?.memory;
  if (!m) return undefined;
  return m.matrixBytes + m.preconditionerBytes + m.krylovBytes + m.workBytes;
}

export const CSV_COLUMNS = [
  'matrix', 'recipe', 'krylov', 'preconditioner', 'ordering', 'restart', 'rtol',
  'reason', 'converged', 'iterations', 'restarts', 'trueRelativeResidual',
  'setupSeconds', 'solveSeconds', 'matrixBytes', 'preconditionerBytes', 'krylovBytes', 'workBytes',
  'bufferBytes', 'peakBytes', 'error',
] as const;

function csvCell(v: unknown): string {
  if (v === undefined || v === null) return '';
  const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : String(v)) : String(v);
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** One row per run with the key numbers (the JSON document holds everything else). */
export function resultsCsv(doc: ResultsDoc): string {
  const lines = [CSV_COLUMNS.join(',')];
  for (const run of doc.runs) {
    const r = run.result;
    const p = run.recipeParams;
    const row: Record<(typeof CSV_COLUMNS)[number], unknown> = {
      matrix: run.matrix, recipe: run.recipe, krylov: p.krylov, preconditioner: p.preconditioner,
      ordering: p.ordering, restart: p.restart, rtol: p.rtol,
      reason: r?.reason ?? 'error', converged: r ? r.converged : false, iterations: r?.iterations,
      restarts: r?.restarts, trueRelativeResidual: r?.trueRelativeResidual,
      setupSeconds: r?.timing.setupSeconds, solveSeconds: r?.timing.solveSeconds,
      matrixBytes: r?.memory.matrixBytes, preconditionerBytes: r?.memory.preconditionerBytes,
      krylovBytes: r?.memory.krylovBytes, workBytes: r?.memory.workBytes, bufferBytes: bufferBytes(run),
      peakBytes: r?.memory.peakBytes, error: run.error,
    };
    lines.push(CSV_COLUMNS.map((c) => csvCell(row[c])).join(','));
  }
  return `${lines.join('\n')}\n`;
}

/** JSON cannot hold NaN/Infinity; they become strings so a diverged run's numbers survive the round trip. */
function jsonReplacer(_key: string, v: unknown): unknown {
  if (typeof v === 'number' && !Number.isFinite(v)) return String(v);
  return v;
}

export function resultsJson(doc: ResultsDoc): string {
  return `${JSON.stringify(doc, jsonReplacer, 1)}\n`;
}

/** Write results.json and results.csv (each atomically). */
export function writeResults(doc: ResultsDoc, jsonPath: string, csvPath: string): void {
  writeFileAtomicSync(jsonPath, resultsJson(doc));
  writeFileAtomicSync(csvPath, resultsCsv(doc));
}

const NON_FINITE: Record<string, number> = { NaN: Number.NaN, Infinity: Number.POSITIVE_INFINITY, '-Infinity': Number.NEGATIVE_INFINITY };

/** Numbers written as "NaN"/"Infinity" by resultsJson come back as numbers in the numeric result fields. */
function reviveNumbers(r: Record<string, unknown> | undefined): void {
  if (!r) return;
  for (const k of ['trueRelativeResidual', 'baselineNorm']) {
    const v = r[k];
    if (typeof v === 'string' && v in NON_FINITE) r[k] = NON_FINITE[v];
  }
  const h = r.history;
  if (Array.isArray(h)) for (let i = 0; i < h.length; i++) if (typeof h[i] === 'string' && h[i] in NON_FINITE) h[i] = NON_FINITE[h[i]];
}

/**
 * Read and check a results document (a sweep's results.json, a merged file, or a baseline).
 * Checks the schema and the fields check/merge/report rely on; one-line UserError otherwise.
 */
export function readResults(path: string): ResultsDoc {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UserError(`${path}: ${code === 'ENOENT' ? 'no such results file' : `cannot read (${code ?? String(e)})`}`);
  }
  let obj: unknown;
  try {
    obj = JSON.parse(text);
  } catch (e) {
    throw new UserError(`${path}: not valid JSON (${(e as Error).message})`);
  }
  return validateResults(obj, path);
}

export function validateResults(obj: unknown, path: string): ResultsDoc {
  const fail = (what: string): never => { throw new UserError(`${path}: ${what}`); };
  if (typeof obj !== 'object' || obj === null || Array.isArray(obj)) return fail('expected a results document (JSON object)');
  const d = obj as Record<string, unknown>;
  if (d.schema !== RESULTS_SCHEMA) fail(`schema: expected "${RESULTS_SCHEMA}", got ${JSON.stringify(d.schema)}`);
  if (!Array.isArray(d.runs)) fail('runs: expected an array');
  if (!Array.isArray(d.matrices)) fail('matrices: expected an array');
  if (typeof d.parameters !== 'object' || d.parameters === null) fail('parameters: expected an object');
  if (typeof d.suite !== 'object' || d.suite === null) fail('suite: expected an object');
  (d.runs as unknown[]).forEach((r, i) => {
    if (typeof r !== 'object' || r === null) fail(`runs[${i}]: expected an object`);
    const run = r as Record<string, unknown>;
    if (typeof run.matrix !== 'string') fail(`runs[${i}].matrix: expected a string`);
    if (typeof run.recipe !== 'string') fail(`runs[${i}].recipe: expected a string`);
    if (typeof run.recipeParams !== 'object' || run.recipeParams === null) fail(`runs[${i}].recipeParams: expected an object`);
    if (run.result === undefined && typeof run.error !== 'string') fail(`runs[${i}]: expected "result" or "error"`);
    if (run.result !== undefined) {
      const res = run.result as Record<string, unknown>;
      if (typeof res !== 'object' || res === null) fail(`runs[${i}].result: expected an object`);
      if (typeof res.reason !== 'string') fail(`runs[${i}].result.reason: expected a string`);
      if (typeof res.iterations !== 'number') fail(`runs[${i}].result.iterations: expected a number`);
      if (typeof res.memory !== 'object' || res.memory === null) fail(`runs[${i}].result.memory: expected an object`);
      if (typeof res.timing !== 'object' || res.timing === null) fail(`runs[${i}].result.timing: expected an object`);
      reviveNumbers(res);
    }
  });
  return obj as ResultsDoc;
}

export function newResultsDoc(init: {
  env: Environment;
  suite: ResultsDoc['suite'];
  parameters: ResultsDoc['parameters'];
  matrices?: MatrixInfo[];
  runs?: RunRecord[];
  status?: ResultsDoc['status'];
}): ResultsDoc {
  return {
    schema: RESULTS_SCHEMA,
    ...init.env,
    suite: init.suite,
    parameters: init.parameters,
    status: init.status ?? 'complete',
    matrices: init.matrices ?? [],
    runs: init.runs ?? [],
  };
}
