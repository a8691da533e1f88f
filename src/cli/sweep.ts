import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerSweep(program: Command): void {
  program
    .command('sweep')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('sweep is not built yet');
    });
}
