import pc from 'picocolors';
import { withPrefix } from '../util/errors.js';
import type { MatrixInfo, ResultsDoc, RunRecord } from '../run/results-types.js';
import type { SolveResult } from '../solvers/types.js';
import { missingRecipes, runsByMatrix, statusWarning } from './group.js';
import { rankMatrix as rankByRule, rankOptionsFor, verdictLine, type MatrixRanking, type RankedRun } from './rank.js';
import { formatBytes, formatCount, formatResidual, formatSeconds, plural } from './format.js';

/** Colour only for a terminal, and never when NO_COLOR is set (https://no-color.org convention). */
export function shouldUseColor(stream: { isTTY?: boolean } = process.stdout): boolean {
  const noColor = process.env.NO_COLOR;
  return stream.isTTY === true && (noColor === undefined || noColor === '');
}

/** Preconditioner + Krylov bytes of a run: what the recipe itself adds on top of the matrix. */
export function recipeBytes(r: RankedRun): number | undefined {
  const m = r.run.result?.memory;
  return m ? m.preconditionerBytes + m.krylovBytes : undefined;
}

export const WINNER_MARK = '★';
export const MISMATCH_MARK = '†';
/** After a shared rank: tied within the sweep's timing noise (src/report/rank.ts). */
export const TIE_MARK = '=';

/**
 * Operator applications (matvecs) and preconditioner applications of a run's solve phase: the
 * exact work counters when the results have them, else the preconditioner meter's count (matvecs
 * then unknown).
 */
export function solveWork(res: SolveResult): { matvecs?: number; applies?: number } {
  const work = (res as { work?: { solve?: { matvecs?: number; preconditionerApplies?: number } } }).work?.solve;
  return {
    matvecs: work?.matvecs,
    applies: work?.preconditionerApplies ?? res.timing.preconditionerApplications,
  };
}

/** A table column: title, alignment, the cell text of a row, and how it behaves when space is short. */
interface Column {
  key: string;
  title: string;
  align: 'left' | 'right';
  cell(r: RankedRun, res: SolveResult | undefined): string;
  /** Wide layout only (the narrow layout drops it). */
  wideOnly?: boolean;
  /** Narrow layout only (replaces wide-only columns). */
  narrowOnly?: boolean;
}

const dash = '–';
const count = (v: number | undefined): string => (v === undefined || !Number.isFinite(v) ? dash : formatCount(v));

const COLUMNS: Column[] = [
  { key: 'rank', title: 'rank', align: 'right', cell: (r) => `${r.rank}${r.tied ? TIE_MARK : ''}${r.winner ? ` ${WINNER_MARK}` : ''}` },
  { key: 'recipe', title: 'recipe', align: 'left', cell: (r) => r.run.recipe },
  { key: 'iterations', title: 'iters', align: 'right', cell: (_r, res) => (res ? count(res.iterations) : dash) },
  { key: 'matvecs', title: 'matvecs', align: 'right', cell: (_r, res) => (res ? count(solveWork(res).matvecs) : dash) },
  { key: 'applies', title: 'applies', align: 'right', cell: (_r, res) => (res ? count(solveWork(res).applies) : dash) },
  { key: 'restarts', title: 'restarts', align: 'right', cell: (_r, res) => (res ? count(res.restarts) : dash), wideOnly: true },
  { key: 'cause', title: 'cause', align: 'left', cell: (_r, res) => (res ? res.cause : 'not run') },
  {
    key: 'residual', title: 'true res.', align: 'right',
    cell: (_r, res) => (res ? formatResidual(res.trueRelativeResidual) + (res.residualMismatch ? MISMATCH_MARK : '') : dash),
  },
  { key: 'setup', title: 'setup s', align: 'right', cell: (_r, res) => (res ? formatSeconds(res.timing.setupSeconds) : dash), wideOnly: true },
  { key: 'solve', title: 'solve s', align: 'right', cell: (_r, res) => (res ? formatSeconds(res.timing.solveSeconds) : dash), wideOnly: true },
  // bytes / bandwidth + flops / flop rate (README "Timing protocol, work, modeled time and ties")
  { key: 'modeled', title: 'model s', align: 'right', cell: (r) => (r.run.modeled ? formatSeconds(r.run.modeled.totalSeconds) : dash), wideOnly: true },
  {
    key: 'total', title: 'time s', align: 'right', narrowOnly: true,
    cell: (_r, res) => (res ? formatSeconds(res.timing.setupSeconds + res.timing.solveSeconds) : dash),
  },
  { key: 'memory', title: 'memory', align: 'right', cell: (r) => { const b = recipeBytes(r); return b === undefined ? dash : formatBytes(b); } },
];

