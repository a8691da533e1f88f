import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerReport(program: Command): void {
  program
    .command('report')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('report is not built yet');
    });
}
