import { readFileSync } from 'node:fs'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { importFarms } from '../../cli/actions/farms.ts'
import { importStorages } from '../../cli/actions/storages.ts'
import type { OpenDatabase } from '../../shared/db/open-database.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDatabase, type TempDir } from '../helpers/temp-db.ts'

const fixture = (path: string) => new URL(`../fixtures/${path}`, import.meta.url).pathname

let t: OpenDatabase & { tmp: TempDir }
let open = false
async function closeDb(): Promise<string> {
  if (open) await t.close()
  open = false
  return t.tmp.path('test.db')
}
beforeEach(async () => {
  t = await makeTempDatabase()
  open = true
  await t.db.insertInto('organizations').values({ code: 'brightwater', name: 'Brightwater Agronomy' }).execute()
  await importFarms(t, [fixture('farms/farms.csv')])
})
afterEach(async () => {
  await closeDb()
  t.tmp.cleanup()
})

describe('importStorages (in-process core)', () => {
  it('adds storages with geometry and amounts, then finds a re-import unchanged', async () => {
    const first = await importStorages(t, [fixture('storages/storages.csv')])
    expect(first.files[0]).toMatchObject({ new: 3, changed: 0, unchanged: 0 })
    const basin = t.sqlite.prepare("select * from storages where code = 'BASIN'").get() as Record<string, unknown>
    expect(basin).toMatchObject({ kind: 'earthen_basin', species: 'dairy', form: 'liquid', shape: 'basin', length_ft: 150, width_ft: 100, depth_ft: 12, side_slope: 3, freeboard_ft: 2, access_points: 3 })
    expect((await importStorages(t, [fixture('storages/storages.csv')])).files[0]).toMatchObject({ outcome: 'unchanged', unchanged: 3 })
  })

  it('lists the changed columns of a storage and updates only them', async () => {
    await importStorages(t, [fixture('storages/storages.csv')])
    const text = readFileSync(fixture('storages/storages.csv'), 'utf8').replace('180000,2026-11-01,5.7', '212000,2026-11-20,6.7')
    const r = await importStorages(t, [{ name: 'storages.csv', text }])
    expect(r.files[0]!.items[0]).toEqual({
      line: 2,
      key: 'BWA/PIT',
      status: 'changed',
      changes: [
        { column: 'current_amount', from: 180000, to: 212000 },
        { column: 'current_amount_on', from: '2026-11-01', to: '2026-11-20' },
        { column: 'current_depth_ft', from: 5.7, to: 6.7 },
      ],
    })
  })

  it('refuses a storage of a farm that does not exist, naming the line, and writes nothing', async () => {
    const text = 'farm,storage,kind,species,form\nBWA,P9,tank,swine,liquid\nZZZ,P1,tank,swine,liquid\n'
    await expect(importStorages(t, [{ name: 's.csv', text }])).rejects.toMatchObject({
      code: 'invalid_input',
      message: expect.stringContaining('s.csv:3: farm: farm ZZZ does not exist (import it first with `pitside farms import`)'),
    })
    expect((t.sqlite.prepare('select count(*) as n from storages').get() as { n: number }).n).toBe(0)
  })
})

describe('pitside storages (built binary)', () => {
  it('shows a dry run per row, then imports and lists storages of one farm', async () => {
    const db = await closeDb()
    const dry = await runCli(['--db', db, 'storages', 'import', '--dry-run', fixture('storages/storages.csv')])
    expect(dry.exitCode).toBe(0)
    expect(dry.stdout).toMatch(/│ line │ storage\s+│ would be │ changes │/)
    expect(dry.stdout).toMatch(/│\s+4 │ HRN\/BASIN │ new\s+│/)
    expect(dry.stderr).toMatch(/dry run: 3 new, 0 changed, 0 unchanged; nothing was written/)
    const imported = await runCli(['--db', db, 'storages', 'import', fixture('storages/storages.csv')])
    expect(imported.exitCode).toBe(0)
    const list = await runCli(['--db', db, 'storages', 'list', '--farm', 'BWA'])
    expect(list.exitCode).toBe(0)
    expect(list.stdout).toMatch(/│ BWA\s+│ PIT\s+│ Finisher pit\s+│ deep_pit\s+│ swine liquid │ 120 × 40 × 8 ft\s+│ 251,300 gal │ 180,000 gal │ 2026-11-01 │\s+3 │/)
    expect(list.stdout).not.toMatch(/HRN/)
    const unknown = await runCli(['--db', db, 'storages', 'list', '--farm', 'bwa'])
    expect(unknown.exitCode).toBe(66)
    expect(unknown.stderr).toMatch(/farm bwa does not exist; did you mean BWA\?/)
  })
})
