import { readFileSync } from 'node:fs'
import { createHash } from 'node:crypto'
import { writeFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { parseCsv } from '../../shared/csv.ts'
import { runCli } from '../helpers/cli.ts'
import { seedDatabaseFile } from '../helpers/plan-seed.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'

// Spawns the built binary: run `npm run build:node` first.
let tmp: TempDir
let db: string
beforeAll(async () => {
  tmp = makeTempDir('pitside-records-')
  db = tmp.path('records.db')
  await seedDatabaseFile(db, [
    {
      code: 'JBD',
      storages: [{ code: 'B1', kind: 'earthen_basin', species: 'dairy', form: 'liquid' }],
      fields: [
        {
          code: 'F1',
          acres: 40,
          storage: 'B1',
          method: 'injected',
          seasons: [{ season: 2026, crop: 'corn_silage', yieldGoal: 22, previousCrop: 'alfalfa' }],
          overrides: { n_need: 120 },
          applications: [
            { storage: 'B1', appliedOn: '2025-10-15', amount: 200000, amountUnit: 'gal', method: 'injected', applicator: '=HYPERLINK("http://evil.example")', notes: '@SUM(1)' },
            { storage: 'B1', appliedOn: '2024-10-15', amount: 1000, amountUnit: 'gal', method: 'injected' }, // another season: left out
          ],
        },
      ],
    },
  ])
  const labs = tmp.path('labs.csv')
  writeFileSync(
    labs,
    'report_id,sample_id,sampled_on,farm,storage,form,species,basis,units,dry_matter_pct,total_n,ammonium_n,p2o5,k2o\n' +
      'CRA-25-0900,JBD-B1-A,2025-09-20,JBD,B1,liquid,dairy,as_is,lb_per_1000gal,4.0,24,12,10,22\n' +
      'CRA-25-0900,JBD-B1-B,2025-09-20,JBD,B1,liquid,dairy,as_is,lb_per_1000gal,4.4,26,13,12,24\n',
  )
  expect((await runCli(['--db', db, 'labs', 'import', labs])).exitCode).toBe(0)
  expect((await runCli(['--db', db, 'plan', '--farm', 'JBD', '--season', '2026', '--as-of', '2025-10-01'])).exitCode).toBe(0)
})
afterAll(() => tmp?.cleanup())

describe('pitside records export', () => {
  it('writes the season’s analyses, plan, applications with their nutrients and planned against actual', async () => {
    const out = tmp.path('records')
    const r = await runCli(['--db', db, '--json', 'records', 'export', '--farm', 'JBD', '--season', '2026', '--out-dir', out])
    expect(r.exitCode, String(r.stderr)).toBe(0)
    const manifest = JSON.parse(String(r.stdout))
    expect(manifest.files.map((f: any) => f.file)).toEqual(['analyses.csv', 'applications.csv', 'planned-vs-actual.csv', 'plan.csv', 'plan.json'])
    expect(manifest.spreading_window).toEqual({ from: '2025-07-01', to: '2026-06-30' })
    for (const f of manifest.files) {
      expect(createHash('sha256').update(readFileSync(`${out}/${f.file}`)).digest('hex')).toBe(f.sha256)
    }
    const csv = (name: string) => {
      const { records } = parseCsv(readFileSync(`${out}/${name}`, 'utf8'))
      return records.slice(1).map((row) => Object.fromEntries(records[0]!.map((h, i) => [h, row[i]])))
    }
    expect(csv('analyses.csv').map((a) => [a.sample_id, a.total_n, a.superseded])).toEqual([
      ['JBD-B1-A', '24', 'false'],
      ['JBD-B1-B', '26', 'false'],
    ])
    const [app] = csv('applications.csv')
    // 200,000 gal on 40 ac = 5,000 gal/ac; total N 25 lb/1000 gal (mean of the round) → 125 lb N/ac
    expect(app).toMatchObject({ applied_on: '2025-10-15', rate: '5000', analysis_sampled_on: '2025-09-20', total_n_lb_per_acre: '125', p2o5_lb_per_acre: '55', k2o_lb_per_acre: '115' })
    expect(app!.applicator).toBe(`'=HYPERLINK("http://evil.example")`)
    expect(app!.notes).toBe("'@SUM(1)")
    expect(csv('applications.csv')).toHaveLength(1)
    const [versus] = csv('planned-vs-actual.csv')
    expect(versus).toMatchObject({ field: 'F1', actual_total: '200000', applications: '1' })
    expect(Number(versus!.planned_rate)).toBeGreaterThan(0)
    const planJson = JSON.parse(readFileSync(`${out}/plan.json`, 'utf8'))
    expect(planJson.plan.fields[0].need.n).toBe(120)
    expect(planJson.inputs.fields[0].case.need).toEqual({ n: 120 })
  })

  it('names the known farms when the farm is unknown', async () => {
    const r = await runCli(['--db', db, 'records', 'export', '--farm', 'NOPE', '--season', '2026', '--out-dir', tmp.path('x')])
    expect(r.exitCode).toBe(66)
    expect(r.stderr).toMatch(/farm "NOPE" not found \(known farms: JBD\)/)
  })
})
