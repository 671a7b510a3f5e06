import { Command, CommanderError, Option } from 'commander'
import { createRequire } from 'node:module'
import { AppError, type ErrorCode } from '../shared/errors.ts'
import { registerCommands } from './commands/index.ts'

// The one place that turns errors into exit codes. Commands throw AppError; everything else is a bug.
const exitCodes: Record<ErrorCode, number> = {
  usage: 64,
  invalid_input: 65,
  not_found: 66,
  conflict: 67,
  unauthorized: 77,
  forbidden: 77,
  rate_limited: 75,
  io: 74,
  database: 69,
  config: 78,
}
const bugExitCode = 70

const require = createRequire(import.meta.url)
const { version } = require('../../package.json') as { version: string }

function buildProgram(): Command {
  const program = new Command('pitside')
  program
    .description('Manure sampling records, lab imports and agronomic application plans')
    .version(version, '-V, --version', 'print the version')
    .addOption(
      new Option('--db <file>', 'SQLite database file').env('PITSIDE_DB').default('./pitside.db'),
    )
    .option('--json', 'machine-readable output on stdout', false)
    .option('-q, --quiet', 'no progress or notes on stderr', false)
    .showHelpAfterError('(run `pitside --help` for the list of commands)')
    .configureOutput({ outputError: (text, write) => write(text) })
    .exitOverride()
  return program
}

// A reader that stops early (`pitside plans list | head -1`) closes the pipe: the output is done, not failed.
process.stdout.on('error', (error: NodeJS.ErrnoException) => {
  if (error.code === 'EPIPE') process.exit(process.exitCode ?? 0)
  throw error
})

const program = buildProgram()
await registerCommands(program, process.argv.slice(2))

try {
  await program.parseAsync(process.argv)
} catch (error) {
  process.exitCode = reportError(error)
}

function reportError(error: unknown): number {
  if (error instanceof CommanderError) {
    // commander has already printed its message (unknown command, bad option, help, version)
    if (error.code === 'commander.helpDisplayed' || error.code === 'commander.version' || error.code === 'commander.help') {
      return 0
    }
    return error.exitCode === 0 ? 0 : exitCodes.usage
  }
  if (error instanceof AppError) {
    process.stderr.write(`pitside: ${error.message}\n`)
    return exitCodes[error.code]
  }
  const message = error instanceof Error ? error.message : String(error)
  process.stderr.write(
    `pitside: unexpected failure (this is a bug): ${message}\n` +
      (process.env.PITSIDE_DEBUG ? `${(error as Error)?.stack ?? ''}\n` : 'set PITSIDE_DEBUG=1 to see the stack\n'),
  )
  return bugExitCode
}
