import Database from 'better-sqlite3'
import { copyFileSync, readdirSync, readFileSync } from 'node:fs'
import { execa } from 'execa'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { parseCsv } from '../../shared/csv.ts'
import { runCli } from '../helpers/cli.ts'
import { seedDatabaseFile } from '../helpers/plan-seed.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'

// Spawns the built binary: run `npm run build:node` first. The demo database is loaded once
// through `pitside demo` (the real import commands on examples/demo) and copied for each test.

let tmp: TempDir
let demoDb: string
let n = 0
beforeAll(async () => {
  tmp = makeTempDir('pitside-plan-')
  demoDb = tmp.path('demo.db')
  expect((await runCli(['--db', demoDb, '-q', 'init'])).exitCode).toBe(0)
  const demo = await runCli(['--db', demoDb, '-q', 'demo'])
  expect(demo.exitCode, String(demo.stderr)).toBe(0)
})
afterAll(() => tmp?.cleanup())

function copyOfDemo(): string {
  const file = tmp.path(`d${++n}.db`)
  copyFileSync(demoDb, file)
  return file
}

function query<T = Record<string, any>>(db: string, sql: string, ...params: unknown[]): T[] {
  const sqlite = new Database(db, { readonly: true })
  try {
    return sqlite.prepare(sql).all(...params) as T[]
  } finally {
    sqlite.close()
  }
}

/** Mean of each analyte over a storage's sampling round: its results within 45 days of its latest on or before `date`. */
function roundMeans(db: string, farm: string, storage: string, date: string) {
  const rows = query<{ sampled_on: string; total_n: number; ammonium_n: number }>(
    db,
    `select r.sampled_on, r.total_n, r.ammonium_n from lab_results r join storages s on s.id = r.storage_id join farms f on f.id = s.farm_id
     where f.code = ? and s.code = ? and r.superseded_by is null and r.sampled_on <= ? order by r.sampled_on`,
    farm,
    storage,
    date,
  )
  const latest = rows[rows.length - 1]!.sampled_on
  const from = new Date(Date.parse(`${latest}T00:00:00Z`) - 45 * 86_400_000).toISOString().slice(0, 10)
  const round = rows.filter((r) => r.sampled_on >= from)
  const mean = (k: 'total_n' | 'ammonium_n') => round.reduce((s, r) => s + r[k], 0) / round.length
  return { samples: round.length, totalN: mean('total_n'), ammoniumN: mean('ammonium_n'), organicN: mean('total_n') - mean('ammonium_n') }
}

async function planJson(db: string, args: string[]) {
  const r = await runCli(['--db', db, '--json', 'plan', '--season', '2027', '--as-of', '2026-11-15', ...args])
  expect(r.exitCode, String(r.stderr)).toBe(0)
  return JSON.parse(String(r.stdout)) as { plans: any[] }
}

