import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

const load = () => import('../actions/samples.ts')

export function register(program: Command): void {
  const samples = program.command('samples').description('manure sampling events and the sampling sheet for a farm visit')

  samples
    .command('add')
    .description('record one sampling event (prints its sample id)')
    .requiredOption('--farm <code>', 'farm code')
    .requiredOption('--storage <code>', 'storage code')
    .option('--date <YYYY-MM-DD>', 'day the sample was taken (default: today)')
    .option('--id <sample-id>', 'sample id as written on the bottle (default: <farm>-<storage>-<YYYYMMDD>[-<points>])')
    .option('--agitated', 'the storage was agitated before sampling')
    .option('--no-agitated', 'the storage was not agitated')
    .option('--sampler <kind>', 'tube_core, dipper, bucket_at_pump, bucket_at_spreader, fork_grab or other')
    .option('--cores <n>', 'number of cores or subsamples combined')
    .option('--points <labels>', 'access points sampled, e.g. "A,C"')
    .option('--by <name>', 'who took the sample')
    .option('--notes <text>', 'notes')
    .addHelpText('after', '\nExit codes: 0 recorded (or already recorded as given), 65 a bad value, 66 farm or storage not found, 67 the id is recorded with other values.')
    .action(lazyAction(async () => ({ run: (await load()).runAdd })))

  samples
    .command('import')
    .description('add or update sampling events from CSV files keyed by sample id (columns: farm, storage, sample_id, sampled_on; optional agitated, sampler_kind, cores, access_points, sampled_by, notes)')
    .argument('<files...>', 'CSV files, or - for standard input')
    .option('--dry-run', 'show what would be new, changed or unchanged per row; write nothing', false)
    .addHelpText('after', '\nExit codes: 0 imported or nothing to change, 65 a problem in a file (nothing was written), 66 file not found.')
    .action(lazyAction(async () => ({ run: (await load()).runImport })))

  samples
    .command('list')
    .description('list sampling events, oldest first')
    .option('--farm <code>', 'only this farm')
    .option('--storage <code>', 'only this storage (with --farm)')
    .option('--from <YYYY-MM-DD>', 'sampled on or after')
    .option('--to <YYYY-MM-DD>', 'sampled on or before')
    .action(lazyAction(async () => ({ run: (await load()).runList })))

  samples
    .command('sheet')
    .description('write a printable HTML sampling sheet for a farm visit: sample ids per storage and access point, checklist, gas safety')
    .requiredOption('--farm <code>', 'farm code')
    .option('--date <YYYY-MM-DD>', 'day of the visit, part of every sample id (default: today)')
    .option('--out <file.html>', 'write the sheet to this file (default: standard output)')
    .option('--template <file.csv>', 'also write a samples CSV with the sheet\'s sample ids, to fill in and import')
    .action(lazyAction(async () => ({ run: (await load()).runSheet })))
}
