import { readFileSync } from 'node:fs'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { findApplicationsReport, importApplications } from '../../cli/actions/applications.ts'
import { importFarms } from '../../cli/actions/farms.ts'
import { importFields } from '../../cli/actions/fields.ts'
import { importStorages } from '../../cli/actions/storages.ts'
import type { OpenDatabase } from '../../shared/db/open-database.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDatabase, type TempDir } from '../helpers/temp-db.ts'

const fixture = (path: string) => new URL(`../fixtures/${path}`, import.meta.url).pathname
const applicationsCsv = readFileSync(fixture('applications/applications.csv'), 'utf8')
const today = '2026-11-15'

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
  await importFields(t, [fixture('fields/fields.csv')])
})
afterEach(async () => {
  await closeDb()
  t.tmp.cleanup()
})

/** A stored plan as the planner writes it: one version per run, rates per field in plan_fields. */
async function insertPlan(version: number, fields: { code: string; rate: number; unit: string; total: number | null }[]) {
  const farm = await t.db.selectFrom('farms').select('id').where('code', '=', 'BWA').executeTakeFirstOrThrow()
  const { id } = await t.db
    .insertInto('plans')
    .values({ farm_id: farm.id, season: 2026, version, reference_set: 'test', reference_set_version: '1', basis: 'lowest', as_of: '2025-11-15', inputs: '{}', result: '{}', created_by: 'test' })
    .returning('id')
    .executeTakeFirstOrThrow()
  for (const f of fields) {
    const field = await t.db.selectFrom('fields').select(['id', 'acres']).where('code', '=', f.code).where('farm_id', '=', farm.id).executeTakeFirstOrThrow()
    await t.db.insertInto('plan_fields').values({ plan_id: id, field_id: field.id, field_code: f.code, acres: field.acres, rate: f.rate, rate_unit: f.unit, total_manure: f.total }).execute()
  }
}

describe('importApplications (in-process core)', () => {
  it('records applications keyed by field, day and storage; a re-import is unchanged and an edit is a change', async () => {
    expect((await importApplications(t, [fixture('applications/applications.csv')], { today })).files[0]).toMatchObject({ new: 3 })
    expect((await importApplications(t, [fixture('applications/applications.csv')], { today })).files[0]).toMatchObject({ outcome: 'unchanged', unchanged: 3 })
    const edited = applicationsCsv.replace('176000,gal,injected,,30', '181000,gal,injected,,31')
    const r = await importApplications(t, [{ name: 'a.csv', text: edited }], { today })
    expect(r.files[0]!.items[0]).toEqual({
      line: 2,
      key: 'BWA/N40 2026-04-20 PIT',
      status: 'changed',
      changes: [
        { column: 'amount', from: 176000, to: 181000 },
        { column: 'loads', from: 30, to: 31 },
      ],
    })
    expect((t.sqlite.prepare('select count(*) as n from applications').get() as { n: number }).n).toBe(3)
  })

  it('refuses an amount unit that does not fit the storage and warns about a per-acre amount that looks wrong', async () => {
    const header = applicationsCsv.split('\n')[0]
    await expect(importApplications(t, [{ name: 'a.csv', text: `${header}\nBWA,N40,2026-04-20,PILE,100,gal,broadcast,,,,\n` }], { today })).rejects.toMatchObject({
      message: expect.stringContaining('a.csv:2: amount_unit: storage PILE holds solid manure measured in ton; found gal'),
    })
    const r = await importApplications(t, [{ name: 'b.csv', text: `${header}\nBWA,N40,2026-04-21,PIT,2000000,gal,injected,,,,\n` }], { today })
    expect(r.files[0]!.warnings[0]!.message).toBe('2000000 gal on 40 ac is 50000 gal/ac; amount is the total over the field')
  })

  it('shows the latest plan version beside what was spread in the season window', async () => {
    await importApplications(t, [fixture('applications/applications.csv')], { today })
    await insertPlan(1, [{ code: 'N40', rate: 4000, unit: 'gal/ac', total: 160000 }])
    await insertPlan(2, [
      { code: 'N40', rate: 4400, unit: 'gal/ac', total: 176000 },
      { code: 'CREEK', rate: 11, unit: 'ton/ac', total: null },
    ])
    const report = await findApplicationsReport(t, 'BWA', 2026)
    expect(report.plan).toMatchObject({ version: 2 })
    expect(report.window).toEqual({ from: '2025-07-01', to: '2026-06-30' })
    expect(report.fields.map((f) => [f.fieldCode, f.plannedTotal, f.actualTotal, f.amountUnit, f.differencePct === null ? null : Number(f.differencePct.toFixed(1))])).toEqual([
      ['CREEK', 247.5, 270, 'ton', 9.1], // 11 ton/ac × 22.5 ac; spread 2025-09-12 for the 2026 crop
      ['N40', 176000, 176000, 'gal', 0],
    ])
  })
})

describe('pitside applications (built binary)', () => {
  it('imports records and prints planned against actual for a farm and season', async () => {
    const db = await closeDb()
    const imported = await runCli(['--db', db, 'applications', 'import', fixture('applications/applications.csv')])
    expect(imported.exitCode).toBe(0)
    const list = await runCli(['--db', db, 'applications', 'list', '--farm', 'HRN', '--season', '2026'])
    expect(list.exitCode).toBe(0)
    expect(list.stderr).toMatch(/HRN season 2026: spreading from 2025-07-01 to 2026-06-30; no plan for this season yet/)
    expect(list.stdout).toMatch(/│ H1\s+│\s+60 │\s+│ BASIN\s+│\s+│\s+7,600 gal\/ac │\s+│\s+456,000 gal │\s+│ 2026-05-02 │/)
    const bad = await runCli(['--db', db, 'applications', 'list', '--farm', 'HRN', '--season', 'next'])
    expect(bad.exitCode).toBe(64)
  })
})
