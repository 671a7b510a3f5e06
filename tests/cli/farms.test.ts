import { readFileSync } from 'node:fs'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { importFarms } from '../../cli/actions/farms.ts'
import type { OpenDatabase } from '../../shared/db/open-database.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDatabase, type TempDir } from '../helpers/temp-db.ts'

const fixture = (name: string) => new URL(`../fixtures/farms/${name}`, import.meta.url).pathname
const count = (t: OpenDatabase, table: string) => (t.sqlite.prepare(`select count(*) as n from ${table}`).get() as { n: number }).n

let t: OpenDatabase & { tmp: TempDir }
let open = false
/** Closes the in-process connection before a spawned binary uses the file. */
async function closeDb(): Promise<string> {
  if (open) await t.close()
  open = false
  return t.tmp.path('test.db')
}
beforeEach(async () => {
  t = await makeTempDatabase()
  open = true
  await t.db.insertInto('organizations').values({ code: 'brightwater', name: 'Brightwater Agronomy' }).execute()
})
afterEach(async () => {
  await closeDb()
  t.tmp.cleanup()
})

describe('importFarms (in-process core)', () => {
  it('adds new farms, then treats the same file as a no-op that writes nothing', async () => {
    const first = await importFarms(t, [fixture('farms.csv')])
    expect(first.files[0]).toMatchObject({ outcome: 'imported', new: 2, changed: 0, unchanged: 0 })
    const again = await importFarms(t, [fixture('farms.csv')])
    expect(again.files[0]).toMatchObject({ outcome: 'unchanged', new: 0, unchanged: 2, importRunId: null })
    expect(count(t, 'import_runs')).toBe(1)
  })

  it('shows what a changed file would change with dryRun, and writes nothing', async () => {
    await importFarms(t, [fixture('farms.csv')])
    const text = readFileSync(fixture('farms.csv'), 'utf8').replace('Ida Brightwater', 'Ida B. Brightwater')
    const dry = await importFarms(t, [{ name: 'farms.csv', text }], { dryRun: true })
    expect(dry.files[0]!.items).toEqual([
      { line: 2, key: 'BWA', status: 'changed', changes: [{ column: 'operator_name', from: 'Ida Brightwater', to: 'Ida B. Brightwater' }] },
      { line: 3, key: 'HRN', status: 'unchanged', changes: [] },
    ])
    const row = t.sqlite.prepare("select operator_name from farms where code = 'BWA'").get() as { operator_name: string }
    expect(row.operator_name).toBe('Ida Brightwater')
    expect(count(t, 'import_runs')).toBe(1)
  })

  it('refuses a whole file for one bad row, naming file, line and column', async () => {
    await expect(importFarms(t, [fixture('one-bad-row.csv')])).rejects.toMatchObject({
      code: 'invalid_input',
      message: expect.stringMatching(/one-bad-row\.csv:3: contact_email: expected an address like name@example\.org, found "not-an-address"\n1 problem in .*one-bad-row\.csv; nothing was written/),
    })
    expect(count(t, 'farms')).toBe(0)
    expect(count(t, 'import_runs')).toBe(0)
  })

  it('refuses a farm code that belongs to another organization', async () => {
    await importFarms(t, [fixture('farms.csv')])
    await t.db.insertInto('organizations').values({ code: 'loamridge', name: 'Other firm' }).execute()
    await expect(importFarms(t, [{ name: 'x.csv', text: 'farm,name\nBWA,Taken\n' }], { org: 'loamridge' })).rejects.toMatchObject({
      message: expect.stringContaining('x.csv:2: farm: farm BWA belongs to organization brightwater, not loamridge'),
    })
  })

  it('creates a new organization only once its first farms file checks out', async () => {
    await expect(importFarms(t, [fixture('one-bad-row.csv')], { org: 'heron', orgName: 'Heron Agronomy' })).rejects.toMatchObject({ code: 'invalid_input' })
    expect(count(t, 'organizations')).toBe(1)
    const r = await importFarms(t, [{ name: 'h.csv', text: 'farm,name\nHRX,Heron Ridge\n' }], { org: 'heron', orgName: 'Heron Agronomy' })
    expect(r.files[0]).toMatchObject({ new: 1 })
    const farm = t.sqlite.prepare("select o.code from farms f join organizations o on o.id = f.organization_id where f.code = 'HRX'").get()
    expect(farm).toEqual({ code: 'heron' })
  })

  it('refuses a code that differs from a stored one only in case', async () => {
    await importFarms(t, [fixture('farms.csv')])
    await expect(importFarms(t, [{ name: 'x.csv', text: 'farm,name\nbwa,Lower case\n' }])).rejects.toMatchObject({
      message: expect.stringContaining('farm BWA exists; codes are case-sensitive'),
    })
  })
})

describe('pitside farms (built binary)', () => {
  it('imports a file, reports a re-import as unchanged, and lists the farms', async () => {
    const db = await closeDb()
    const first = await runCli(['--db', db, 'farms', 'import', fixture('farms.csv')])
    expect(first.exitCode).toBe(0)
    expect(first.stdout).toMatch(/│ .*farms\.csv │\s+2 │\s+2 │\s+0 │\s+0 │\s+0 │/)
    expect(first.stderr).toMatch(/imported farms: 2 new, 0 changed, 0 unchanged/)
    const again = await runCli(['--db', db, 'farms', 'import', fixture('farms.csv')])
    expect(again.exitCode).toBe(0)
    expect(again.stderr).toMatch(/nothing changed \(all 2 rows are already stored as given\)/)
    const list = await runCli(['--db', db, '--json', 'farms', 'list'])
    expect(JSON.parse(String(list.stdout)).farms.map((f: { farm: string; organization: string }) => `${f.farm}@${f.organization}`)).toEqual(['BWA@brightwater', 'HRN@brightwater'])
  })

  it('reads - from standard input and exits 65 naming the line, with --dry-run writing nothing', async () => {
    const db = await closeDb()
    const bad = await runCli(['--db', db, 'farms', 'import', '-'], { input: readFileSync(fixture('one-bad-row.csv')) })
    expect(bad.exitCode).toBe(65)
    expect(bad.stderr).toMatch(/^pitside: stdin:3: contact_email: expected an address/)
    expect(bad.stdout).toBe('')
    const dry = await runCli(['--db', db, '--json', 'farms', 'import', '--dry-run', '-'], { input: readFileSync(fixture('farms.csv')) })
    expect(dry.exitCode).toBe(0)
    const report = JSON.parse(String(dry.stdout))
    expect(report).toMatchObject({ kind: 'farms', dry_run: true, files: [{ file: 'stdin', outcome: 'dry_run', new: 2 }] })
    const list = await runCli(['--db', db, '--json', 'farms', 'list'])
    expect(JSON.parse(String(list.stdout)).farms).toEqual([])
  })

  it('says how to create a database that does not exist', async () => {
    const r = await runCli(['--db', t.tmp.path('missing.db'), 'farms', 'list'])
    expect(r.exitCode).toBe(69)
    expect(r.stderr).toMatch(/does not exist: run `pitside --db .*missing\.db init` first/)
  })
})
