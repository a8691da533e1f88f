import type { Command } from 'commander';
import { optionError } from '../util/errors.js';
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

/** Fixed-width table of a refinement study. */
export function formatStudy(study: RefinementStudy): string {
  const head = ['cells', 'h', 'slabs', 'elements', 'unknowns', 'L2 error', 'order', 'solver'];
  const rows = study.rows.map((r: RefinementRow) => [
    r.cells.join('×'), r.h.toPrecision(3), String(r.slabs), String(r.nElements), String(r.nUnknowns),
    r.error.toExponential(3), r.observedOrder === null ? '—' : r.observedOrder.toFixed(2),
    r.iterations !== undefined ? `${r.solver} (${r.iterations} it)` : r.solver,
  ]);
  const widths = head.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j].length)));
  const line = (cells: string[]): string => cells.map((c, j) => (j < 7 ? c.padStart(widths[j]) : c)).join('  ');
  return [
    `refinement study: ${study.physics} ${study.dim}D+t, order ${study.order}, final time ${study.finalTime.toPrecision(4)}`,
    line(head),
    ...rows.map(line),
  ].join('\n');
}

export function registerRefine(program: Command): void {
  const cmd = program
    .command('refine')
    .description('Refinement study of a linear generator case: solve on several meshes, print the space-time L2 error and the observed order');
  addGeneratorOptions(cmd);
  cmd
    .requiredOption('--sizes <n,n,...>', 'cells along x for each mesh, increasing (other axes keep their ratio to x)')
    .option('--final-time <T>', 'final time, kept fixed across sizes (default: slabs × slab thickness of the first size)')
    .option('--case <NAME>', 'start from the generator case NAME of the suite file')
    .option('--suite <FILE>', 'suite file for --case (default: the demo suite matrices/suite.json)')
    .option('--json', 'print the study as JSON on stdout')
    .addHelpText('after', `
The case must have an exact solution: advection with a constant velocity, advection-diffusion
with a constant velocity and the default initial condition, or acoustics whose initial pressure
depends on x only (the default is a plane wave). Each mesh is solved slab by slab (block forward
substitution or dense LU for small slabs, else GMRES + block ILU(0) to 1e-12).

Examples:
  slabbench refine --physics advection --dim 1 --order 2 --sizes 8,16,32,64
  slabbench refine --physics advection --dim 2 --order 1 --ordering downstream --sizes 4,8,16
  slabbench refine --physics acoustics --dim 1 --order 3 --periodic x --sizes 8,16,32 --json
  slabbench refine --physics advection-diffusion --dim 2 --periodic all --diffusivity 0.05 --sizes 4,8`)
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
      const onRow = !json && process.stderr.isTTY
        ? (r: RefinementRow): void => { process.stderr.write(`  ${r.cells.join('×')}: error ${r.error.toExponential(3)} (${r.seconds.toFixed(1)} s)\n`); }
        : undefined;
      const study = runRefinementStudy(first, sizes, { finalTime, onRow });
      if (json) process.stdout.write(`${JSON.stringify({ schema: 'slabbench-refine/1', ...study, params: first }, null, 2)}\n`);
      else process.stdout.write(`${formatStudy(study)}\n`);
    });
}
