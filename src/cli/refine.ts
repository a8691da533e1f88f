import type { Command } from 'commander';
import { EXIT, optionError } from '../util/errors.js';
import { readSuiteCases } from '../dg/suite-cases.js';
import { runRefinementStudy, type RefinementRow, type RefinementStudy } from '../dg/refine.js';
import type { GeneratorParams } from '../dg/generate.js';
import { addGeneratorOptions, generatorParamsFromOptions, rejectGeneratorOptions } from './generator-options.js';
import { defaultSuitePath } from './generate.js';

function parseSizes(text: string): number[] {
  const sizes = text.split(',').map((s) => Number(s.trim()));
  if (sizes.length < 2 || sizes.some((s) => !Number.isInteger(s) || s < 1)) {
    throw optionError('--sizes', `expected at least two positive integers separated by commas, got '${text}'`);
  }
  for (let i = 1; i < sizes.length; i++) {
    if (sizes[i] <= sizes[i - 1]) throw optionError('--sizes', `sizes must increase, got '${text}'`);
  }
  return sizes;
}

/** Columns of the refinement table: fixed widths, so rows can be printed as each mesh finishes. */
const COLUMNS: Array<{ head: string; width: number; cell: (r: RefinementRow) => string }> = [
  { head: 'cells', width: 11, cell: (r) => r.cells.join('×') },
  { head: 'h', width: 9, cell: (r) => r.h.toPrecision(3) },
  { head: 'slabs', width: 6, cell: (r) => String(r.slabs) },
  { head: 'elements', width: 9, cell: (r) => String(r.nElements) },
  { head: 'unknowns', width: 9, cell: (r) => String(r.nUnknowns) },
  { head: 'L2 error', width: 10, cell: (r) => r.error.toExponential(3) },
  { head: 'order', width: 6, cell: (r) => (r.observedOrder === null ? '—' : r.observedOrder.toFixed(2)) },
  { head: 'seconds', width: 8, cell: (r) => r.seconds.toFixed(1) },
];

/** Title and column heads of the table. */
export function formatStudyHead(study: { physics: string; dim: number; order: number; finalTime: number }): string {
  return [
    `refinement study: ${study.physics} ${study.dim}D+t, order ${study.order}, final time ${study.finalTime.toPrecision(4)}`,
    [...COLUMNS.map((c) => c.head.padStart(c.width)), 'solver'].join('  '),
  ].join('\n');
}

/** One finished mesh as a table row. */
export function formatStudyRow(r: RefinementRow): string {
  let solver = r.iterations !== undefined ? `${r.solver} (${r.iterations} it)` : r.solver;
  if (r.newton) solver = solver.replace(/^newton: /, `newton ${r.newton.iterations} it, ‖R‖/‖R₀‖ ${r.newton.relativeResidual.toExponential(1)}: `);
  return [...COLUMNS.map((c) => c.cell(r).padStart(c.width)), solver].join('  ');
}

/** The failure line of a study that stopped. */
export function formatStudyFailure(f: { cells: number[]; message: string }): string {
  return `refinement stopped: the ${f.cells.join('×')}-cell mesh failed: ${f.message}; the rows above are the meshes that finished`;
}

/** Fixed-width table of a refinement study (what the command prints row by row). */
export function formatStudy(study: RefinementStudy): string {
  const lines = [formatStudyHead(study), ...study.rows.map(formatStudyRow)];
  if (study.failure) lines.push(formatStudyFailure(study.failure));
  return lines.join('\n');
}

export function registerRefine(program: Command): void {
  const cmd = program
    .command('refine')
    .description('Refinement study of a generator case with an exact solution: solve on several meshes, print the space-time L2 error and the observed order');
  addGeneratorOptions(cmd);
  cmd
    .requiredOption('--sizes <n,n,...>', 'cells along x for each mesh, increasing (other axes keep their ratio to x)')
    .option('--final-time <T>', 'final time, kept fixed across sizes (default: slabs × slab thickness of the first size)')
    .option('--case <NAME>', 'start from the generator case NAME of the suite file')
    .option('--suite <FILE>', 'suite file for --case (default: the demo suite matrices/suite.json)')
    .option('--json', 'print the study as JSON on stdout')
    .addHelpText('after', `
The case must have an exact solution: advection with a constant velocity, advection-diffusion
with a constant velocity and the default initial condition, acoustics whose initial pressure
depends on x only (the default is a plane wave), or Euler with a built-in state (uniform,
vortex, shock-tube). Euler is nonlinear: each mesh is solved by Newton's method from the
projected exact solution to a residual reduction of 1e-10, each Newton step slab by slab. Each mesh is solved slab by slab, the inflow
coming from the previous slab's solution: block forward substitution when the slab is
triangular, dense LU for small slabs, banded LU when the band (element order or reverse
Cuthill-McKee) is small enough, else GMRES + block ILU(0) to 1e-12 on the slab. Rows are
printed as each mesh finishes (--json: one document at the end). A mesh whose slab solve fails
stops the study: the finished rows stay, a last line names the mesh and why, and the exit code
is 1.

Examples:
  slabbench refine --physics advection --dim 1 --order 2 --sizes 8,16,32,64
  slabbench refine --physics advection --dim 2 --order 1 --ordering downstream --sizes 4,8,16
  slabbench refine --physics acoustics --dim 1 --order 3 --periodic x --sizes 8,16,32 --json
  slabbench refine --physics advection-diffusion --dim 2 --periodic all --diffusivity 0.05 --sizes 4,8
  slabbench refine --physics euler --state vortex --dim 2 --extent 10 --periodic all --slabs 1 --slab-thickness 0.5 --sizes 4,8,16`)
    .action((opts: Record<string, unknown>) => {
      const sizes = parseSizes(String(opts.sizes));
      let finalTime: number | undefined;
      if (opts.finalTime !== undefined) {
        finalTime = Number(opts.finalTime);
        if (!(Number.isFinite(finalTime) && finalTime > 0)) throw optionError('--final-time', `expected a number > 0, got '${String(opts.finalTime)}'`);
      }
      let base: GeneratorParams;
      if (opts.case !== undefined) {
        rejectGeneratorOptions(opts, '--case');
        const suitePath = opts.suite !== undefined ? String(opts.suite) : defaultSuitePath();
        const cases = readSuiteCases(suitePath);
        const c = cases.find((x) => x.name === opts.case);
        if (!c) throw optionError('--case', `no generator case '${String(opts.case)}' in ${suitePath}`);
        base = c.params;
      } else {
        if (opts.suite !== undefined) throw optionError('--suite', 'only used with --case');
        base = generatorParamsFromOptions(opts);
      }
      // Start the study at the first size so the default final time comes from the coarsest mesh.
      const first = { ...base, cells: base.cells.map((c) => Math.max(1, Math.round((sizes[0] * c) / base.cells[0]))) };
      const json = opts.json === true;
      const study = runRefinementStudy(first, sizes, json ? { finalTime } : {
        finalTime,
        onStart: (head) => { process.stdout.write(`${formatStudyHead(head)}\n`); },
        onRow: (r: RefinementRow) => { process.stdout.write(`${formatStudyRow(r)}\n`); },
      });
      if (json) process.stdout.write(`${JSON.stringify({ schema: 'slabbench-refine/1', ...study, params: first }, null, 2)}\n`);
      if (study.failure) {
        process.stderr.write(`slabbench: refine: the ${study.failure.cells.join('×')}-cell mesh failed: ${study.failure.message}\n`);
        process.exitCode = EXIT.failed;
      }
    });
}
