import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

const load = () => import('../actions/applications.ts')

export function register(program: Command): void {
  const applications = program.command('applications').description('records of manure actually spread')

  applications
    .command('import')
    .description('add or update application records from CSV files keyed by farm, field, date and storage (columns: farm, field, applied_on, storage, amount, amount_unit, method; optional incorporated_within_hours, loads, applicator, notes)')
    .argument('<files...>', 'CSV files, or - for standard input')
    .option('--dry-run', 'show what would be new, changed or unchanged per row; write nothing', false)
    .addHelpText('after', '\nExit codes: 0 imported or nothing to change, 65 a problem in a file (nothing was written), 66 file not found.')
    .action(lazyAction(async () => ({ run: (await load()).runImport })))

  applications
    .command('list')
    .description("planned against actual per field: the latest plan's rates beside what was spread for the season (July 1 of the year before to June 30)")
    .requiredOption('--farm <code>', 'farm code')
    .requiredOption('--season <year>', 'crop season, e.g. 2027')
    .action(lazyAction(async () => ({ run: (await load()).runList })))
}
