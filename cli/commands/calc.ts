import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  const calc = program
    .command('calc')
    .description('the nutrient calculator: rates, storage volume, calibration, sample statistics (no database needed)')

  calc
    .command('rate')
    .description('compute one application rate from a case file (JSON); readable summary, or JSON with --json')
    .requiredOption('--input <file|->', 'case file (JSON), or - for standard input')
    .option('--reference-file <file>', 'a reference set of your own (JSON); name it in the case with "reference_set"')
    .addHelpText(
      'after',
      `
The case format and the output are documented in the README ("Calculator"); examples/calc/ has
example cases. Refused input names the JSON path and the reason.

Exit codes: 0 computed, 65 the case or reference file was refused, 66 a file does not exist.`,
    )
    .action(lazyAction(() => import('../actions/calc-rate.ts')))

  calc
    .command('sets')
    .description('list the reference sets with their sources')
    .option('--reference-file <file>', 'also check and list a reference set of your own (JSON)')
    .option('--export <name>', 'print one set in full as JSON, to start a set of your own from')
    .action(lazyAction(() => import('../actions/calc-sets.ts')))

  calc
    .command('storage')
    .description('storage volume (rectangular pit, circular tank, sloped earthen basin) from a JSON file')
    .requiredOption('--input <file|->', 'storage file (JSON), or - for standard input')
    .action(lazyAction(() => import('../actions/calc-storage.ts')))

  calc
    .command('calibrate')
    .description('spreader calibration: load-area or sheet method, or the setting for a target rate (JSON file)')
    .requiredOption('--input <file|->', 'calibration file (JSON), or - for standard input')
    .action(lazyAction(() => import('../actions/calc-calibrate.ts')))

  calc
    .command('samples')
    .description('combine several analyses of one storage: mean, sd, cv, 90 % interval, samples needed, rate band')
    .option('--input <file|->', 'samples file (JSON), or - for standard input')
    .option('--values <list>', 'the values, comma-separated (instead of --input)')
    .option('--confidence <fraction>', 'confidence of the interval', '0.9')
    .option('--precision <fraction>', 'wanted half-width of the interval as a fraction of the mean', '0.1')
    .option('--rate <number>', 'a rate computed from the mean, to show the band the spread puts around it')
    .action(lazyAction(() => import('../actions/calc-samples.ts')))
}
