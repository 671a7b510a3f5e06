#!/usr/bin/env node
// What the command will need is started first (a big lab file's read, its writer thread), then
// the program's modules are loaded: see cli/early-start.ts.
import { startEarly } from '../dist/cli/early-start.js'

startEarly(process.argv.slice(2))
await import('../dist/cli/main.js')
