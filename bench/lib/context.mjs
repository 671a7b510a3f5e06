// Where things are, and how the benchmarks call the real `pitside` binary.
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { runTimed } from './run.mjs'

export const repoRoot = fileURLToPath(new URL('../../', import.meta.url))
export const binPath = join(repoRoot, 'bin', 'pitside.js')
export const webDir = join(repoRoot, 'dist', 'web')
export const autocannonBin = join(repoRoot, 'node_modules', 'autocannon', 'autocannon.js')
export const benchPassword = 'bench-password-1'

export function makeWorkDir() {
  const dir = mkdtempSync(join(tmpdir(), 'pitside-bench-'))
  return { dir, path: (...p) => join(dir, ...p), cleanup: () => rmSync(dir, { recursive: true, force: true }) }
}

export function ensureDir(dir) {
  mkdirSync(dir, { recursive: true })
  return dir
}

/** Environment of every pitside run: no colour, nothing from the caller's PITSIDE_* settings. */
export function pitsideEnv(extra = {}) {
  const env = { ...process.env, NO_COLOR: '1' }
  for (const k of Object.keys(env)) if (k.startsWith('PITSIDE_')) delete env[k]
  return { ...env, ...extra }
}

/** Runs `pitside --db <db> …args` (untimed set-up); throws with its stderr when it fails. */
export async function pitside(db, args, options = {}) {
  return runTimed(process.execPath, [...(options.nodeArgs ?? []), binPath, '--db', db, ...args], {
    env: pitsideEnv(options.env),
    input: options.input ?? null,
    check: options.check ?? true,
    cwd: options.cwd ?? repoRoot,
  })
}

/** Copies a database file (after a checkpoint, so no -wal file belongs to it) to a fresh path. */
export function copyDatabase(from, to) {
  for (const suffix of ['', '-wal', '-shm']) rmSync(to + suffix, { force: true })
  copyFileSync(from, to)
  if (existsSync(from + '-wal')) throw new Error(`${from} still has a WAL file; checkpoint it before copying`)
}
