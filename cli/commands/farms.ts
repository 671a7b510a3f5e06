import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

const load = () => import('../actions/farms.ts')

export function register(program: Command): void {
  const farms = program.command('farms').description('the farms an organization advises')

  farms
    .command('import')
    .description('add or update farms from CSV files keyed by farm code (columns: farm, name; optional operator_name, contact_email, contact_phone, address, region, notes)')
    .argument('<files...>', 'CSV files, or - for standard input')
    .option('--org <code>', 'organization the farms belong to (default: the only one)')
    .option('--org-name <name>', 'create the organization given by --org with this name if it does not exist')
    .option('--dry-run', 'show what would be new, changed or unchanged per row; write nothing', false)
    .addHelpText('after', '\nExit codes: 0 imported or nothing to change, 65 a problem in a file (nothing was written), 66 file or organization not found.')
    .action(lazyAction(async () => ({ run: (await load()).runImport })))

  farms
    .command('list')
    .description('list the farms with their numbers of storages, fields and samples')
    .option('--org <code>', 'only the farms of this organization')
    .action(lazyAction(async () => ({ run: (await load()).runList })))
}
