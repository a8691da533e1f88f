/**
 * History file: one JSON line per sweep (HistoryEntry), appended, read back by the report's history view.
 * Reading is tolerant of extra or missing optional fields but skips nothing: a line that is not an
 * entry is an error naming its line number.
 */
import { appendFileSync, existsSync, openSync, readSync, closeSync, fstatSync, readFileSync } from 'node:fs';
import { fileError, UserError } from '../util/errors.js';
import type { HistoryEntry, ResultsDoc } from './results-types.js';
import { bufferBytes, causeFromV1Reason } from './results.js';
import { outcomeOf } from '../solvers/types.js';
import { runWork } from './probe.js';

/**
 * Environment variables CI services set to the commit being built, in the order they are tried
 * (GitHub Actions, GitLab CI, TeamCity, Jenkins' git plugin, Buildkite, CircleCI, Travis CI,
 * Bitbucket Pipelines, Azure Pipelines, Drone, AppVeyor); names as each service documents them.
 */
export const COMMIT_VARIABLES = [
  'GITHUB_SHA', 'CI_COMMIT_SHA', 'BUILD_VCS_NUMBER', 'GIT_COMMIT', 'BUILDKITE_COMMIT', 'CIRCLE_SHA1',
  'TRAVIS_COMMIT', 'BITBUCKET_COMMIT', 'BUILD_SOURCEVERSION', 'DRONE_COMMIT_SHA', 'APPVEYOR_REPO_COMMIT',
] as const;

/** Longest accepted --label. */
export const MAX_LABEL_LENGTH = 200;

/** The history label: the option when given, else the first commit variable set in `env`. */
export function historyLabel(option: string | undefined, env: NodeJS.ProcessEnv = process.env): { label: string; labelFrom: string } | undefined {
  if (option !== undefined) return { label: option, labelFrom: 'option' };
  for (const v of COMMIT_VARIABLES) {
    const x = env[v]?.trim();
    if (x) return { label: x.slice(0, MAX_LABEL_LENGTH), labelFrom: v };
  }
  return undefined;
}

/** The last entry of a history file, or undefined when the file is missing, empty or unreadable. */
export function lastHistoryEntry(path: string): HistoryEntry | undefined {
  if (!existsSync(path)) return undefined;
  try {
    const entries = readHistory(path);
    return entries[entries.length - 1];
  } catch {
    return undefined; // a broken history is reported where it is read for display, not here
  }
}

/**
 * The history line for one results document (runs that could not start carry no numbers and are left out).
 * `label` is --label (else a CI commit variable); `previous` is the file's last entry, to mark a changed suite.
 */
export function historyEntry(doc: ResultsDoc, opts: { label?: string; previous?: HistoryEntry; env?: NodeJS.ProcessEnv } = {}): HistoryEntry {
  const runs: HistoryEntry['runs'] = [];
  for (const run of doc.runs) {
    const r = run.result;
    if (!r) continue;
    const work = runWork(r);
    const rep = run.repeats;
    runs.push({
      matrix: run.matrix,
      recipe: run.recipe,
      outcome: r.outcome,
      cause: r.cause,
      iterations: r.iterations,
      // JSON has no NaN/Infinity and the field is a number: a non-finite residual (diverged run) is stored
      // as the largest double, which plots as "off the top" and keeps the line valid.
      trueRelativeResidual: Number.isFinite(r.trueRelativeResidual) ? r.trueRelativeResidual : Number.MAX_VALUE,
      setupSeconds: rep ? rep.median.setupSeconds : r.timing.setupSeconds,
      solveSeconds: rep ? rep.median.solveSeconds : r.timing.solveSeconds,
      peakBytes: r.memory.peakBytes,
      bufferBytes: bufferBytes(run),
      ...(rep ? { repeats: rep.count, totalSecondsMin: rep.min.totalSeconds, totalSecondsMax: rep.max.totalSeconds } : {}),
      ...(work ? { bytesMoved: work.setup.bytes + work.solve.bytes, flops: work.setup.flops + work.solve.flops } : {}),
      ...(run.modeled ? { modeledSeconds: run.modeled.totalSeconds } : {}),
    });
  }
  const label = historyLabel(opts.label, opts.env);
  const prevFp = opts.previous?.suite?.fingerprint;
  const fp = doc.suite.fingerprint;
  return {
    date: doc.date,
    ...(doc.commit ? { commit: doc.commit } : {}),
    slabbench: doc.slabbench,
    suite: { description: doc.suite.description, fingerprint: fp },
    ...(label ?? {}),
    ...(prevFp !== undefined && fp !== undefined ? { suiteChanged: prevFp !== fp } : {}),
    runs,
  };
}