/** Titles of the table columns in the wide layout (the HTML table uses these). */
export const WIDE_COLUMN_TITLES: readonly string[] = COLUMNS.filter((c) => !c.narrowOnly).map((c) => c.title);

/** Cells of one ranked row as plain text in the wide layout (shared with the HTML table). */
export function rowCells(r: RankedRun): string[] {
  return COLUMNS.filter((c) => !c.narrowOnly).map((c) => c.cell(r, r.run.result));
}

/** One-line description of a matrix for headings. */
export function matrixSummary(info: MatrixInfo | undefined): string {
  if (!info) return 'matrix not described in the results';
  const parts = [
    `${formatCount(info.n)} unknowns`,
    `${formatCount(info.nBlockRows)} block rows of ${info.bs}×${info.bs}`,
    `${formatCount(info.nBlocks)} stored blocks`,
    plural(info.nSlabs, 'slab'),
  ];
  if (info.sequence) parts.unshift(`sequence of ${plural(info.sequence.systems, 'system')} (${info.sequence.kind})`);
  return parts.join(', ');
}

const len = (s: string): number => [...s].length;

function pad(s: string, width: number, align: 'left' | 'right'): string {
  const n = len(s);
  if (n >= width) return s;
  return align === 'left' ? s + ' '.repeat(width - n) : ' '.repeat(width - n) + s;
}

/** Wrap words to lines of at most `width` characters, each line starting with `indent`. */
function wrap(textLine: string, width: number, indent: string): string[] {
  const out: string[] = [];
  let cur = '';
  for (const word of textLine.split(' ')) {
    const next = cur ? `${cur} ${word}` : word;
    if (len(indent) + len(next) > width && cur) { out.push(indent + cur); cur = word; } else cur = next;
  }
  if (cur) out.push(indent + cur);
  return out;
}

/** Terminal width to lay tables out for: the stream's columns when it reports some, else 80. */
export function terminalWidth(stream: { columns?: number; isTTY?: boolean } = process.stdout): number {
  const c = stream.columns;
  return stream.isTTY && typeof c === 'number' && Number.isFinite(c) && c >= 40 ? Math.floor(c) : 80;
}

/** The ranking of one matrix with the winner withdrawn when some of the sweep's recipes did not run on it. */
export function rankForTable(results: ResultsDoc, matrix: string, runs: RunRecord[]): { ranked: RankedRun[]; missing: string[]; ranking: MatrixRanking } {
  // The one ranking rule (rank.ts) with this document's rank-by, noise and completeness; missing recipes withdraw the winner.
  const missing = missingRecipes(results, matrix);
  const ranking = rankByRule(runs, rankOptionsFor(results));
  if (missing.length > 0) { for (const r of ranking.ranked) r.winner = false; ranking.winner = null; }
  return { ranked: ranking.ranked, missing, ranking };
}

const INDENT = '  ';
const GAP = '  ';

/** Shorten to `width` characters with an ellipsis in the middle, keeping both ends (names often differ at the end). */
function fitMiddle(s: string, width: number): string {
  const chars = [...s];
  if (chars.length <= width) return s;
  const keep = Math.max(2, width - 1);
  const head = Math.ceil(keep / 2);
  return `${chars.slice(0, head).join('')}…${chars.slice(chars.length - (keep - head)).join('')}`;
}

/** Columns the narrow layout may leave out when every row has the same value (said in a note instead). */
const CONSTANT_DROPPABLE = ['cause', 'matvecs', 'applies', 'memory'];

/**
 * Lay out rows for `width` columns: the wide layout when it fits; else the narrow one (setup and
 * solve merged into one time column, no restarts), which then, while it does not fit, leaves out
 * columns whose value is the same in every row (noted below the table), then memory, shortens
 * recipe names in the middle (never below 16 characters), leaves out applies and matvecs, and
 * last shortens names further.
 */
