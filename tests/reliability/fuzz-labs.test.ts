// Fuzzing the lab-file reader: fast-check (property-based, shrinking failures to a small case) over
// mutations of real files, structured random tables and raw random bytes. Every case must end in
// rows without errors or in coded problems that name a line; never a throw or a hang. A sample of
// mutated files also goes through `pitside labs import`. Anchors: SQLite's fuzz testing
// (sqlite.org/testing.html §4.1, "SQL fuzz"; every case must end in a result or a clean error),
// OWASP ASVS 5.0 V2.2 input validation, OWASP Fuzzing project.
import fc from 'fast-check'
import { readFileSync, readdirSync, writeFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { decodeText } from '../../shared/decode-text.ts'
import type { Problem } from '../../shared/errors.ts'
import { parseLabCsv } from '../../shared/lab-csv.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { checkFile } from './helpers/dump.ts'
import { makeFarmDatabase } from './helpers/lab-db.ts'
import { scaled, scaledTimeout } from './helpers/stress.ts'

const root = fileURLToPath(new URL('../../', import.meta.url))
const seeds: Buffer[] = [
  ...readdirSync(`${root}tests/fixtures/wild`).filter((f) => f.endsWith('.csv')).map((f) => readFileSync(`${root}tests/fixtures/wild/${f}`)),
  ...readdirSync(`${root}examples/demo/labs`).slice(0, 6).map((f) => readFileSync(`${root}examples/demo/labs/${f}`)),
  ...readdirSync(`${root}tests/fixtures/labs`).filter((f) => f.endsWith('.csv')).map((f) => readFileSync(`${root}tests/fixtures/labs/${f}`)),
]

const nasty = ['"', ',', ';', '\t', '\r', '\n', '\r\n', '\u0000', '\ufeff', '<', '>', '#', '-', '.', '=', '+', '@', ' ', '\u00e9', '\u2028', '\ud83d\udca9', '0', '9', 'e', 'E', 'x']
const nastyCells = ['#VALUE!', '#REF!', '-1', '-0', '1e309', '1e-320', 'NaN', 'Infinity', '1,234', '1.234,5', '0x10', '', '   ', '""', '"', '<', '<0', '< 0.1', '>9999', '9'.repeat(400), '2025-02-29', '2024-02-29', '45390', '99999', '12/31/1899', '=1+1', '@SUM(A1)', 'dry', 'as is', 'lb/ton', 'kg/m³', 'liquid', 'QBF', 'P1', '\u0000']

interface Mutation {
  kind: 'flip' | 'insert' | 'delete' | 'dupLine' | 'swapLines' | 'truncate' | 'cell'
  at: number
  len: number
  pick: number
}
const mutation: fc.Arbitrary<Mutation> = fc.record({
  kind: fc.constantFrom('flip', 'insert', 'delete', 'dupLine', 'swapLines', 'truncate', 'cell'),
  at: fc.nat(),
  len: fc.integer({ min: 1, max: 40 }),
  pick: fc.nat(),
})

function mutate(input: Buffer, muts: Mutation[]): Buffer {
  let b = Buffer.from(input)
  for (const m of muts) {
    const at = b.length ? m.at % b.length : 0
    switch (m.kind) {
      case 'flip':
        if (b.length) b[at] = b[at]! ^ (1 << m.pick % 8)
        break
      case 'insert':
        b = Buffer.concat([b.subarray(0, at), Buffer.from(nasty[m.pick % nasty.length]!.repeat(1 + (m.len % 3))), b.subarray(at)])
        break
      case 'delete':
        b = Buffer.concat([b.subarray(0, at), b.subarray(at + m.len)])
        break
      case 'truncate':
        b = b.subarray(0, at)
        break
      case 'dupLine':
      case 'swapLines': {
        const lines = b.toString('latin1').split('\n')
        const i = m.at % lines.length
        const j = m.pick % lines.length
        if (m.kind === 'dupLine') lines.splice(i, 0, lines[i]!)
        else [lines[i], lines[j]] = [lines[j]!, lines[i]!]
        b = Buffer.from(lines.join('\n'), 'latin1')
        break
      }
      case 'cell': {
        const text = b.toString('utf8')
        const cells = text.split(',')
        if (cells.length > 1) cells[m.at % cells.length] = nastyCells[m.pick % nastyCells.length]!
        b = Buffer.from(cells.join(','), 'utf8')
        break
      }
    }
  }
  return b
}

const mutatedFile = fc.tuple(fc.nat({ max: seeds.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 6 })).map(([i, muts]) => mutate(seeds[i]!, muts))

const header = ['report_id', 'sample_id', 'sampled_on', 'farm', 'storage', 'form', 'species', 'basis', 'units', 'dry_matter_pct', 'moisture_pct', 'total_n', 'ammonium_n', 'p2o5', 'p', 'k2o', 'k', 'sulfur', 'ph', 'lab', 'notes', 'Total N (lb/1000 gal)', 'NH4-N', 'TKN', 'unknown']
const cellText = fc.oneof(fc.constantFrom(...nastyCells), fc.double({ noNaN: false }).map(String), fc.string({ maxLength: 12 }), fc.constantFrom('CRA-26-0001', 'S1', '2026-03-01', 'QBF', 'P1', 'liquid', 'swine', 'as_is', 'lb/1000 gal', '5.8', '52', '36', '30', '27'))
const structuredTable = fc
  .record({
    cols: fc.uniqueArray(fc.constantFrom(...header), { minLength: 1, maxLength: 16 }),
    rows: fc.array(fc.array(cellText, { minLength: 0, maxLength: 18 }), { maxLength: 12 }),
    sep: fc.constantFrom(',', ';', '\t'),
    eol: fc.constantFrom('\n', '\r\n', '\r'),
    bom: fc.boolean(),
    quote: fc.boolean(),
  })
  .map(({ cols, rows, sep, eol, bom, quote }) => {
    const q = (c: string) => (quote || /[",;\t\r\n]/.test(c) ? `"${c.replaceAll('"', '""')}"` : c)
    const text = [cols.map(q).join(sep), ...rows.map((r) => r.map(q).join(sep))].join(eol)
    return Buffer.from((bom ? '\ufeff' : '') + text, 'utf8')
  })
const randomBytes = fc.uint8Array({ maxLength: 600 }).map((a) => Buffer.from(a))
const randomText = fc.string({ unit: fc.constantFrom(...nasty, 'a', 'b', '1', '2'), maxLength: 400 }).map((s) => Buffer.from(s, 'utf8'))

function lineCount(b: Buffer): number {
  let n = 1
  for (let i = 0; i < b.length; i++) if (b[i] === 10 || (b[i] === 13 && b[i + 1] !== 10)) n++
  return n
}

/** The property: a clean read or coded problems with lines inside the file, and never a throw. */
function endsCleanly(bytes: Buffer): void {
  const decoded = decodeText(bytes)
  let problems: Problem[]
  let rows: { line: number }[] = []
  if (decoded.problem) problems = [decoded.problem]
  else ({ problems, rows } = parseLabCsv(decoded.text, { file: 'fuzz.csv', today: '2026-11-15' }))
  const errors = problems.filter((p) => p.severity !== 'warning')
  const lines = lineCount(bytes)
  for (const p of [...problems]) {
    if (typeof p.code !== 'string' || p.code === '' || typeof p.message !== 'string' || p.message === '') throw new Error(`uncoded problem ${JSON.stringify(p)}`)
    if (!Number.isInteger(p.line) || p.line! < 1 || p.line! > lines) throw new Error(`problem without a line in the file (${lines} lines): ${JSON.stringify(p)}`)
  }
  for (const r of rows) if (!Number.isInteger(r.line) || r.line < 2 || r.line > lines) throw new Error(`row with line ${r.line} outside 2..${lines}`)
  if (errors.length === 0 && rows.length === 0) throw new Error('no rows and no error: neither a clean import nor a refusal')
}

const counts = { mutations: scaled(12_000), structured: scaled(5_000), bytes: scaled(1_500), text: scaled(1_500) }
const total = Object.values(counts).reduce((a, b) => a + b, 0)
let slowestMs = 0
const timed = (bytes: Buffer) => {
  const started = performance.now()
  endsCleanly(bytes)
  slowestMs = Math.max(slowestMs, performance.now() - started)
}

let tmp: TempDir
beforeAll(() => {
  tmp = makeTempDir('pitside-fuzz-')
})
afterAll(() => tmp?.cleanup())

describe(`fuzzing the lab reader (${total} cases)`, () => {
  it(`ends every mutated real file cleanly (${counts.mutations} cases)`, () => {
    fc.assert(fc.property(mutatedFile, timed), { numRuns: counts.mutations })
  }, scaledTimeout(120_000))

  it(`ends every structured random table cleanly (${counts.structured} cases)`, () => {
    fc.assert(fc.property(structuredTable, timed), { numRuns: counts.structured })
  }, scaledTimeout(120_000))

  it(`ends random bytes and random CSV-ish text cleanly (${counts.bytes + counts.text} cases)`, () => {
    fc.assert(fc.property(randomBytes, timed), { numRuns: counts.bytes })
    fc.assert(fc.property(randomText, timed), { numRuns: counts.text })
    // a hang detector, not a speed target: no single case may take seconds
    expect(slowestMs).toBeLessThan(5000)
  }, scaledTimeout(120_000))

  it('ends a sample of mutated files in a clean import or a refusal with file:line through the CLI', async () => {
    const db = tmp.path('fuzz.db')
    await makeFarmDatabase(db)
    const sample = fc.sample(mutatedFile, { numRuns: scaled(40), seed: Date.now() % 2 ** 31 })
    const files = sample.map((bytes, i) => {
      const path = tmp.path(`fuzz-${i}.csv`)
      writeFileSync(path, bytes)
      return path
    })
    const r = await runCli(['--db', db, '--json', 'labs', 'import', ...files])
    expect([0, 65]).toContain(r.exitCode)
    expect(String(r.stderr)).not.toMatch(/this is a bug|\bat .*\.(js|ts):\d+/)
    const out = JSON.parse(String(r.stdout)) as { files: { file: string; outcome: string; reason: string | null; problems: { line: number | null; code: string }[] }[] }
    for (const f of out.files) {
      expect(['imported', 'unchanged', 'refused', 'replaced']).toContain(f.outcome)
      if (f.outcome === 'refused') {
        expect(f.problems.length, f.file).toBeGreaterThan(0)
        for (const p of f.problems) expect(p.line, `${f.file}: ${p.code}`).toBeGreaterThanOrEqual(1)
        expect(String(r.stderr)).toContain(`${f.file}:${f.problems[0]!.line}: `)
      }
    }
    expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
    process.stdout.write(`fuzz: ${JSON.stringify({ cases: total, cli_files: files.length, imported: out.files.filter((f) => f.outcome === 'imported').length, refused: out.files.filter((f) => f.outcome === 'refused').length, slowest_case_ms: Math.round(slowestMs) })}\n`)
  }, scaledTimeout(120_000))
})
