// The lab import's writer thread (shared/db/lab-writer.ts): the results it stores are the ones the
// import's own thread stores, row for row; a big file into a small table has its indexes built
// again after the rows, inside the file's transaction, so a failure at the last row leaves the
// database as it was, indexes included (SQLite's atomic commit: sqlite.org/atomiccommit.html).
import SQLite from 'better-sqlite3'
import { copyFileSync, readFileSync, statSync, writeFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { rebuildsIndexes } from '../../shared/db/lab-write.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { checkFile, dumpDatabase } from './helpers/dump.ts'
import { makeFarmDatabase } from './helpers/lab-db.ts'
import { writeLabFile } from './helpers/lab-files.ts'

let tmp: TempDir
let template: string
let big: string
const bigRows = 36_000 // about 5 MB: more than rebuildsIndexes' threshold
beforeAll(async () => {
  tmp = makeTempDir('pitside-lab-writer-')
  template = tmp.path('template.db')
  await makeFarmDatabase(template)
  big = tmp.path('big.csv')
  writeLabFile(big, 'CRA-26-BIG', bigRows)
}, 60_000)
afterAll(() => tmp?.cleanup())

/** Everything an import stores, without the clock's timestamps. */
function stored(db: string) {
  const s = new SQLite(db, { readonly: true })
  try {
    const cols = (t: string) => (s.prepare(`select name from pragma_table_info(?)`).pluck().all(t) as string[]).filter((c) => c !== 'created_at')
    const rows = (t: string) => s.prepare(`select ${cols(t).join(', ')} from ${t} order by id`).raw().all()
    return {
      schema: s.prepare(`select type, name, sql from sqlite_master where sql is not null order by name`).all(),
      lab_result_kinds: rows('lab_result_kinds'),
      lab_results: rows('lab_results'),
      lab_reports: rows('lab_reports'),
      import_runs: rows('import_runs'),
    }
  } finally {
    s.close()
  }
}

/**
 * A trigger that makes the insert of one sample's result fail, as a failing write would. `fail`:
 * RAISE(FAIL), after which the failed multi-row insert keeps the rows it inserted before that one
 * (sqlite.org/lang_createtrigger.html, "The RAISE() function"), unlike RAISE(ABORT).
 */
function failOnSample(db: string, sampleCode: string, message: string, how: 'abort' | 'fail' = 'abort') {
  const s = new SQLite(db)
  s.exec(`create trigger fail_sample before insert on lab_results when new.sample_code = '${sampleCode}'
    begin select raise(${how}, '${message}'); end;`)
  s.close()
}

describe('the lab writer thread', () => {
  it('stores exactly what the import thread stores, for a big file whose indexes are built again after the rows', async () => {
    expect(rebuildsIndexes(statSync(big).size, 0)).toBe(true)
    const inWorker = tmp.path('worker.db')
    const inThread = tmp.path('thread.db')
    copyFileSync(template, inWorker)
    copyFileSync(template, inThread)
    const a = await runCli(['--db', inWorker, '-q', '--json', 'labs', 'import', big])
    const b = await runCli(['--db', inThread, '-q', '--json', 'labs', 'import', big], { env: { PITSIDE_LAB_WRITER: 'thread' } })
    expect(a.exitCode, String(a.stderr)).toBe(0)
    expect(b.exitCode, String(b.stderr)).toBe(0)
    expect(JSON.parse(String(a.stdout)).totals).toEqual(JSON.parse(String(b.stdout)).totals)
    const sa = stored(inWorker)
    expect(sa.lab_results).toHaveLength(bigRows)
    expect(sa).toEqual(stored(inThread))
    expect(sa.schema.map((o: any) => o.name)).toEqual(expect.arrayContaining(['lab_results_report_sample_idx', 'lab_results_storage_idx']))
    expect(checkFile(inWorker)).toEqual({ integrity: 'ok', foreignKeys: [] })
  }, 120_000)

  it('names the line of the row whose insert failed in the writer thread, and writes nothing', async () => {
    const db = tmp.path('row-37.db')
    copyFileSync(template, db)
    failOnSample(db, 'CRA-26-K-S37', 'simulated write failure at row 37')
    const file = tmp.path('small.csv')
    writeLabFile(file, 'CRA-26-K', 200)
    const before = dumpDatabase(db)
    const r = await runCli(['--db', db, 'labs', 'import', file], { env: { PITSIDE_LAB_WRITER: 'worker' } })
    expect(r.exitCode).not.toBe(0)
    expect(r.stderr).toContain(`${file}:38: `) // row 37 is on line 38
    expect(r.stderr).toMatch(/simulated write failure/)
    expect(r.stderr).toMatch(/nothing .*was written/)
    expect(r.stderr).not.toMatch(/\bat .*\.(js|ts):\d+/)
    expect(dumpDatabase(db)).toBe(before)
  }, 60_000)

  it('leaves the database as it was, indexes included, when the last row of a big file fails to write', async () => {
    const db = tmp.path('fails.db')
    copyFileSync(template, db)
    failOnSample(db, `CRA-26-BIG-S${bigRows}`, 'simulated write failure at the last row')
    const before = dumpDatabase(db)
    const r = await runCli(['--db', db, 'labs', 'import', big])
    expect(r.exitCode).not.toBe(0)
    expect(r.stderr).toContain(`${big}:${bigRows + 1}: `)
    expect(r.stderr).toMatch(/simulated write failure/)
    expect(r.stderr).toMatch(/nothing .*was written/)
    expect(dumpDatabase(db)).toBe(before)
    expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
  }, 120_000)

  it('keeps one lab report for a report number that comes back after another report, in the thread and in the worker', async () => {
    // report A's rows, then B's, then A's again (a lab file sorted by sample, not by report)
    const a = tmp.path('interleaved-a.csv')
    writeLabFile(a, 'CRA-26-A', 300)
    const lines = readFileSync(a, 'utf8').trimEnd().split('\n')
    const b = lines.slice(1, 101).map((l) => l.replaceAll('CRA-26-A', 'CRA-26-B'))
    const file = tmp.path('interleaved.csv')
    writeFileSync(file, [lines[0], ...lines.slice(1, 151), ...b, ...lines.slice(151)].join('\n') + '\n')
    for (const mode of ['thread', 'worker']) {
      const db = tmp.path(`interleaved-${mode}.db`)
      copyFileSync(template, db)
      const r = await runCli(['--db', db, '-q', 'labs', 'import', file], { env: { PITSIDE_LAB_WRITER: mode } })
      expect(r.exitCode, String(r.stderr)).toBe(0)
      const s = new SQLite(db, { readonly: true })
      expect(s.prepare(`select p.report_number, count(*) as n from lab_results r join lab_reports p on p.id = r.lab_report_id group by p.id order by p.id`).all()).toEqual([
        { report_number: 'CRA-26-A', n: 300 },
        { report_number: 'CRA-26-B', n: 100 },
      ])
      s.close()
    }
  }, 60_000)

  it('writes nothing when a row in the middle of a multi-row insert fails and the rows before it stay in the statement', async () => {
    const db = tmp.path('fails-mid-chunk.db')
    copyFileSync(template, db)
    // row 5,000: past the first batch, in the middle of one multi-row insert (chunkRows rows)
    failOnSample(db, 'CRA-26-BIG-S5000', 'simulated write failure at row 5000', 'fail')
    const before = dumpDatabase(db)
    const r = await runCli(['--db', db, 'labs', 'import', big])
    expect(r.exitCode).not.toBe(0)
    expect(r.stderr).toContain(`${big}:5001: `)
    expect(r.stderr).toMatch(/simulated write failure at row 5000/)
    expect(r.stderr).toMatch(/nothing .*was written/)
    expect(dumpDatabase(db)).toBe(before)
    expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
  }, 120_000)

  it('stores what a result was reported as once per kind, shared by the files that follow, and a refused file adds no kind', async () => {
    const db = tmp.path('kinds.db')
    copyFileSync(template, db)
    const first = await runCli(['--db', db, '-q', 'labs', 'import', big])
    expect(first.exitCode, String(first.stderr)).toBe(0)
    const kinds = () => new SQLite(db, { readonly: true }).prepare('select form, species, basis, units, per_unit from lab_result_kinds order by id').all()
    expect(kinds()).toEqual([{ form: 'liquid', species: 'swine', basis: 'as_is', units: 'lb_per_1000gal', per_unit: '1000gal' }])
    const second = tmp.path('kinds-second.csv')
    writeLabFile(second, 'CRA-26-KIND', 12_000)
    expect((await runCli(['--db', db, '-q', 'labs', 'import', second])).exitCode).toBe(0)
    expect(kinds()).toHaveLength(1)
    // a file of another kind whose last row fails: neither its results nor its kind stay
    const solid = tmp.path('kinds-solid.csv')
    writeFileSync(solid, readFileSync(second, 'utf8').replaceAll('CRA-26-KIND', 'CRA-26-SOLID').replaceAll(',as_is,', ',dry,'))
    failOnSample(db, 'CRA-26-SOLID-S12000', 'simulated write failure at the last row')
    const before = dumpDatabase(db)
    const refused = await runCli(['--db', db, '-q', 'labs', 'import', solid])
    expect(refused.exitCode).not.toBe(0)
    expect(dumpDatabase(db)).toBe(before)
    expect(kinds()).toHaveLength(1)
  }, 120_000)

  it('refuses a big file that is not UTF-8 text, checked by the thread started ahead of the program, naming the line', async () => {
    const db = tmp.path('not-text.db')
    copyFileSync(template, db)
    const bad = tmp.path('latin1.csv')
    const bytes = readFileSync(big)
    // the 20,001st line's notes cell in Latin-1 (0xE9, "é"), as a spreadsheet saving "CSV" may write it
    let at = -1
    for (let line = 1; line <= 20_001; line++) at = bytes.indexOf(10, at + 1)
    writeFileSync(bad, Buffer.concat([bytes.subarray(0, at - 1), Buffer.from([0x63, 0x61, 0x66, 0xe9]), bytes.subarray(at - 1)]))
    const before = dumpDatabase(db)
    const r = await runCli(['--db', db, 'labs', 'import', bad])
    expect(r.exitCode).toBe(65)
    expect(r.stderr).toContain(`${bad}:20001: `)
    expect(r.stderr).toMatch(/not valid UTF-8/)
    expect(dumpDatabase(db)).toBe(before)
  }, 120_000)

  it('hands the thread started ahead of the first file to the next big file when the first was imported before, and exits', async () => {
    const db = tmp.path('ahead.db')
    copyFileSync(template, db)
    const first = await runCli(['--db', db, '-q', '--json', 'labs', 'import', big])
    expect(first.exitCode, String(first.stderr)).toBe(0)
    const second = tmp.path('second.csv')
    writeLabFile(second, 'CRA-26-TWO', 12_000) // over 1 MB: written by a thread too
    expect(statSync(second).size).toBeGreaterThan(1024 * 1024)
    // the first file is unchanged (same sha256): the thread started for it writes the second
    const r = await runCli(['--db', db, '-q', '--json', 'labs', 'import', big, second])
    expect(r.exitCode, String(r.stderr)).toBe(0)
    const files = JSON.parse(String(r.stdout)).files
    expect(files.map((f: any) => [f.outcome, f.new])).toEqual([['unchanged', 0], ['imported', 12_000]])
    // only the unchanged file: the thread started for it is closed and the command ends
    const again = await runCli(['--db', db, '-q', '--json', 'labs', 'import', big])
    expect(again.exitCode, String(again.stderr)).toBe(0)
    expect(JSON.parse(String(again.stdout)).files[0].outcome).toBe('unchanged')
    expect(stored(db).lab_results).toHaveLength(bigRows + 12_000)
    expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
  }, 120_000)
})
