import type { Command } from 'commander'

export interface GlobalOptions {
  db: string
  json: boolean
  quiet: boolean
}

/** The global options (--db, --json, --quiet), wherever they were given on the command line. */
export function globals(command: Command): GlobalOptions {
  return command.optsWithGlobals<GlobalOptions>()
}
