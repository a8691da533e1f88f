import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerSolve(program: Command): void {
  program
    .command('solve')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('solve is not built yet');
    });
}
