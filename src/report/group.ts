import type { MatrixInfo, ResultsDoc, RunRecord } from '../run/results-types.js';

export interface MatrixRuns {
  matrix: string;
  info?: MatrixInfo;
  runs: RunRecord[];
}

/**
 * Runs grouped by matrix: matrices in the order of `results.matrices`, then any matrix that
 * only appears in runs (in order of first appearance). Runs keep their document order. Matrices
 * without runs (e.g. listed in a shard's document but run on another shard) are left out.
 */
export function runsByMatrix(results: ResultsDoc): MatrixRuns[] {
  const out: MatrixRuns[] = [];
  const byName = new Map<string, MatrixRuns>();
  for (const info of results.matrices) {
    if (byName.has(info.name)) continue;
    const g: MatrixRuns = { matrix: info.name, info, runs: [] };
    byName.set(info.name, g);
    out.push(g);
  }
  for (const run of results.runs) {
    let g = byName.get(run.matrix);
    if (!g) {
      g = { matrix: run.matrix, runs: [] };
      byName.set(run.matrix, g);
      out.push(g);
    }
    g.runs.push(run);
  }
  return out.filter((g) => g.runs.length > 0);
}

/** Recipe names in order of first appearance across the whole document (fixes plot colours). */
export function recipeOrder(results: ResultsDoc): string[] {
  const seen = new Set<string>();
  for (const run of results.runs) seen.add(run.recipe);
  return [...seen];
}

/**
 * Recipes of the sweep (suite.recipeNames, else every recipe seen in the document) that have no
 * run for this matrix: a matrix with missing recipes gets no winner, since the missing one might
 * have won.
 */
export function missingRecipes(results: ResultsDoc, matrix: string): string[] {
  const expected = results.suite?.recipeNames ?? recipeOrder(results);
  const present = new Set(results.runs.filter((r) => r.matrix === matrix).map((r) => r.recipe));
  return expected.filter((n) => !present.has(n));
}

/** A one-line warning when the document is not a finished sweep (status partial or interrupted), else undefined. */
export function statusWarning(results: ResultsDoc): string | undefined {
  if (results.status === 'interrupted') return 'these results are from an interrupted sweep: some pairs never ran, and matrices missing recipes have no winner';
  if (results.status === 'partial') return 'these results are partial (the sweep was still running or stopped without finishing): matrices missing recipes have no winner';
  return undefined;
}
