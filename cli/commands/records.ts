import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  const records = program.command('records').description('the records a regulator or cost-share program asks for')

  records
    .command('export')
    .description('write one farm’s season records to a folder: analyses, the latest plan, applications made, planned against actual')
    .requiredOption('--farm <code>', 'the farm')
    .requiredOption('--season <year>', 'the crop season, e.g. 2027')
    .option('--out-dir <folder>', 'folder to write to (default records-<farm>-<season>)')
    .addHelpText('after', '\nFiles: analyses.csv, applications.csv, planned-vs-actual.csv, plan.csv, plan.json and records.json (the list, with sha256).\nExit codes: 0 written, 64 bad options, 66 no such farm, 74 a file cannot be written.')
    .action(lazyAction(() => import('../actions/records.ts')))
}