describe('pitside plan', () => {
  it('computes the demo farm QBF field by field as the published method gives it by hand', async () => {
    const db = copyOfDemo()
    const { plans } = await planJson(db, ['--farm', 'QBF'])
    const plan = plans[0]
    const fields = query<{ code: string; acres: number; storage: string; method: string; hours: number | null; overrides: string | null; crop: string; yield_goal: number; previous_crop: string }>(
      db,
      `select f.code, f.acres, s.code as storage, f.method, f.incorporated_within_hours as hours, f.overrides, c.crop, c.yield_goal, c.previous_crop
       from fields f join farms a on a.id = f.farm_id join storages s on s.id = f.storage_id join crop_seasons c on c.field_id = f.id and c.season = 2027
       where a.code = 'QBF' order by f.code`,
    )
    // Alberta Agriculture, Nutrient Management Planning Guide (Agdex 400/28-3), Table 4.3.4, average
    // conditions: injected 1.00, incorporated within 1 day 0.75; p. 214: 25 % of organic N in year 1
    const retention = (method: string, hours: number | null) => (method === 'injected' ? 1.0 : method === 'broadcast_incorporated' && hours !== null && hours <= 24 ? 0.75 : null)
    // Univ. of Missouri EQ392: 30 lb N/ac credit after soybean; none after corn
    const legume: Record<string, number> = { soybean: 30, corn: 0 }
    const checked: string[] = []
    for (const row of fields) {
      const overrides = JSON.parse(row.overrides ?? '{}')
      const r = retention(row.method, row.hours)
      if (row.crop !== 'corn_grain' || r === null || !(row.previous_crop in legume) || overrides.n_need !== undefined || overrides.ammonium_retention !== undefined) continue
      const f = plan.fields.find((x: any) => x.field === row.code)
      const round = roundMeans(db, 'QBF', row.storage, '2026-11-15')
      const available = round.ammoniumN * r + round.organicN * 0.25
      expect(f.available.n, row.code).toBeCloseTo(available, 2)
      // residual N of earlier applications: organic N applied × 12 % in the season after and × 5 % two
      // seasons after (Cornell CSS 412, Nitrogen guidelines module); seasons run July – June
      let residual = 0
      for (const [from, to, share] of [['2025-07-01', '2026-06-30', 0.12], ['2024-07-01', '2025-06-30', 0.05]] as const) {
        for (const a of query<{ applied_on: string; amount: number; storage: string }>(
          db,
          `select x.applied_on, x.amount, s.code as storage from applications x join fields f on f.id = x.field_id join farms a on a.id = f.farm_id
           join storages s on s.id = coalesce(x.storage_id, f.storage_id) where a.code = 'QBF' and f.code = ? and x.applied_on between ? and ?`,
          row.code,
          from,
          to,
        )) {
          residual += ((roundMeans(db, 'QBF', a.storage, a.applied_on).organicN * a.amount) / row.acres / 1000) * share
        }
      }
      // yield-goal rule: 1.2 lb N per bu of expected yield (Stanford 1973, as cited by Nafziger et al., Crops & Soils 2022)
      const gross = 1.2 * row.yield_goal
      expect(f.factors.n_need.gross, row.code).toBeCloseTo(gross, 6)
      expect(f.credits.manure_n, row.code).toBeCloseTo(residual, 1)
      const need = Math.max(0, gross - legume[row.previous_crop]! - residual)
      expect(f.need.n, row.code).toBeCloseTo(need, 1)
      // N-based rate: N still needed ÷ available N per gallon, capped by the field's max_rate override
      const rate = Math.min((need / available) * 1000, overrides.max_rate ?? Infinity)
      expect(f.rate, row.code).toBeCloseTo(rate, 0)
      expect(f.limited_by, row.code).toBe(overrides.max_rate !== undefined && rate === overrides.max_rate ? 'max_rate' : 'n')
      expect(f.total_manure, row.code).toBeCloseTo(f.rate * row.acres, -1)
      if (overrides.applicator_capacity) expect(f.loads.field, row.code).toBe(Math.ceil(f.total_manure / overrides.applicator_capacity - 1e-9))
      checked.push(row.code)
    }
    expect(checked.length).toBeGreaterThanOrEqual(3)
    // the storages stand on their latest sampling round
    for (const s of plan.storages) {
      const round = roundMeans(db, 'QBF', s.storage, '2026-11-15')
      expect(s).toMatchObject({ analysis_source: 'lab', samples: round.samples })
      expect(s.analysis.total_n).toBeCloseTo(round.totalN, 3)
    }
  })

  it('gives each field exactly what `pitside calc rate` gives for the case stored in the plan inputs', async () => {
    const db = copyOfDemo()
    const { plans } = await planJson(db, ['--farm', 'QBF', '--farm', 'LKP'])
    for (const plan of plans) {
      const [row] = query<{ inputs: string }>(db, 'select inputs from plans where id = ?', plan.id)
      const stored = JSON.parse(row!.inputs)
      const picked = [plan.fields[0], plan.fields.find((f: any) => f.method !== plan.fields[0].method)].filter(Boolean)
      for (const field of picked) {
        const code = field.field
        const c = stored.fields.find((f: any) => f.code === code).case
        const calc = await runCli(['--json', 'calc', 'rate', '--input', '-'], { input: JSON.stringify(c) })
        expect(calc.exitCode, String(calc.stderr)).toBe(0)
        const expected = JSON.parse(String(calc.stdout))
        const { warnings, sources, ...numbers } = expected
        expect(field).toMatchObject(numbers)
        expect(field.warnings).toEqual(expect.arrayContaining(warnings))
        // the field names its sources by id; the plan lists each one once, in full
        expect(field.source_ids).toEqual(sources.map((s: any) => s.id))
        expect(field.source_ids.map((id: string) => plan.sources.find((s: any) => s.id === id))).toEqual(sources)
      }
    }
  })

  it('lists each cited source once per plan and names the ones each field used by id', async () => {
    const db = copyOfDemo()
    const { plans } = await planJson(db, ['--farm', 'QBF'])
    const plan = plans[0]
    const ids = plan.sources.map((s: any) => s.id)
    expect(new Set(ids).size).toBe(ids.length)
    expect(plan.sources.length).toBeGreaterThan(0)
    for (const s of plan.sources) expect(s).toMatchObject({ id: expect.any(String), title: expect.any(String), publisher: expect.any(String) })
    const cited = new Set<string>()
    for (const f of plan.fields) {
      expect(f).not.toHaveProperty('sources')
      expect(f.source_ids.length).toBeGreaterThan(0)
      for (const id of f.source_ids) {
        expect(ids, `${f.field} cites ${id}`).toContain(id)
        cited.add(id)
      }
    }
    // nothing listed that no field cites
    expect([...cited].sort()).toEqual([...ids].sort())
    // the per-field detail of plan_fields names them by id too
    for (const r of query<{ detail: string }>(db, 'select detail from plan_fields where plan_id = ?', plan.id)) {
      const detail = JSON.parse(r.detail)
      expect(detail).not.toHaveProperty('sources')
      expect(detail.source_ids.length).toBeGreaterThan(0)
    }
  })

  it('stores every run as a new version with its plan fields, and leaves earlier versions alone', async () => {
    const db = copyOfDemo()
    const before = query<{ id: number; version: number; result: string }>(db, "select p.id, p.version, p.result from plans p join farms f on f.id = p.farm_id where f.code = 'QBF' and p.season = 2027")
    const { plans } = await planJson(db, ['--farm', 'QBF'])
    expect(plans[0].version).toBe(before.length + 1)
    const rows = query(db, 'select field_code, rate, limited_by, need_n, supplemental_n, total_manure, loads, detail from plan_fields where plan_id = ? order by field_code', plans[0].id)
    expect(rows.map((r) => r.field_code)).toEqual(plans[0].fields.map((f: any) => f.field))
    for (const r of rows) {
      const f = plans[0].fields.find((x: any) => x.field === r.field_code)
      expect(r).toMatchObject({ rate: f.rate, limited_by: f.limited_by, need_n: f.need.n, supplemental_n: f.supplemental.n, total_manure: f.total_manure, loads: f.loads.field })
      expect(JSON.parse(r.detail)).toEqual(f)
    }
    // plans.result is the plan JSON without its id
    const [stored] = query<{ result: string }>(db, 'select result from plans where id = ?', plans[0].id)
    const { id, ...withoutId } = plans[0]
    expect(id).toBeGreaterThan(0)
    expect(JSON.parse(stored!.result)).toEqual(withoutId)
    const after = query<{ id: number; result: string }>(db, `select id, result from plans where id in (${before.map((b) => b.id).join(',')})`)
    expect(after).toEqual(before.map(({ id: i, result }) => ({ id: i, result })))
  })

  it('writes each farm of a run whole or not at all: a farm whose write fails leaves nothing, the farms before it stay', async () => {
    const db = copyOfDemo()
    const farms = query<{ id: number; code: string }>(db, 'select id, code from farms order by code')
    expect(farms.length).toBeGreaterThan(2)
    const failing = farms[2]! // farms are planned in code order: two are written before it
    const count = (sql: string) => query<{ n: number }>(db, sql)[0]!.n
    const plansBefore = count('select count(*) as n from plans')
    const lastBefore = count('select max(id) as n from plans')
    const fieldsBefore = count('select count(*) as n from plan_fields')
    const s = new Database(db)
    // its second field's row fails: its plan row is in by then, and must go with it
    s.exec(`create trigger fail_farm before insert on plan_fields
      when (select farm_id from plans where id = new.plan_id) = ${failing.id}
       and (select count(*) from plan_fields where plan_id = new.plan_id) = 1
      begin select raise(abort, 'simulated write failure'); end;`)
    s.close()
    const r = await runCli(['--db', db, '-q', 'plan', '--all', '--season', '2027', '--as-of', '2026-11-15'])
    expect(r.exitCode).not.toBe(0)
    expect(r.stderr).toMatch(/simulated write failure/)
    expect(r.stderr).not.toMatch(/\bat .*\.(js|ts):\d+/)
    const planned = query<{ code: string }>(db, 'select f.code from plans p join farms f on f.id = p.farm_id where p.id > ? order by p.id', lastBefore)
    expect(planned.map((p) => p.code)).toEqual([farms[0]!.code, farms[1]!.code])
    expect(count('select count(*) as n from plans')).toBe(plansBefore + 2)
    // every stored plan has its field rows: nothing of the failing farm's plan stayed
    expect(count('select count(*) as n from plans p where not exists (select 1 from plan_fields f where f.plan_id = p.id)')).toBe(0)
    expect(count('select count(*) as n from plan_fields')).toBeGreaterThan(fieldsBefore)
  })

  it('plans on book values with a warning when a storage has no lab result', async () => {
    const db = tmp.path('book.db')
    await seedDatabaseFile(db, [
      {
        code: 'NEW',
        storages: [{ code: 'P1', kind: 'deep_pit', species: 'swine', form: 'liquid', currentAmount: 500000, capacityUnit: 'gal' }],
        fields: [{ code: 'F1', acres: 40, storage: 'P1', method: 'injected', seasons: [{ season: 2027, crop: 'corn_grain', yieldGoal: 180, previousCrop: 'corn' }] }],
      },
    ])
    const { plans } = await planJson(db, ['--farm', 'NEW'])
    const s = plans[0].storages[0]
    // Iowa State PMR 1003 (2016): swine finishing liquid 32–79 lb N, 17–54 P2O5, 23–48 K2O per 1000 gal (midpoints)
    expect(s).toMatchObject({ analysis_source: 'book', samples: 0, round: null })
    expect(s.analysis).toMatchObject({ total_n: 55.5, p2o5: 35.5, k2o: 35.5 })
    // no ammonium-N in the book values: 65 % of total N for slurry pits (Iowa State, Odor & Nutrient Management newsletter, 1998: 60–70 %)
    expect(s.analysis.ammonium_n).toBeCloseTo(55.5 * 0.65, 3)
    expect(s.warnings.map((w: any) => w.code)).toEqual(expect.arrayContaining(['book_values', 'ammonium_assumed']))
    expect(plans[0].fields[0].warnings.map((w: any) => w.code)).toContain('book_values')
    // storage balance: 500,000 gal in storage against the planned total
    expect(s.in_storage).toBe(500000)
    expect(s.surplus).toBeCloseTo(500000 - plans[0].fields[0].total_manure, -1)
  })

  it('takes book values written for the storage kind: a lagoon gets no slurry-pit values, a basin does', async () => {
    const db = tmp.path('book-kind.db')
    await seedDatabaseFile(db, [
      {
        code: 'LAG',
        storages: [
          { code: 'L1', kind: 'lagoon', species: 'dairy', form: 'liquid', currentAmount: 900000, capacityUnit: 'gal' },
          { code: 'B1', kind: 'earthen_basin', species: 'dairy', form: 'liquid', currentAmount: 400000, capacityUnit: 'gal' },
        ],
        fields: [
          { code: 'F1', acres: 30, storage: 'L1', method: 'injected', seasons: [{ season: 2027, crop: 'corn_grain', yieldGoal: 180, previousCrop: 'corn' }] },
          { code: 'F2', acres: 30, storage: 'B1', method: 'injected', seasons: [{ season: 2027, crop: 'corn_grain', yieldGoal: 180, previousCrop: 'corn' }] },
        ],
      },
    ])
    const { plans } = await planJson(db, ['--farm', 'LAG'])
    const byCode = new Map(plans[0].storages.map((s: any) => [s.storage, s]))
    // SARE, Building Soils for Better Crops (2010): dairy slurry 25 lb N, 9 P2O5, 20 K2O per 1000 gal, written for pits, tanks and basins
    expect(byCode.get('B1')).toMatchObject({ analysis_source: 'book', analysis: { total_n: 25, p2o5: 9, k2o: 20 } })
    // a lagoon's liquid is far more dilute: the set has no book values for it, so the plan asks for a sample instead of guessing
    const lagoon = byCode.get('L1') as any
    expect(lagoon.analysis).toBeNull()
    expect(lagoon.warnings.map((w: any) => w.code)).toContain('no_analysis')
    // its field is not planned, and the plan says why
    expect(plans[0].fields.map((f: any) => f.field)).toEqual(['F2'])
    expect(plans[0].skipped).toEqual([{ field: 'F1', reason: expect.stringMatching(/storage L1 has no analysis/) }])
  })

  it('writes CSV, refuses an unknown farm naming the known ones, and needs --season', async () => {
    const db = copyOfDemo()
    const csv = await runCli(['--db', db, 'plan', '--farm', 'QBF', '--season', '2027', '--as-of', '2026-11-15', '--csv'])
    expect(csv.exitCode).toBe(0)
    const records = parseCsv(String(csv.stdout)).records
    expect(records[0]!.slice(0, 8)).toEqual(['plan_id', 'farm', 'season', 'version', 'reference_set', 'basis', 'as_of', 'field'])
    const planned = query(db, "select count(*) as n from plan_fields where plan_id = (select max(id) from plans)")[0]!.n
    expect(records).toHaveLength(planned + 1)
    const unknown = await runCli(['--db', db, 'plan', '--farm', 'ZZZ', '--season', '2027'])
    expect(unknown.exitCode).toBe(66)
    expect(unknown.stderr).toMatch(/farm "ZZZ" not found \(known farms: FCD, LKP, QBF, RSF, TMF, WBD\)/)
    const noSeason = await runCli(['--db', db, 'plan', '--farm', 'QBF'])
    expect(noSeason.exitCode).toBe(64)
    const table = await runCli(['--db', db, 'plan', '--farm', 'QBF', '--season', '2027', '--as-of', '2026-11-15'])
    expect(table.stdout).toMatch(/QBF season 2027, version \d+/)
    expect(table.stdout).toMatch(/Never enter a manure storage/)
  })

  it('plans the demo client list through the Node API example as `pitside plan` does through the database', async () => {
    const db = copyOfDemo()
    const { plans } = await planJson(db, ['--all'])
    const out = tmp.path('client-list')
    const script = fileURLToPath(new URL('../../examples/scripts/plan-client-list.mjs', import.meta.url))
    const demoDir = fileURLToPath(new URL('../../examples/demo', import.meta.url))
    const r = await execa('node', [script, demoDir, '--season', '2027', '--as-of', '2026-11-15', '--out', out], { reject: false })
    expect(r.exitCode, String(r.stderr)).toBe(0)
    expect(readdirSync(out).sort()).toEqual(plans.map((p) => `${p.farm}.json`).sort())
    for (const p of plans) {
      const fromScript = JSON.parse(readFileSync(`${out}/${p.farm}.json`, 'utf8')).plan
      const numbers = (plan: any) => plan.fields.map((f: any) => [f.field, f.rate, f.limited_by, f.need, f.supplemental, f.total_manure, f.credits.manure_n])
      expect(numbers(fromScript)).toEqual(numbers(p))
      expect(fromScript.storages.map((s: any) => s.analysis)).toEqual(p.storages.map((s: any) => s.analysis))
    }
  })
})
