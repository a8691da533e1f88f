import type { Command } from 'commander';
import { registerInspect } from './inspect.js';
import { registerConvert } from './convert.js';
import { registerGenerate } from './generate.js';
import { registerRefine } from './refine.js';
import { registerSolve } from './solve.js';
import { registerSweep } from './sweep.js';
import { registerMerge } from './merge.js';
import { registerReport } from './report.js';
import { registerCheck } from './check.js';
import { registerEstimate } from './estimate.js';
import { registerScale } from './scale.js';

/** Every command, one file each. Order here is the order in `slabbench --help`. */
export const commands: ReadonlyArray<(program: Command) => void> = [
  registerInspect,
  registerConvert,
  registerGenerate,
  registerRefine,
  registerSolve,
  registerSweep,
  registerMerge,
  registerReport,
  registerCheck,
  registerEstimate,
  registerScale,
];
