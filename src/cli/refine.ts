import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerRefine(program: Command): void {
  program
    .command('refine')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('refine is not built yet');
    });
}