function endsWithNewline(path: string): boolean {
  const fd = openSync(path, 'r');
  try {
    const size = fstatSync(fd).size;
    if (size === 0) return true;
    const buf = Buffer.alloc(1);
    readSync(fd, buf, 0, 1, size - 1);
    return buf[0] === 0x0a;
  } finally {
    closeSync(fd);
  }
}

/**
 * Append one entry as one line. A single append of a short line is not torn by a concurrent reader;
 * if the file's last line was cut short (a crash mid-write), the new entry still starts on its own line
 * and the cut line is reported by readHistory.
 */
export function appendHistory(path: string, entry: HistoryEntry): void {
  const prefix = existsSync(path) && !endsWithNewline(path) ? '\n' : '';
  appendFileSync(path, `${prefix}${JSON.stringify(entry)}\n`);
}

/**
 * Lines written before causes replaced stop reasons carry `reason`: rename it to `cause` (with
 * its outcome) in place. A line with `cause` is left alone.
 */
function upgradeHistoryRun(r: Record<string, unknown>): void {
  if (r.cause !== undefined || typeof r.reason !== 'string') return;
  const cause = causeFromV1Reason(r.reason);
  r.cause = cause ?? r.reason;
  r.outcome = cause ? outcomeOf(cause) : 'failed';
  delete r.reason;
}

function checkEntry(v: unknown): string | undefined {
  if (typeof v !== 'object' || v === null || Array.isArray(v)) return 'expected a JSON object';
  const e = v as Record<string, unknown>;
  if (typeof e.date !== 'string') return '"date": expected a string';
  if (typeof e.slabbench !== 'string') return '"slabbench": expected a string';
  if (e.commit !== undefined && typeof e.commit !== 'string') return '"commit": expected a string';
  if (e.label !== undefined && typeof e.label !== 'string') return '"label": expected a string';
  if (e.suiteChanged !== undefined && typeof e.suiteChanged !== 'boolean') return '"suiteChanged": expected true or false';
  if (!Array.isArray(e.runs)) return '"runs": expected an array';
  for (let i = 0; i < e.runs.length; i++) {
    const r = e.runs[i] as Record<string, unknown>;
    if (typeof r !== 'object' || r === null) return `runs[${i}]: expected an object`;
    upgradeHistoryRun(r);
    for (const k of ['matrix', 'recipe', 'outcome', 'cause']) if (typeof r[k] !== 'string') return `runs[${i}].${k}: expected a string`;
    for (const k of ['iterations', 'trueRelativeResidual', 'setupSeconds', 'solveSeconds', 'peakBytes']) {
      if (typeof r[k] !== 'number') return `runs[${i}].${k}: expected a number`;
    }
  }
  return undefined;
}

/** Read every entry; blank lines are allowed, anything else that is not an entry is an error. */
export function readHistory(path: string): HistoryEntry[] {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UserError(`${path}: ${code === 'ENOENT' ? 'no such history file' : `cannot read (${code ?? String(e)})`}`);
  }
  const out: HistoryEntry[] = [];
  const lines = text.split('\n');
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i].trim();
    if (line === '') continue;
    let v: unknown;
    try {
      v = JSON.parse(line);
    } catch (e) {
      throw fileError(path, i + 1, `not a JSON line (${(e as Error).message}); fix or delete this line`);
    }
    const problem = checkEntry(v);
    if (problem) throw fileError(path, i + 1, `not a history entry: ${problem}`);
    out.push(v as HistoryEntry);
  }
  return out;
}
