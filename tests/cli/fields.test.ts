import { readFileSync } from 'node:fs'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { importFarms } from '../../cli/actions/farms.ts'
import { importFields } from '../../cli/actions/fields.ts'
import { importStorages } from '../../cli/actions/storages.ts'
import { requireFarm } from '../../shared/db/farms.ts'
import { listFields } from '../../shared/db/fields.ts'
import type { OpenDatabase } from '../../shared/db/open-database.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDatabase, type TempDir } from '../helpers/temp-db.ts'

const fixture = (path: string) => new URL(`../fixtures/${path}`, import.meta.url).pathname
const fieldsCsv = readFileSync(fixture('fields/fields.csv'), 'utf8')

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
  await importStorages(t, [fixture('storages/storages.csv')])
})
afterEach(async () => {
  await closeDb()
  t.tmp.cleanup()
})

const rowsOf = (sql: string) => t.sqlite.prepare(sql).all() as Record<string, unknown>[]

describe('importFields (in-process core)', () => {
  it('stores each field once, its soil test, one crop season per season and the overrides as JSON', async () => {
    const r = await importFields(t, [fixture('fields/fields.csv')])
    expect(r.files[0]).toMatchObject({ rows: 5, new: 5 })
    expect(rowsOf('select code, acres, method, incorporated_within_hours, overrides from fields order by id')).toEqual([
      { code: 'N40', acres: 40, method: 'injected', incorporated_within_hours: null, overrides: '{"applicator_capacity":6000}' },
      { code: 'CREEK', acres: 22.5, method: 'broadcast_incorporated', incorporated_within_hours: 48, overrides: '{"basis":"p2o5","max_rate":12,"applicator_capacity":12}' },
      { code: 'H1', acres: 60, method: 'injected', incorporated_within_hours: null, overrides: '{"max_rate":8000,"applicator_capacity":7300}' },
      { code: 'H2', acres: 35, method: null, incorporated_within_hours: null, overrides: null },
    ])
    expect(rowsOf('select season, crop, yield_goal, previous_crop from crop_seasons order by id')).toEqual([
      { season: 2026, crop: 'soybean', yield_goal: 55, previous_crop: 'corn' },
      { season: 2027, crop: 'corn_grain', yield_goal: 190, previous_crop: 'soybean' },
      { season: 2027, crop: 'wheat', yield_goal: 80, previous_crop: 'soybean' },
      { season: 2027, crop: 'corn_silage', yield_goal: 24, previous_crop: 'alfalfa' },
      { season: 2027, crop: 'soybean', yield_goal: 58, previous_crop: 'corn' },
    ])
    expect(rowsOf('select sampled_on, p_ppm, p_method, k_ppm from soil_tests order by id')).toHaveLength(3)
    expect((await importFields(t, [fixture('fields/fields.csv')])).files[0]).toMatchObject({ outcome: 'unchanged', unchanged: 5 })
  })

  it('updates a season in place and adds a soil test of a new date beside the old one', async () => {
    await importFields(t, [fixture('fields/fields.csv')])
    const text = fieldsCsv
      .replace('BWA,N40,40,2027,corn_grain,190', 'BWA,N40,40,2027,corn_grain,200')
      .replaceAll('32,mehlich3,160,PIT,injected,,,,6000,2025-10-01', '29,mehlich3,150,PIT,injected,,,,6000,2026-10-15')
    const r = await importFields(t, [{ name: 'fields.csv', text }])
    expect(r.files[0]!.items.slice(0, 2)).toEqual([
      { line: 2, key: 'BWA/N40 2026', status: 'changed', changes: [{ column: 'soil_test_date', from: null, to: '2026-10-15' }] },
      { line: 3, key: 'BWA/N40 2027', status: 'changed', changes: [{ column: 'yield_goal', from: 190, to: 200 }] },
    ])
    const farm = await requireFarm(t.db, 'BWA')
    const n40 = (await listFields(t.db, { farmId: farm.id, season: 2027 })).find((f) => f.code === 'N40')!
    expect(n40.soilTest).toMatchObject({ sampledOn: '2026-10-15', pPpm: 29, kPpm: 150 })
    expect(n40.cropSeason).toMatchObject({ season: 2027, yieldGoal: 200 })
    expect(rowsOf('select count(*) as n from crop_seasons')[0]!.n).toBe(5)
  })

  it.each([
    ['BWA,N40,40,2027,corn_grain,190,soybean,32,mehlich3,160,TANK,injected,,,,,,', 'storage: storage TANK is not a storage of farm BWA (known: PILE, PIT)'],
    ['BWA,N40,40,2027,corn_grain,190,soybean,32,mehlich3,160,PILE,injected,,,,,,', 'method: storage PILE holds solid manure, which cannot be injected'],
  ])('refuses a row whose storage does not fit: %s', async (row, message) => {
    const text = fieldsCsv.split('\n').slice(0, 1).join('\n') + '\n' + row + '\n'
    await expect(importFields(t, [{ name: 'f.csv', text }])).rejects.toMatchObject({ message: expect.stringContaining(`f.csv:2: ${message}`) })
  })
})

describe('pitside fields (built binary)', () => {
  it('imports from standard input and lists one season of a farm', async () => {
    const db = await closeDb()
    const imported = await runCli(['--db', db, 'fields', 'import', '-'], { input: fieldsCsv })
    expect(imported.exitCode).toBe(0)
    expect(imported.stderr).toMatch(/stdin: imported fields: 5 new/)
    const list = await runCli(['--db', db, '--json', 'fields', 'list', '--farm', 'BWA', '--season', '2027'])
    const { fields } = JSON.parse(String(list.stdout))
    expect(fields.map((f: { field: string; crop_season: { crop: string } }) => `${f.field}:${f.crop_season.crop}`)).toEqual(['CREEK:wheat', 'N40:corn_grain'])
    expect(fields[0]).toMatchObject({ storage: 'PILE', method: 'broadcast_incorporated', incorporated_within_hours: 48, overrides: { basis: 'p2o5', max_rate: 12, applicator_capacity: 12 }, crop_season: { yield_goal_unit: 'bu/ac' } })
    const table = await runCli(['--db', db, 'fields', 'list', '--farm', 'HRN'])
    expect(table.stdout).toMatch(/│ HRN\s+│ H1\s+│\s+60 │ 2027\s+│ corn_silage │\s+24 ton\/ac │ alfalfa\s+│\s+45 bray1 │\s+180 │ BASIN\s+│ injected/)
  })
})
