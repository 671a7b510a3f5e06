import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  const labs = program.command('labs').description('lab results of manure samples')

  labs
    .command('import')
    .description('import lab result files (CSV); each file is checked completely and written in one transaction, or not at all')
    .argument('<files...>', 'CSV files from the lab (shell globs work), or - for standard input')
    .option('--profile <file.json>', 'column-mapping profile for a lab whose files use other column names')
    .option('--replace', 'supersede stored results of the same report and sample whose values differ (the old ones are kept as history)', false)
    .option('--reference <set>', 'reference set whose book values the plausibility checks use')
    .addHelpText(
      'after',
      `
Columns (case, spacing and units in brackets are forgiven): report_id, sample_id, sampled_on, farm,
storage, form, species, basis, units, dry_matter_pct (or moisture), total_n, ammonium_n, p2o5 (or p),
k2o (or k); optional lab, sulfur, ph, notes. See examples/labs/.

Exit codes: 0 imported (or nothing new), 65 a file was refused (nothing written from it),
66 a file or the profile does not exist, 69 database missing or locked.`,
    )
    .action(lazyAction(() => import('../actions/labs-import.ts')))
}
