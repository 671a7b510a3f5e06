/**
 * The options of `pitside` itself that take a value (cli/main.ts): a command line's words after
 * them are their values, not commands or files. Read by cli/early-start.ts before the program has
 * loaded and by cli/commands/index.ts, so this module imports nothing.
 */
export const programOptionsWithValue: ReadonlySet<string> = new Set(['--db'])
