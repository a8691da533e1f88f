import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerMerge(program: Command): void {
  program
    .command('merge')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('merge is not built yet');
    });
}
