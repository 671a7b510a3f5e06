import { Option, type Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  program
    .command('export')
    .description('export one stored plan as CSV (one row per field, safe to open in a spreadsheet) or JSON')
    .argument('<plan>', 'plan id (see `pitside plans list`)')
    .addOption(new Option('--format <format>', 'csv or json').choices(['csv', 'json']).makeOptionMandatory())
    .option('--out <file>', 'write to this file instead of standard output')
    .addHelpText('after', '\nExit codes: 0 written, 64 bad options, 66 no such plan, 74 the file cannot be written.')
    .action(lazyAction(() => import('../actions/export.ts')))
}
