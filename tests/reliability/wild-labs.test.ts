// Real-world-shaped lab files must import and match their golden results (tests/fixtures/wild/
// *.golden.json): the rows as the file means them and, where the conversion can be checked by
// hand, the as-is values stored. Each golden file names the convention it exercises and its source
// (RFC 4180, ISO 80000-1 decimal signs, the 1900 spreadsheet date system, LPELC conversions).
import SQLite from 'better-sqlite3'
import { elementsObject } from 'chemical-elements'
import { readFileSync, readdirSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { decodeText } from '../../shared/decode-text.ts'
import { parseLabCsv, type LabRow } from '../../shared/lab-csv.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { checkFile } from './helpers/dump.ts'
import { makeFarmDatabase } from './helpers/lab-db.ts'

interface GoldenRow {
  line: number
  reportId: string
  sampleId: string
  sampledOn: string
  farm: string
  storage: string
  form: string | null
  species: string | null
  basis: string
  units: string
  dryMatterPct: number | null
  totalN: number
  ammoniumN: number | null
  p2o5: number | null
  p: number | null
  k2o: number | null
  k: number | null
  sulfur: number | null
  ph: number | null
  lab: string | null
  notes: string | null
  qualifiers: Record<string, string> | null
  stored: { per_unit: string; dry_matter_pct: number | null; total_n: number; ammonium_n: number | null; p2o5: number | null; k2o: number | null } | null
}
interface Golden {
  file: string
  what: string
  source: string
  rows: GoldenRow[]
}

const dir = fileURLToPath(new URL('../fixtures/wild/', import.meta.url))
const goldens = readdirSync(dir)
  .filter((f) => f.endsWith('.golden.json'))
  .map((f) => JSON.parse(readFileSync(`${dir}${f}`, 'utf8')) as Golden)

function asGolden(r: LabRow) {
  return {
    line: r.line, reportId: r.reportId, sampleId: r.sampleId, sampledOn: r.sampledOn, farm: r.farm, storage: r.storage,
    form: r.form, species: r.species, basis: r.basis, units: r.units, dryMatterPct: r.dryMatterPct, totalN: r.totalN,
    ammoniumN: r.ammoniumN, p2o5: r.p2o5, p: r.p, k2o: r.k2o, k: r.k, sulfur: r.sulfur, ph: r.ph, lab: r.lab, notes: r.notes,
    qualifiers: r.qualifiers === null ? null : (JSON.parse(r.qualifiers) as Record<string, string>),
  }
}

let tmp: TempDir
beforeAll(() => {
  tmp = makeTempDir('pitside-wild-')
})
afterAll(() => tmp?.cleanup())

describe('real-world-shaped lab files', () => {
  it('are at least 20, each with a golden result', () => {
    expect(goldens.length).toBeGreaterThanOrEqual(20)
    const csvs = readdirSync(dir).filter((f) => !f.endsWith('.golden.json'))
    expect(csvs.sort()).toEqual(goldens.map((g) => g.file).sort())
  })

  for (const g of goldens) {
    it(`reads ${g.file} (${g.what}) exactly as its golden result says`, () => {
      const decoded = decodeText(readFileSync(`${dir}${g.file}`))
      expect(decoded.problem).toBeUndefined()
      const { rows, problems } = parseLabCsv(decoded.text!, { file: g.file, today: '2026-11-15' })
      expect(problems.filter((p) => p.severity !== 'warning')).toEqual([])
      expect(rows.map(asGolden)).toEqual(g.rows.map(({ stored: _, ...r }) => r))
    })
  }

  it('imports every one through `pitside labs import` and stores the golden as-is values', async () => {
    const db = tmp.path('wild.db')
    await makeFarmDatabase(db)
    const r = await runCli(['--db', db, '--json', 'labs', 'import', ...goldens.map((g) => `${dir}${g.file}`)])
    expect(r.exitCode, String(r.stderr)).toBe(0)
    const out = JSON.parse(String(r.stdout)) as { files: { file: string; outcome: string; new: number }[] }
    expect(out.files.map((f) => [f.outcome, f.new])).toEqual(goldens.map((g) => ['imported', g.rows.length]))

    const s = new SQLite(db, { readonly: true })
    const stored = s.prepare(
      `select r.*, k.form, k.species, k.basis, k.units, k.per_unit, p.report_number, st.code as storage_code, f.code as farm_code from lab_results r
         join lab_reports p on p.id = r.lab_report_id join lab_result_kinds k on k.id = r.kind_id
         join storages st on st.id = r.storage_id join farms f on f.id = st.farm_id
        where p.report_number = ? and r.sample_code = ?`,
    )
    const mismatches: string[] = []
    // M(P2O5)/2M(P) and M(K2O)/2M(K) from chemical-elements' atomic masses (IUPAC)
    const { P, K, O } = { P: elementsObject.P!.mass!, K: elementsObject.K!.mass!, O: elementsObject.O!.mass! }
    for (const g of goldens) {
      for (const row of g.rows) {
        const got = stored.get(row.reportId, row.sampleId) as Record<string, any> | undefined
        if (!got) {
          mismatches.push(`${g.file}: ${row.sampleId} not stored`)
          continue
        }
        expect(got.farm_code.toLowerCase()).toBe(row.farm.toLowerCase())
        expect(got.storage_code.toLowerCase()).toBe(row.storage.toLowerCase())
        expect(got.sampled_on).toBe(row.sampledOn)
        expect(got.line).toBe(row.line)
        expect(got.qualifiers === null ? null : JSON.parse(got.qualifiers)).toEqual(row.qualifiers)
        const want = row.stored ?? (row.p !== null ? { per_unit: '1000gal', dry_matter_pct: row.dryMatterPct, total_n: row.totalN, ammonium_n: row.ammoniumN, p2o5: (row.p * (2 * P + 5 * O)) / (2 * P), k2o: (row.k! * (2 * K + O)) / (2 * K) } : null)
        if (!want) continue
        for (const [k, v] of Object.entries(want)) {
          const close = typeof v === 'number' ? Math.abs(got[k] - v) <= 1e-3 * Math.max(1, Math.abs(v)) : got[k] === v
          if (!close) mismatches.push(`${g.file}: ${row.sampleId} ${k}: expected ${v}, stored ${got[k]}`)
        }
      }
    }
    s.close()
    expect(mismatches).toEqual([])
    expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
  }, 60_000)
})
