import { migrationNames } from '../../shared/db/migration-names.ts'
import { afterEach, describe, expect, it } from 'vitest'
import { runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'

let tmp: TempDir
afterEach(() => tmp?.cleanup())

describe('pitside binary', () => {
  it('lists its commands in --help', async () => {
    const r = await runCli(['--help'])
    expect(r.exitCode).toBe(0)
    expect(r.stdout).toMatch(/Usage: pitside/)
    expect(r.stdout).toMatch(/\binit\b/)
  })

  it('prints its version', async () => {
    const r = await runCli(['--version'])
    expect(r.exitCode).toBe(0)
    expect(String(r.stdout).trim()).toMatch(/^\d+\.\d+\.\d+$/)
  })

  it('treats a second init as a no-op and says so', async () => {
    tmp = makeTempDir()
    const db = tmp.path('x.db')
    const first = await runCli(['--db', db, 'init'])
    expect(first.exitCode).toBe(0)
    expect(first.stderr).toContain(`applied ${migrationNames.length} migration(s): ${migrationNames.join(', ')}`)
    const second = await runCli(['--db', db, '--json', 'init'])
    expect(second.exitCode).toBe(0)
    expect(JSON.parse(String(second.stdout))).toMatchObject({ applied: [] })
    const third = await runCli(['--db', db, 'init'])
    expect(third.stderr).toMatch(/nothing to do/)
  })

  it('fails an unknown command with a short message and a non-zero exit', async () => {
    const r = await runCli(['frobnicate'])
    expect(r.exitCode).not.toBe(0)
    expect(r.stderr).toMatch(/unknown command 'frobnicate'/)
    expect(r.stderr).not.toMatch(/\bat .*\.js:\d+/) // no stack trace
  })

  it('fails a bad option with a short message and a non-zero exit', async () => {
    const r = await runCli(['init', '--no-such-flag'])
    expect(r.exitCode).toBe(64)
    expect(r.stderr).toMatch(/unknown option '--no-such-flag'/)
  })

  it('takes the database from PITSIDE_DB', async () => {
    tmp = makeTempDir()
    const db = tmp.path('env.db')
    const r = await runCli(['--json', 'init'], { env: { PITSIDE_DB: db } })
    expect(r.exitCode).toBe(0)
    expect(JSON.parse(String(r.stdout)).database).toBe(db)
  })
})
