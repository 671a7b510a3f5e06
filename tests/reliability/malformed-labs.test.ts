// A corpus of malformed lab files, each refused with file:line and a reason, no stack trace and
// nothing written. Anchors: RFC 4180 (CSV structure), the Unicode Standard §3.9 / RFC 3629 (UTF-8
// well-formedness), OWASP ASVS 5.0 V2.2 "Input Validation" and V16.5 "Error Handling" (errors
// without internals), SQLite's "all-or-nothing" transactions (sqlite.org/atomiccommit.html).
import { readFileSync, readdirSync, writeFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { decodeText } from '../../shared/decode-text.ts'
import type { Problem } from '../../shared/errors.ts'
import { parseLabCsv } from '../../shared/lab-csv.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { dumpDatabase } from './helpers/dump.ts'
import { makeFarmDatabase } from './helpers/lab-db.ts'

interface Expected {
  code: string
  line: number
  column?: string
  message?: string
  what: string
  databaseCheck?: boolean
  generated?: { rows: number; lastRow: Record<string, string> }
}
const dir = fileURLToPath(new URL('../fixtures/malformed/', import.meta.url))
const corpus = JSON.parse(readFileSync(`${dir}expected.json`, 'utf8')).files as Record<string, Expected>

let tmp: TempDir
beforeAll(() => {
  tmp = makeTempDir('pitside-malformed-')
})
afterAll(() => tmp?.cleanup())

/** The huge file is written by the test (too big to store): valid rows, then one bad last row. */
function huge(e: Expected): Buffer {
  const header = 'report_id,sample_id,sampled_on,farm,storage,form,species,basis,units,dry_matter_pct,total_n,ammonium_n,p2o5,k2o,lab,notes\n'
  const parts = [header]
  for (let i = 1; i <= e.generated!.rows; i++) {
    const totalN = i === e.generated!.rows ? e.generated!.lastRow.total_n : String(40 + (i % 200) / 10)
    parts.push(`CRA-26-${String(1000 + Math.floor(i / 1000)).padStart(4, '0')},QBF-P1-H${i},2026-0${1 + (i % 9)}-1${i % 10},QBF,P1,liquid,swine,as_is,lb/1000 gal,5.8,${totalN},30.1,28.2,25.5,Cobble Run Analytical,bulk row ${i}\n`)
  }
  return Buffer.from(parts.join(''))
}

function bytesOf(name: string): Buffer {
  const e = corpus[name]!
  return e.generated ? huge(e) : readFileSync(`${dir}${name}`)
}

/** The first error of a file as the parser reports it (decoding first, then CSV and cells). */
function firstError(bytes: Buffer, name: string): Problem | undefined {
  const decoded = decodeText(bytes)
  if (decoded.problem) return decoded.problem
  const { problems } = parseLabCsv(decoded.text, { file: name, today: '2026-11-15' })
  return problems.filter((p) => p.severity !== 'warning').sort((a, b) => (a.line ?? 0) - (b.line ?? 0))[0]
}

describe('malformed lab files', () => {
  it('are at least 30, every stored one has its expected refusal and vice versa', () => {
    const stored = readdirSync(dir).filter((f) => f !== 'expected.json')
    expect(Object.keys(corpus).length).toBeGreaterThanOrEqual(30)
    expect(stored.sort()).toEqual(Object.keys(corpus).filter((n) => !corpus[n]!.generated).sort())
  })

  for (const [name, e] of Object.entries(corpus).filter(([, e]) => !e.databaseCheck)) {
    it(`refuses ${name} (${e.what}) in the parser with ${e.code} on line ${e.line}`, () => {
      const p = firstError(bytesOf(name), name)
      expect(p, 'no problem found').toBeDefined()
      expect({ code: p!.code, line: p!.line }).toEqual({ code: e.code, line: e.line })
      if (e.column) expect(p!.column).toBe(e.column)
      if (e.message) expect(p!.message).toContain(e.message)
    })
  }

  it('refuses every one through `pitside labs import` with file:line and a reason, no stack trace, and writes nothing', async () => {
    const db = tmp.path('labs.db')
    await makeFarmDatabase(db)
    const before = dumpDatabase(db)
    const paths = Object.keys(corpus).map((name) => {
      if (!corpus[name]!.generated) return `${dir}${name}`
      const path = tmp.path(name)
      writeFileSync(path, bytesOf(name))
      return path
    })
    const r = await runCli(['--db', db, '--json', 'labs', 'import', ...paths])
    expect(r.exitCode).toBe(65)
    const stderr = String(r.stderr)
    expect(stderr).not.toMatch(/\bat .*\.(js|ts):\d+|this is a bug|SqliteError/)
    const out = JSON.parse(String(r.stdout)) as { files: { file: string; outcome: string; problems: { line: number | null; code: string; column: string | null; message: string }[] }[] }
    expect(out.files).toHaveLength(paths.length)
    const wrong: string[] = []
    out.files.forEach((f, i) => {
      const name = Object.keys(corpus)[i]!
      const e = corpus[name]!
      if (f.outcome !== 'refused') wrong.push(`${name}: ${f.outcome}`)
      const match = f.problems.find((p) => p.code === e.code && p.line === e.line)
      if (!match) wrong.push(`${name}: expected ${e.code} on line ${e.line}, got ${JSON.stringify(f.problems.slice(0, 2))}`)
      else if (!stderr.includes(`${paths[i]}:${e.line}: `)) wrong.push(`${name}: stderr does not name ${paths[i]}:${e.line}`)
    })
    expect(wrong).toEqual([])
    expect(dumpDatabase(db)).toBe(before)
  }, 120_000)
})
