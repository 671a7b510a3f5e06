import { writeFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { runCli } from '../helpers/cli.ts'
import { seedDatabaseFile } from '../helpers/plan-seed.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'

// Spawns the built binary: run `npm run build:node` first.
let tmp: TempDir
let db: string
const labHeader = 'report_id,sample_id,sampled_on,farm,storage,form,species,basis,units,dry_matter_pct,total_n,ammonium_n,p2o5,k2o'
async function plan(...args: string[]) {
  const r = await runCli(['--db', db, '--json', 'plan', '--farm', 'GVF', '--season', '2027', '--as-of', '2026-11-15', ...args])
  expect(r.exitCode, String(r.stderr)).toBe(0)
  return JSON.parse(String(r.stdout)).plans[0]
}

beforeAll(async () => {
  tmp = makeTempDir('pitside-plans-')
  db = tmp.path('plans.db')
  await seedDatabaseFile(db, [
    {
      code: 'GVF',
      name: 'Gravel Vale Finishers',
      storages: [{ code: 'P1', kind: 'deep_pit', species: 'swine', form: 'liquid', currentAmount: 600000, capacityUnit: 'gal' }],
      fields: [
        { code: 'F1', acres: 60, storage: 'P1', method: 'injected', seasons: [{ season: 2027, crop: 'corn_grain', yieldGoal: 180, previousCrop: 'corn' }], overrides: { applicator_capacity: 6000 } },
        { code: 'F2', acres: 35, storage: 'P1', method: 'broadcast_incorporated', incorporatedWithinHours: 24, seasons: [{ season: 2027, crop: 'corn_grain', yieldGoal: 170, previousCrop: 'soybean' }] },
      ],
    },
  ])
  const spring = tmp.path('spring.csv')
  writeFileSync(spring, `${labHeader}\nCRA-26-0300,GVF-P1-A,2026-04-02,GVF,P1,liquid,swine,as_is,lb_per_1000gal,5.5,52,36,30,31\nCRA-26-0300,GVF-P1-B,2026-04-02,GVF,P1,liquid,swine,as_is,lb_per_1000gal,5.1,48,34,28,30\n`)
  expect((await runCli(['--db', db, 'labs', 'import', spring])).exitCode).toBe(0)
})
afterAll(() => tmp?.cleanup())

describe('pitside plans', () => {
  it('lists versions, shows one, and tells what changed after a new sampling round', async () => {
    const v1 = await plan()
    const fall = tmp.path('fall.csv')
    writeFileSync(fall, `${labHeader}\nCRA-26-0410,GVF-P1-C,2026-10-20,GVF,P1,liquid,swine,as_is,lb_per_1000gal,6.0,60,44,33,34\n`)
    expect((await runCli(['--db', db, 'labs', 'import', fall])).exitCode).toBe(0)
    const v2 = await plan('--basis', 'lowest')
    expect(v2.version).toBe(v1.version + 1)

    const list = await runCli(['--db', db, '--json', 'plans', 'list', '--farm', 'GVF'])
    expect(list.exitCode).toBe(0)
    expect(JSON.parse(String(list.stdout)).plans.map((p: any) => [p.id, p.version, p.fields, p.acres])).toEqual([
      [v2.id, v2.version, 2, 95],
      [v1.id, v1.version, 2, 95],
    ])
    const table = await runCli(['--db', db, 'plans', 'list', '--latest'])
    expect(table.stdout).toMatch(new RegExp(`│\\s+${v2.id} │ GVF`))
    expect(table.stdout).not.toMatch(new RegExp(`│\\s+${v1.id} │ GVF`))

    const show = await runCli(['--db', db, '--json', 'plans', 'show', String(v1.id)])
    expect(JSON.parse(String(show.stdout))).toEqual(v1)
    const readable = await runCli(['--db', db, 'plans', 'show', String(v1.id)])
    expect(readable.stdout).toMatch(/GVF season 2027, version 1/)

    const diff = await runCli(['--db', db, '--json', 'plans', 'diff', String(v1.id), String(v2.id)])
    expect(diff.exitCode).toBe(0)
    const d = JSON.parse(String(diff.stdout))
    expect(d.from).toMatchObject({ id: v1.id, version: v1.version })
    expect(d.plan).toContainEqual({ key: 'basis', from: 'n', to: 'lowest', delta: null })
    // the storage now stands on the fall sample alone (the round is the samples within 45 days of the latest)
    const p1 = d.storages.find((s: any) => s.storage === 'P1')
    expect(p1.changes).toContainEqual({ key: 'analysis.total_n', from: 50, to: 60, delta: 10 })
    expect(p1.changes).toContainEqual({ key: 'samples', from: 2, to: 1, delta: -1 })
    const f1 = d.fields.find((f: any) => f.field === 'F1')
    const rate = f1.changes.find((c: any) => c.key === 'rate')
    expect(rate).toMatchObject({ from: v1.fields[0].rate, to: v2.fields[0].rate })
    expect(rate.delta).toBeCloseTo(v2.fields[0].rate - v1.fields[0].rate, 2)
    expect(d.inputs.map((c: any) => c.key)).toEqual(expect.arrayContaining(['basis', 'fields.F1.case.manure.total_n', 'fields.F1.case.basis', 'storages.P1.samples.0']))
    const readableDiff = await runCli(['--db', db, 'plans', 'diff', String(v1.id), String(v2.id)])
    expect(readableDiff.stdout).toMatch(/field F1\s+│ rate/)
    expect(readableDiff.stdout).toMatch(/inputs that differ/)
  })

  it('refuses a plan id that is not a number or does not exist', async () => {
    const bad = await runCli(['--db', db, 'plans', 'show', 'latest'])
    expect(bad.exitCode).toBe(64)
    expect(bad.stderr).toMatch(/expected a plan id \(a number/)
    const missing = await runCli(['--db', db, 'plans', 'diff', '9999', '9998'])
    expect(missing.exitCode).toBe(66)
    expect(missing.stderr).toMatch(/plan 9999 not found/)
  })
})
