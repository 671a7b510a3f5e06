// The command line registers only the command it names (the others' modules are not loaded), and
// every command for help, a mistyped command or none.
import { describe, expect, it } from 'vitest'
import { Command } from 'commander'
import { commandOf, registerCommands } from '../../cli/commands/index.ts'

describe('registering the commands', () => {
  it('finds the command a command line names, past the program options and their values', () => {
    expect(commandOf(['labs', 'import', 'a.csv'])).toBe('labs')
    expect(commandOf(['--db', 'labs', '-q', 'plan', '--all'])).toBe('plan') // a database named like a command
    expect(commandOf(['--db=labs', '--json', 'farms', 'list'])).toBe('farms')
    expect(commandOf(['--help'])).toBeNull()
    expect(commandOf(['help', 'labs'])).toBeNull() // commander's own help command
    expect(commandOf(['labz', 'import'])).toBeNull()
    expect(commandOf(['--', 'labs'])).toBeNull()
    expect(commandOf([])).toBeNull()
  })

  it('registers the named command alone, and every command, in the order of the help, otherwise', async () => {
    const one = new Command('pitside')
    await registerCommands(one, ['-q', 'labs', 'import', 'a.csv'])
    expect(one.commands.map((c) => c.name())).toEqual(['labs'])
    const all = new Command('pitside')
    await registerCommands(all, ['--help'])
    expect(all.commands.map((c) => c.name())).toEqual([
      'init', 'labs', 'plan', 'plans', 'export', 'records', 'backup', 'restore', 'check', 'users', 'farms',
      'storages', 'fields', 'samples', 'applications', 'demo', 'share', 'serve', 'calc',
    ])
  })
})
