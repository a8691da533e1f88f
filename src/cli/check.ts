import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerCheck(program: Command): void {
  program
    .command('check')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('check is not built yet');
    });
}
