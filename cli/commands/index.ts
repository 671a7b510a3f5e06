import type { Command } from 'commander'
import { programOptionsWithValue } from '../program-options.ts'

type Registration = { register(program: Command): void }

/**
 * Every command's registration module, in the order `pitside --help` lists them. Registration only:
 * each register() declares a command's options and help, and loads the implementation from
 * cli/actions/ when the command runs. Keep these modules light.
 */
const commands: Record<string, () => Promise<Registration>> = {
  init: () => import('./init.ts'),
  labs: () => import('./labs.ts'),
  plan: () => import('./plan.ts'),
  plans: () => import('./plans.ts'),
  export: () => import('./export.ts'),
  records: () => import('./records.ts'),
  backup: () => import('./backup.ts'),
  restore: () => import('./restore.ts'),
  check: () => import('./check.ts'),
  users: () => import('./users.ts'),
  farms: () => import('./farms.ts'),
  storages: () => import('./storages.ts'),
  fields: () => import('./fields.ts'),
  samples: () => import('./samples.ts'),
  applications: () => import('./applications.ts'),
  demo: () => import('./demo.ts'),
  share: () => import('./share.ts'),
  serve: () => import('./serve.ts'),
  calc: () => import('./calc.ts'),
}

/** The command a command line names (its first word that is not an option or an option's value), if it is one of Pitside's. */
export function commandOf(args: readonly string[]): string | null {
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!
    if (a === '--') return null
    if (programOptionsWithValue.has(a)) i++
    else if (!a.startsWith('-')) return Object.hasOwn(commands, a) ? a : null
  }
  return null
}

/**
 * Registers the commands: only the one the command line names, when it names one (the others'
 * modules are not loaded, which starts a command sooner), else all of them (help, a mistyped command
 * and its suggestions, no command at all).
 */
export async function registerCommands(program: Command, args: readonly string[] = []): Promise<void> {
  const named = commandOf(args)
  const modules = await Promise.all((named ? [named] : Object.keys(commands)).map((name) => commands[name]!()))
  for (const m of modules) m.register(program)
}