function layout(ranked: RankedRun[], width: number): { cols: Column[]; rows: string[][]; widths: number[]; notes: string[] } {
  const notes: string[] = [];
  const build = (cols: Column[]): { rows: string[][]; widths: number[]; total: number } => {
    const rows = ranked.map((r) => cols.map((c) => c.cell(r, r.run.result)));
    const widths = cols.map((c, j) => Math.max(len(c.title), ...rows.map((row) => len(row[j]))));
    return { rows, widths, total: len(INDENT) + widths.reduce((a, b) => a + b, 0) + len(GAP) * (cols.length - 1) };
  };
  let cols = COLUMNS.filter((c) => !c.narrowOnly);
  let b = build(cols);
  if (b.total <= width) return { cols, ...b, notes };
  cols = COLUMNS.filter((c) => !c.wideOnly);
  b = build(cols);
  const drop = (key: string): void => {
    const j = cols.findIndex((c) => c.key === key);
    if (j < 0) return;
    b.total -= b.widths[j] + len(GAP);
    cols = cols.filter((_c, k) => k !== j);
    b.rows = b.rows.map((row) => row.filter((_c, k) => k !== j));
    b.widths = b.widths.filter((_w, k) => k !== j);
  };
  const shorten = (target: number): void => {
    const ri = cols.findIndex((c) => c.key === 'recipe');
    const t = Math.max(len('recipe'), Math.min(b.widths[ri], target));
    b.rows.forEach((row) => { row[ri] = fitMiddle(row[ri], t); });
    b.total -= b.widths[ri] - t;
    b.widths[ri] = t;
  };
  const recipeWidth = (): number => b.widths[cols.findIndex((c) => c.key === 'recipe')];
  for (const key of CONSTANT_DROPPABLE) {
    if (b.total <= width || ranked.length < 2) break;
    const j = cols.findIndex((c) => c.key === key);
    if (j < 0) continue;
    const values = new Set(b.rows.map((row) => row[j]));
    if (values.size !== 1) continue;
    const v = [...values][0];
    notes.push(v === dash ? `${cols[j].title}: not recorded in these results` : `${cols[j].title}: ${v} for every run`);
    drop(key);
  }
  if (b.total > width && cols.some((c) => c.key === 'memory')) { drop('memory'); notes.push('memory: left out for width (see the report or a wider terminal)'); }
  if (b.total > width) shorten(Math.max(16, recipeWidth() - (b.total - width)));
  for (const key of ['applies', 'matvecs']) {
    if (b.total <= width) break;
    if (cols.some((c) => c.key === key)) { drop(key); notes.push(`${key}: left out for width`); }
  }
  if (b.total > width) shorten(recipeWidth() - (b.total - width));
  return { cols, rows: b.rows, widths: b.widths, notes };
}

/**
 * One ranked table per matrix for the terminal, laid out for `width` columns (default: the
 * terminal's width, 80 when unknown). Memory is preconditioner + Krylov bytes. With `color`, the
 * winner row is green and causes of runs that did not solve are red. Partial or interrupted
 * results say so first, and a matrix missing some recipes gets no winner.
 */
export function renderRankedTables(results: ResultsDoc, opts: { color?: boolean; width?: number } = {}): string {
  const c = pc.createColors(opts.color === true);
  const width = Math.max(40, opts.width ?? terminalWidth());
  const blocks: string[] = [];
  const warning = statusWarning(results);
  for (const g of runsByMatrix(results)) {
    const { ranked, missing, ranking } = rankForTable(results, g.matrix, g.runs);
    const { cols, rows, widths, notes: layoutNotes } = layout(ranked, width);
    const lines: string[] = [];
    const head = `${g.matrix}  ${matrixSummary(g.info)}`;
    lines.push(len(head) <= width ? `${c.bold(g.matrix)}  ${c.dim(matrixSummary(g.info))}` : `${c.bold(g.matrix)}\n${wrap(matrixSummary(g.info), width, INDENT).map((l) => c.dim(l)).join('\n')}`);
    if (g.info?.note) lines.push(...wrap(g.info.note, width, INDENT).map((l) => c.dim(l)));
    lines.push(c.dim(INDENT + cols.map((col, j) => pad(col.title, widths[j], col.align)).join(GAP)));
    lines.push(c.dim(INDENT + widths.map((w) => '─'.repeat(w)).join(GAP)));
    ranked.forEach((r, i) => {
      const cells = rows[i].map((cell, j) => pad(cell, widths[j], cols[j].align));
      const ri = cols.findIndex((col) => col.key === 'cause');
      if (!r.converged && ri >= 0) cells[ri] = c.red(cells[ri]);
      const line = INDENT + cells.join(GAP);
      lines.push(r.winner ? c.green(c.bold(line)) : line);
    });
    if (ranked.length === 0) lines.push(`${INDENT}(no runs)`);
    const notes: string[] = [];
    if (g.info?.sequence) notes.push(`sequence of ${plural(g.info.sequence.systems, 'system')}: figures above are totals over the sequence (true res. the largest)`);
    if (missing.length > 0) {
      notes.push(`incomplete: ${plural(missing.length, 'recipe')} of the sweep did not run here (${missing.join(', ')}), so no winner is named`);
    }
    notes.push(verdictLine(ranking, WINNER_MARK), ...ranking.notes.filter((n) => !n.startsWith('partial results:')));
    if (ranked.some((r) => r.tied)) notes.push(`${TIE_MARK} shares its rank (within noise, see the timing protocol in README)`);
    if (cols.some((col) => col.key === 'memory')) notes.push('memory = preconditioner + Krylov basis bytes (the matrix itself not included)');
    notes.push(...layoutNotes);
    if (ranked.some((r) => r.run.result?.residualMismatch)) {
      notes.push(`${MISMATCH_MARK} recursive residual and true residual disagree by more than 10×`);
    }
    for (const r of ranked) {
      const why = r.run.error ?? r.run.result?.failure?.message;
      if (why) notes.push(withPrefix(r.run.recipe, why));
    }
    for (const n of notes) lines.push(...wrap(n, width, INDENT).map((l) => c.dim(l)));
    const perSystem = sequenceLines(ranked, width);
    if (perSystem.length) lines.push('', ...perSystem.map((l, i) => (i === 0 ? c.dim(l) : l)));
    blocks.push(lines.join('\n'));
  }
  const warn = warning ? `${wrap(`warning: ${warning}`, width, '').map((l) => c.yellow(c.bold(l))).join('\n')}\n\n` : '';
  return blocks.length ? `${warn}${blocks.join('\n\n')}\n` : `${warn}no runs in the results\n`;
}

