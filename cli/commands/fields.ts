import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

const load = () => import('../actions/fields.ts')

export function register(program: Command): void {
  const fields = program.command('fields').description('fields with their crop seasons, soil tests, manure source and method')

  fields
    .command('import')
    .description('add or update fields, soil tests and crop seasons from CSV files (one row per field and season)')
    .argument('<files...>', 'CSV files, or - for standard input')
    .option('--dry-run', 'show what would be new, changed or unchanged per row; write nothing', false)
    .addHelpText('after', '\nExit codes: 0 imported or nothing to change, 65 a problem in a file (nothing was written), 66 file not found.')
    .action(lazyAction(async () => ({ run: (await load()).runImport })))

  fields
    .command('list')
    .description('list fields with their crop season and latest soil test')
    .option('--farm <code>', 'only the fields of this farm')
    .option('--season <year>', 'show this crop season (default: the latest one of each field)')
    .action(lazyAction(async () => ({ run: (await load()).runList })))
}
