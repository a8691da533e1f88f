import pc from 'picocolors';
import type { MatrixInfo, ResultsDoc } from '../run/results-types.js';
import { runsByMatrix } from './group.js';
import { rankMatrix, rankOptionsFor, verdictLine, type RankedRun } from './rank.js';
import { formatBytes, formatCount, formatResidual, formatSeconds } from './format.js';

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

interface Column {
  title: string;
  align: 'left' | 'right';
}

const COLUMNS: Column[] = [
  { title: 'rank', align: 'right' },
  { title: 'recipe', align: 'left' },
  { title: 'iters', align: 'right' },
  { title: 'restarts', align: 'right' },
  { title: 'cause', align: 'left' },
  { title: 'true rel. res.', align: 'right' },
  { title: 'setup s', align: 'right' },
  { title: 'solve s', align: 'right' },
  { title: 'memory', align: 'right' },
];

/** Cells of one ranked row as plain text (shared with the HTML table). */
export function rowCells(r: RankedRun): string[] {
  const res = r.run.result;
  const rank = `${r.rank}${r.tied ? TIE_MARK : ''}${r.winner ? ` ${WINNER_MARK}` : ''}`;
  if (!res) return [rank, r.run.recipe, '–', '–', 'not run', '–', '–', '–', '–'];
  const resid = formatResidual(res.trueRelativeResidual) + (res.residualMismatch ? MISMATCH_MARK : '');
  const bytes = recipeBytes(r);
  return [
    rank,
    r.run.recipe,
    String(res.iterations),
    String(res.restarts),
    res.cause,
    resid,
    formatSeconds(res.timing.setupSeconds),
    formatSeconds(res.timing.solveSeconds),
    bytes === undefined ? '–' : formatBytes(bytes),
  ];
}

/** One-line description of a matrix for headings. */
export function matrixSummary(info: MatrixInfo | undefined): string {
  if (!info) return 'matrix not described in the results';
  const parts = [
    `${formatCount(info.n)} unknowns`,
    `${formatCount(info.nBlockRows)} block rows of ${info.bs}×${info.bs}`,
    `${formatCount(info.nBlocks)} stored blocks`,
    `${info.nSlabs} slab${info.nSlabs === 1 ? '' : 's'}`,
  ];
  return parts.join(', ');
}

function pad(s: string, width: number, align: 'left' | 'right'): string {
  const len = [...s].length;
  if (len >= width) return s;
  return align === 'left' ? s + ' '.repeat(width - len) : ' '.repeat(width - len) + s;
}

/**
 * One ranked table per matrix for the terminal. Memory is preconditioner + Krylov bytes.
 * With `color`, the winner row is green and causes other than a met target are red.
 */
export function renderRankedTables(results: ResultsDoc, opts: { color?: boolean } = {}): string {
  const c = pc.createColors(opts.color === true);
  const blocks: string[] = [];
  for (const g of runsByMatrix(results)) {
    const ranking = rankMatrix(g.runs, rankOptionsFor(results));
    const ranked = ranking.ranked;
    const rows = ranked.map(rowCells);
    const widths = COLUMNS.map((col, j) => Math.max([...col.title].length, ...rows.map((r) => [...r[j]].length)));
    const lines: string[] = [];
    lines.push(`${c.bold(g.matrix)}  ${c.dim(matrixSummary(g.info))}`);
    if (g.info?.note) lines.push(c.dim(`  ${g.info.note}`));
    const header = COLUMNS.map((col, j) => pad(col.title, widths[j], col.align)).join('  ');
    lines.push(c.dim(`  ${header}`));
    lines.push(c.dim(`  ${widths.map((w) => '─'.repeat(w)).join('  ')}`));
    ranked.forEach((r, i) => {
      const cells = rows[i].map((cell, j) => pad(cell, widths[j], COLUMNS[j].align));
      if (!r.converged) cells[4] = c.red(cells[4]);
      const line = `  ${cells.join('  ')}`;
      lines.push(r.winner ? c.green(c.bold(line)) : line);
    });
    if (ranked.length === 0) lines.push('  (no runs)');
    const notes: string[] = ['memory = preconditioner + Krylov basis bytes (the matrix itself not included)'];
    notes.push(verdictLine(ranking, WINNER_MARK), ...ranking.notes);
    if (ranked.some((r) => r.tied)) notes.push(`${TIE_MARK} shares its rank (within noise, see the timing protocol in README)`);
    if (ranked.some((r) => r.run.result?.residualMismatch)) {
      notes.push(`${MISMATCH_MARK} recursive residual and true residual disagree by more than 10×`);
    }
    for (const r of ranked) {
      const why = r.run.error ?? r.run.result?.failure?.message;
      if (why) notes.push(`${r.run.recipe}: ${why}`);
    }
    lines.push(...notes.map((n) => c.dim(`  ${n}`)));
    blocks.push(lines.join('\n'));
  }
  return blocks.length ? `${blocks.join('\n\n')}\n` : 'no runs in the results\n';
}