/** Marks a system for which the preconditioner was set up (the others reused an earlier set-up). */
export const REBUILD_MARK = '*';

/**
 * The per-system table of a sequence matrix: one row per ranked recipe, one column per system
 * (iterations, REBUILD_MARK when its preconditioner was set up for that system), then the
 * totals: iterations, rebuilds and setup + solve seconds. Undefined when no run is a sequence.
 */
export function sequenceTable(ranked: RankedRun[], cell: (iterations: number, rebuilt: boolean, seconds: number) => string = (it, rb) => `${formatCount(it)}${rb ? REBUILD_MARK : ''}`): { heads: string[]; rows: string[][]; recipes: string[] } | undefined {
  const seqRuns = ranked.filter((r) => r.run.sequence);
  if (seqRuns.length === 0) return undefined;
  const labels = seqRuns[0]!.run.sequence!.systems.map((s) => s.label);
  const heads = ['recipe', ...labels, 'total', 'rebuilds', 'time s'];
  const rows = seqRuns.map((r) => {
    const q = r.run.sequence!;
    return [
      r.run.recipe,
      ...labels.map((_l, k) => { const s = q.systems[k]; return s ? cell(s.iterations, s.rebuilt, s.setupSeconds + s.solveSeconds) : dash; }),
      formatCount(q.totals.iterations), formatCount(q.totals.rebuilds), formatSeconds(q.totals.totalSeconds),
    ];
  });
  return { heads, rows, recipes: seqRuns.map((r) => r.run.recipe) };
}

/** Terminal lines of the per-system table (a table when it fits, else one wrapped line per recipe). */
function sequenceLines(ranked: RankedRun[], width: number): string[] {
  const t = sequenceTable(ranked);
  if (!t) return [];
  const widths = t.heads.map((h, j) => Math.max(len(h), ...t.rows.map((row) => len(row[j]!))));
  const total = len(INDENT) + widths.reduce((a, b) => a + b, 0) + len(GAP) * (widths.length - 1);
  const out = [`${INDENT}per system: iterations (${REBUILD_MARK} = preconditioner set up for that system), then totals`];
  if (total <= width) {
    out.push(INDENT + t.heads.map((h, j) => pad(h, widths[j]!, j === 0 ? 'left' : 'right')).join(GAP));
    out.push(INDENT + widths.map((w) => '─'.repeat(w)).join(GAP));
    for (const row of t.rows) out.push(INDENT + row.map((c, j) => pad(c, widths[j]!, j === 0 ? 'left' : 'right')).join(GAP));
    return out;
  }
  const nSys = t.heads.length - 4;
  for (const row of t.rows) {
    const line = `${row[0]}: ${row.slice(1, 1 + nSys).join(' ')} | total ${row[1 + nSys]}, rebuilds ${row[2 + nSys]}, ${row[3 + nSys]} s`;
    out.push(...wrap(line, width, INDENT));
  }
  return out;
}
