import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerEstimate(program: Command): void {
  program
    .command('estimate')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('estimate is not built yet');
    });
}
