import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

const load = () => import('../actions/storages.ts')

export function register(program: Command): void {
  const storages = program.command('storages').description('manure storages: pits, basins, lagoons, tanks and stacks')

  storages
    .command('import')
    .description('add or update storages from CSV files keyed by farm and storage code (columns: farm, storage, kind, species, form; optional geometry, capacity and amount in storage)')
    .argument('<files...>', 'CSV files, or - for standard input')
    .option('--dry-run', 'show what would be new, changed or unchanged per row; write nothing', false)
    .addHelpText('after', '\nExit codes: 0 imported or nothing to change, 65 a problem in a file (nothing was written), 66 file not found.')
    .action(lazyAction(async () => ({ run: (await load()).runImport })))

  storages
    .command('list')
    .description('list storages with their size, capacity and amount in storage')
    .option('--farm <code>', 'only the storages of this farm')
    .action(lazyAction(async () => ({ run: (await load()).runList })))
}
