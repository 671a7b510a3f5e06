import Database from 'better-sqlite3'
import { copyFileSync, writeFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { runCli } from '../helpers/cli.ts'
import { labTestFarms, seedDatabaseFile } from '../helpers/plan-seed.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'

// Spawns the built binary: run `npm run build:node` first.
const fixture = (name: string) => fileURLToPath(new URL(`../fixtures/labs/${name}`, import.meta.url))

let tmp: TempDir
let template: string
let n = 0
beforeAll(async () => {
  tmp = makeTempDir('pitside-labs-')
  template = tmp.path('template.db')
  await seedDatabaseFile(template, labTestFarms)
})
afterAll(() => tmp?.cleanup())

/** A fresh copy of the seeded database (QBF with pits P1, P2; LKP with stack S1). */
function freshDb(): string {
  const file = tmp.path(`t${++n}.db`)
  copyFileSync(template, file)
  return file
}

function query<T = Record<string, unknown>>(db: string, sql: string, ...params: unknown[]): T[] {
  const sqlite = new Database(db, { readonly: true })
  try {
    return sqlite.prepare(sql).all(...params) as T[]
  } finally {
    sqlite.close()
  }
}

const labHeader = 'report_id,sample_id,sampled_on,farm,storage,form,species,basis,units,dry_matter_pct,total_n,ammonium_n,p2o5,k2o,lab'

describe('pitside labs import', () => {
  it('imports a batch of 50 files with one summary, and a second run of the same files is a no-op', async () => {
    const db = freshDb()
    const files: string[] = []
    for (let i = 1; i <= 50; i++) {
      const id = String(i).padStart(3, '0')
      const file = tmp.path(`batch-${id}.csv`)
      writeFileSync(
        file,
        `${labHeader}\nCRA-25-1${id},QBF-P1-B${id},2025-05-${String((i % 28) + 1).padStart(2, '0')},QBF,P1,liquid,swine,as_is,lb_per_1000gal,5.${i % 10},${45 + (i % 7)},${30 + (i % 5)},25.5,30.2,Cobble Run Analytical\n` +
          `CRA-25-1${id},LKP-S1-B${id},2025-05-${String((i % 28) + 1).padStart(2, '0')},LKP,S1,solid,poultry,as_is,lb_per_ton,71,${55 + (i % 9)},12.5,58,49,Cobble Run Analytical\n`,
      )
      files.push(file)
    }
    const first = await runCli(['--db', db, 'labs', 'import', ...files])
    expect(first.exitCode).toBe(0)
    const tables = String(first.stdout).match(/┌/g) ?? []
    expect(tables).toHaveLength(1) // one summary table, not one per file
    expect(first.stdout).toMatch(/total \(50 files\)\s*│\s*100\s*│\s*100\s*│\s*0\s*│/)
    expect(query(db, 'select count(*) as n from lab_results')).toEqual([{ n: 100 }])
    expect(query(db, "select count(*) as n from import_runs where kind = 'labs'")).toEqual([{ n: 50 }])

    const again = await runCli(['--db', db, '--json', 'labs', 'import', ...files])
    expect(again.exitCode).toBe(0)
    const json = JSON.parse(String(again.stdout))
    expect(json.totals).toMatchObject({ files: 50, new: 0, unchanged: 100, refused: 0 })
    expect(json.files.every((f: { outcome: string }) => f.outcome === 'unchanged')).toBe(true)
    expect(json.files[0].reason).toMatch(/same file \(sha256 [0-9a-f]{12}…\) was imported/)
    expect(query(db, 'select count(*) as n from lab_results')).toEqual([{ n: 100 }])
    expect(query(db, "select count(*) as n from import_runs where kind = 'labs'")).toEqual([{ n: 50 }])
  })

  it('refuses a file with one bad row, names its line and writes nothing of it', async () => {
    const db = freshDb()
    const r = await runCli(['--db', db, 'labs', 'import', fixture('one-bad-row.csv')])
    expect(r.exitCode).toBe(65)
    expect(r.stderr).toContain('one-bad-row.csv:3: ammonium_n: 52 is larger than total_n 41 (ammonium-N is part of total N)')
    expect(r.stderr).toMatch(/refused, nothing was written/)
    expect(r.stderr).not.toMatch(/\bat .*\.js:\d+/)
    expect(query(db, 'select (select count(*) from lab_results) as results, (select count(*) from lab_reports) as reports, (select count(*) from import_runs) as runs')).toEqual([
      { results: 0, reports: 0, runs: 0 },
    ])
  })

  it('imports a spreadsheet export with BOM, CRLF, semicolons, decimal commas, a quoted newline and trailing empty rows', async () => {
    const db = freshDb()
    const r = await runCli(['--db', db, '--json', 'labs', 'import', fixture('spreadsheet-export-semicolon.csv')])
    expect(r.exitCode).toBe(0)
    expect(JSON.parse(String(r.stdout)).totals).toMatchObject({ rows: 2, new: 2, refused: 0 })
    const rows = query(db, 'select sample_code, sampled_on, dry_matter_pct, total_n, ammonium_n, organic_n, p2o5, k2o, notes from lab_results order by sample_code')
    expect(rows).toEqual([
      { sample_code: 'QBF-P1-250310-A', sampled_on: '2025-03-10', dry_matter_pct: 5.6, total_n: 51.3, ammonium_n: 35.8, organic_n: expect.closeTo(15.5, 9), p2o5: 27.9, k2o: 32.4, notes: 'agitated 2 h;\r\nsampled at pump-out' },
      { sample_code: 'QBF-P2-250310-A', sampled_on: '2025-03-10', dry_matter_pct: 4.9, total_n: 47, ammonium_n: 32.1, organic_n: expect.closeTo(14.9, 9), p2o5: 25.5, k2o: 30, notes: null },
    ])
  })

  it('keeps a below-detection "<0.1" as a qualifier with the raw text, stores the limit and warns', async () => {
    const db = freshDb()
    const r = await runCli(['--db', db, 'labs', 'import', fixture('below-detection.csv')])
    expect(r.exitCode).toBe(0)
    expect(r.stderr).toContain("below-detection.csv:2: ammonium_n: <0.1 is below the lab's detection limit: stored as 0.1, an upper bound")
    const [row] = query<{ ammonium_n: number; qualifiers: string; reported: string; warnings: string }>(db, 'select ammonium_n, qualifiers, reported, warnings from lab_results')
    expect(row!.ammonium_n).toBe(0.1)
    expect(JSON.parse(row!.qualifiers)).toEqual({ ammonium_n: '<' })
    expect(JSON.parse(row!.reported)).toMatchObject({ ammonium_n: '<0.1', total_n: '55.0' })
    expect(JSON.parse(row!.warnings)).toEqual([expect.stringMatching(/^ammonium_n: <0\.1 is below the lab's detection limit/)])
  })

  it('leaves a corrected report alone without --replace and supersedes it with --replace, keeping the history', async () => {
    const db = freshDb()
    expect((await runCli(['--db', db, 'labs', 'import', fixture('replace-v1.csv')])).exitCode).toBe(0)
    const kept = await runCli(['--db', db, '--json', 'labs', 'import', fixture('replace-v2-corrected.csv')])
    expect(kept.exitCode).toBe(0)
    const keptJson = JSON.parse(String(kept.stdout))
    expect(keptJson.totals).toMatchObject({ new: 0, unchanged: 2, replaced: 0 })
    expect(keptJson.files[0].warning_list[0]).toMatchObject({ line: 2, column: 'sample_id', message: expect.stringMatching(/use --replace/) })

    const replaced = await runCli(['--db', db, '--json', 'labs', 'import', '--replace', fixture('replace-v2-corrected.csv')])
    expect(replaced.exitCode).toBe(0)
    expect(JSON.parse(String(replaced.stdout)).totals).toMatchObject({ new: 0, unchanged: 1, replaced: 1 })
    const rows = query<{ id: number; total_n: number; superseded_by: number | null }>(
      db,
      "select id, total_n, superseded_by from lab_results where sample_code = 'QBF-P1-250901-A' order by id",
    )
    expect(rows).toHaveLength(2)
    expect(rows[0]).toMatchObject({ total_n: 47.5, superseded_by: rows[1]!.id })
    expect(rows[1]).toMatchObject({ total_n: 49.5, superseded_by: null })
    expect(query(db, "select outcome from import_runs order by id")).toEqual([{ outcome: 'imported' }, { outcome: 'replaced' }])
  })

  it('names the known farms and storages when a code is unknown', async () => {
    const db = freshDb()
    const r = await runCli(['--db', db, 'labs', 'import', fixture('unknown-codes.csv')])
    expect(r.exitCode).toBe(65)
    expect(r.stderr).toContain('unknown-codes.csv:2: farm: farm "ZZZ" is not known (known farms: LKP, QBF)')
    expect(r.stderr).toContain('unknown-codes.csv:3: storage: storage "P9" is not a storage of farm QBF (its storages: P1, P2)')
  })

  it('reads units and basis from the headers, elemental P and K, and moisture as 100 − dry matter', async () => {
    const db = freshDb()
    const r = await runCli(['--db', db, 'labs', 'import', fixture('header-units-moisture.csv')])
    expect(r.exitCode).toBe(0)
    const [row] = query<Record<string, number | string>>(db, 'select k.units, k.basis, dry_matter_pct, total_n, p2o5, k2o, sampled_on from lab_results r join lab_result_kinds k on k.id = r.kind_id')
    // P2O5 = P × 2.2914 and K2O = K × 1.2046 (Virginia Tech SPES-201NP, Table 1; atomic masses)
    expect(row).toMatchObject({ units: 'lb_per_ton', basis: 'as_is', dry_matter_pct: 71.5, total_n: 60.2, sampled_on: '2025-08-15' })
    expect(row!.p2o5).toBeCloseTo(26.2 * 2.2914, 2)
    expect(row!.k2o).toBeCloseTo(40.1 * 1.2046, 2)
  })

  it('maps another lab layout through a --profile and refuses a profile with a mistake, naming the key', async () => {
    const db = freshDb()
    const ok = await runCli(['--db', db, '--json', 'labs', 'import', '--profile', fixture('other-lab-profile.json'), fixture('other-lab-layout.csv')])
    expect(ok.exitCode).toBe(0)
    expect(query(db, 'select p.report_number, p.lab, r.total_n, r.ammonium_n, r.p2o5, r.line from lab_results r join lab_reports p on p.id = r.lab_report_id')).toEqual([
      { report_number: 'TVL-0917', lab: 'Tamarack Valley Lab', total_n: 49.8, ammonium_n: 34.1, p2o5: 26, line: 4 },
    ])
    const badProfile = tmp.path('bad-profile.json')
    writeFileSync(badProfile, JSON.stringify({ columns: { 'Lab No.': 'report_number' }, delimiter: '|' }))
    const bad = await runCli(['--db', db, 'labs', 'import', '--profile', badProfile, fixture('other-lab-layout.csv')])
    expect(bad.exitCode).toBe(65)
    expect(bad.stderr).toMatch(/bad-profile\.json: columns\.Lab No\.: expected one of report_id, /)
    expect(bad.stderr).toMatch(/bad-profile\.json: delimiter: /)
  })

  it('warns about values outside the book range and far from the storage history, and stores the warnings', async () => {
    const db = freshDb()
    const history = tmp.path('history.csv')
    writeFileSync(
      history,
      `${labHeader}\n` +
        ['01', '08', '15'].map((d) => `CRA-25-0700,QBF-P1-H${d},2025-01-${d},QBF,P1,liquid,swine,as_is,lb_per_1000gal,5,50,34,26,31,Cobble Run Analytical`).join('\n') +
        '\n',
    )
    expect((await runCli(['--db', db, 'labs', 'import', history])).exitCode).toBe(0)
    const odd = tmp.path('odd.csv')
    writeFileSync(odd, `${labHeader}\nCRA-25-0701,QBF-P1-H22,2025-01-22,QBF,P1,liquid,swine,as_is,lb_per_1000gal,5,120,34,26,31,Cobble Run Analytical\n`)
    const r = await runCli(['--db', db, '--json', 'labs', 'import', odd])
    expect(r.exitCode).toBe(0)
    const file = JSON.parse(String(r.stdout)).files[0]
    expect(file.warnings).toBe(2)
    // Iowa State PMR 1003 (via the default reference set): swine finishing liquid 32–79 lb N/1000 gal
    expect(file.warning_list.map((w: { message: string }) => w.message)).toEqual([
      expect.stringMatching(/^120 lb\/1000 gal is outside the book range 32–79 lb\/1000 gal for swine liquid manure/),
      expect.stringMatching(/^120 lb\/1000 gal is more than a factor of 2 from this storage's mean of 50 \(3 earlier results\)/),
    ])
    const [row] = query<{ warnings: string }>(db, "select warnings from lab_results where sample_code = 'QBF-P1-H22'")
    expect(JSON.parse(row!.warnings)).toHaveLength(2)
  })

  it('reads standard input given as -, and tells a missing database apart from bad input', async () => {
    const db = freshDb()
    const csv = `${labHeader}\nCRA-25-0800,QBF-P2-S1,2025-02-02,QBF,P2,liquid,swine,as_is,lb_per_1000gal,5,50,34,26,31,Cobble Run Analytical\n`
    const r = await runCli(['--db', db, '--json', 'labs', 'import', '-'], { input: csv })
    expect(r.exitCode).toBe(0)
    expect(JSON.parse(String(r.stdout)).files[0]).toMatchObject({ file: 'stdin', outcome: 'imported', new: 1 })
    const missing = await runCli(['--db', tmp.path('nope.db'), 'labs', 'import', '-'], { input: csv })
    expect(missing.exitCode).toBe(69)
    expect(missing.stderr).toMatch(/does not exist: run `pitside --db .* init` first/)
  })
})
