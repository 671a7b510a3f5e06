import type { Command } from 'commander'
import { globals, type GlobalOptions } from './globals.ts'

export interface ActionModule {
  /** Receives the command's arguments, its options and the global options. */
  run(ctx: { args: unknown[]; options: Record<string, any>; globals: GlobalOptions; command: Command }): Promise<void>
}

/**
 * Wraps a command's implementation so that its module (and Kysely, better-sqlite3, …) is
 * imported only when the command runs.
 */
export function lazyAction(load: () => Promise<ActionModule>) {
  return async (...all: unknown[]) => {
    const command = all[all.length - 1] as Command
    const options = all[all.length - 2] as Record<string, any>
    const args = all.slice(0, -2)
    const mod = await load()
    await mod.run({ args, options, globals: globals(command), command })
  }
}
