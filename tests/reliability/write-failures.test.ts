// Write failures during a lab import: the k-th insert fails, or the disk fills up. Anchored in
// SQLite's own I/O-error and full-disk testing (sqlite.org/testing.html §3.2 "I/O error testing":
// a fault at the Nth operation, then the database must be unchanged and usable) and its atomic
// commit guarantee (sqlite.org/atomiccommit.html). The message names the file (and the line when a
// row's write failed); the database dump is unchanged; the next import works.
import SQLite from 'better-sqlite3'
import { execa } from 'execa'
import { copyFileSync, existsSync, rmSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { binPath, runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { checkFile, dumpDatabase } from './helpers/dump.ts'
import { makeFarmDatabase } from './helpers/lab-db.ts'
import { writeLabFile } from './helpers/lab-files.ts'
import { mountSmallDisk, underFileSizeLimit } from './helpers/small-disk.ts'

let tmp: TempDir
let template: string
beforeAll(async () => {
  tmp = makeTempDir('pitside-write-failures-')
  template = tmp.path('template.db')
  await makeFarmDatabase(template)
  writeLabFile(tmp.path('earlier.csv'), 'CRA-25-0001', 40)
  const r = await runCli(['--db', template, '-q', 'labs', 'import', tmp.path('earlier.csv')])
  if (r.exitCode !== 0) throw new Error(String(r.stderr))
  const s = new SQLite(template)
  s.pragma('wal_checkpoint(TRUNCATE)')
  s.close()
}, 60_000)
afterAll(() => tmp?.cleanup())

/** A trigger that makes the k-th lab_results insert of an import fail, as a failing write would. */
function failAtRow(db: string, k: number) {
  const s = new SQLite(db)
  s.exec(`create trigger fail_at_row before insert on lab_results
    when (select count(*) from lab_results where import_run_id = new.import_run_id) >= ${k - 1}
    begin select raise(abort, 'simulated write failure at row ${k}'); end;`)
  s.close()
}

describe('a write that fails at row k', () => {
  const rows = 200
  // the first insert, one in the middle, the last but one and the last (just before the commit)
  for (const k of [1, 37, 199, 200]) {
    it(`leaves the database unchanged and names the file and line when insert ${k} of ${rows} fails`, async () => {
      const db = tmp.path(`row-${k}.db`)
      copyFileSync(template, db)
      failAtRow(db, k)
      const file = tmp.path(`labs-${k}.csv`)
      writeLabFile(file, `CRA-26-K${k}`, rows)
      const before = dumpDatabase(db)
      const r = await runCli(['--db', db, 'labs', 'import', file])
      expect(r.exitCode).not.toBe(0)
      // row k is on line k + 1 (the header is line 1)
      expect(r.stderr).toContain(`${file}:${k + 1}: `)
      expect(r.stderr).toMatch(/simulated write failure/)
      expect(r.stderr).toMatch(/nothing .*was written/)
      expect(r.stderr).not.toMatch(/\bat .*\.(js|ts):\d+/)
      expect(dumpDatabase(db)).toBe(before)
      expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
      const s = new SQLite(db)
      s.exec('drop trigger fail_at_row')
      s.close()
      const again = await runCli(['--db', db, '-q', '--json', 'labs', 'import', file])
      expect(again.exitCode, String(again.stderr)).toBe(0)
      expect(JSON.parse(String(again.stdout)).totals.new).toBe(rows)
    })
  }
})

describe('a full disk', () => {
  it('gives a clear error within seconds, writes no partial rows, keeps the database intact, and the next import works', async () => {
    const bigRows = 20_000 // several MB of pages: more than the space left
    const file = tmp.path('big.csv')
    writeLabFile(file, 'CRA-26-FULL', bigRows)
    // a tmpfs just larger than the database (a real ENOSPC), or else a file-size limit (EFBIG)
    const templateBytes = (await import('node:fs')).statSync(template).size
    const disk = mountSmallDisk(Math.ceil(templateBytes / 1024) + 1024)
    const db = disk ? join(disk.dir, 'pitside.db') : tmp.path('full.db')
    try {
      copyFileSync(template, db)
      const before = dumpDatabase(db)
      const args = [binPath, '--db', db, 'labs', 'import', file]
      const [cmd, cmdArgs] = disk ? ['node', args] : underFileSizeLimit(Math.ceil(templateBytes / 1024) + 1024, args)
      const started = performance.now()
      const r = await execa(cmd, cmdArgs, { reject: false, env: { NO_COLOR: '1' } })
      const seconds = (performance.now() - started) / 1000
      expect(seconds).toBeLessThan(15)
      expect(r.exitCode).toBe(74)
      expect(r.stderr).toContain(file)
      expect(r.stderr).toMatch(disk ? /the disk is full/ : /the disk (is full|refused the write)/)
      expect(r.stderr).toMatch(/nothing .*was written/)
      expect(r.stderr).not.toMatch(/this is a bug|\bat .*\.(js|ts):\d+/)
      expect(dumpDatabase(db)).toBe(before)
      expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
      // with room again, the same import goes through
      if (disk) rmSync(`${db}-wal`, { force: true })
      const small = tmp.path('small.csv')
      writeLabFile(small, 'CRA-26-AFTER', 50)
      const next = await runCli(['--db', db, '-q', '--json', 'labs', 'import', small])
      expect(next.exitCode, String(next.stderr)).toBe(0)
      expect(JSON.parse(String(next.stdout)).totals.new).toBe(50)
      expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
    } finally {
      disk?.unmount()
    }
  }, 60_000)
})
