/**
 * The pairs a sweep would run, without running, loading or generating anything
 * (`slabbench sweep --dry-run`): the same selection (--only-matrix, --only-recipe) and sharding
 * as runSweep, in the same matrix-major order.
 */
import type { Recipe } from '../solvers/recipe.js';
import type { Suite } from './suite.js';
import { selectFromSuite } from './suite.js';
import { shardPairs, type ShardSpec } from './shard.js';

export interface PlannedPair {
  matrix: string;
  /** 'file' or 'generate', and where the file or the committed copy is. */
  source: string;
  recipe: string;
  /** The recipe's fields as the run would record them. */
  fields: Recipe;
}

export interface SweepPlan {
  suite: string;
  fingerprint: string;
  shard: ShardSpec | null;
  pairs: PlannedPair[];
  /** Grid recipes and what they expanded to. */
  grids: NonNullable<Suite['grids']>;
}

function describeSpec(spec: unknown): string {
  const s = spec as { kind?: string; steps?: number };
  return s.kind === 'newton' ? `${s.steps} Newton steps` : 'slab marching';
}

export function planSweep(suite: Suite, opts: { shard?: ShardSpec; onlyMatrix?: string[]; onlyRecipe?: string[] } = {}): SweepPlan {
  const { matrices, recipes } = selectFromSuite(suite, opts.onlyMatrix, opts.onlyRecipe);
  const pairs = shardPairs(matrices.length, recipes.length, opts.shard).map(({ matrixIndex, recipeIndex }) => {
    const m = matrices[matrixIndex]!;
    const r = recipes[recipeIndex]!;
    const source = m.kind === 'file' ? `file ${m.file}`
      : m.kind === 'sequence-files' ? `sequence of ${m.files.length} files`
        : m.sequence !== undefined ? `generated sequence (${describeSpec(m.sequence)})`
          : m.prebuilt !== undefined ? `generated (committed copy ${m.prebuilt})` : 'generated';
    return { matrix: m.name, source, recipe: r.name, fields: r };
  });
  return { suite: suite.path, fingerprint: suite.fingerprint, shard: opts.shard ?? null, pairs, grids: suite.grids ?? [] };
}

/** Plain-text listing: one line per pair, then the grid expansions. */
export function formatSweepPlan(plan: SweepPlan): string {
  const lines: string[] = [];
  const shard = plan.shard ? ` (shard ${plan.shard.index}/${plan.shard.count})` : '';
  lines.push(`${plan.suite}: ${plan.pairs.length} ${plan.pairs.length === 1 ? 'pair' : 'pairs'} would run${shard}; nothing was run`);
  const wm = Math.max(6, ...plan.pairs.map((p) => p.matrix.length));
  const wr = Math.max(6, ...plan.pairs.map((p) => p.recipe.length));
  lines.push(`  ${'matrix'.padEnd(wm)}  ${'recipe'.padEnd(wr)}  source`);
  for (const p of plan.pairs) lines.push(`  ${p.matrix.padEnd(wm)}  ${p.recipe.padEnd(wr)}  ${p.source}`);
  for (const g of plan.grids) {
    lines.push(`recipes[${g.recipeIndex}] is a grid over ${g.fields.join(', ')}: ${g.recipes.length} ${g.recipes.length === 1 ? 'recipe' : 'recipes'} (${g.recipes.join(', ')})`);
  }
  return `${lines.join('\n')}\n`;
}
