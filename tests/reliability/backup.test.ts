// Backups and restores. Anchored in SQLite's own testing practice (sqlite.org/testing.html: every run
// ends with PRAGMA integrity_check) and in the guarantee of the online backup API
// (sqlite.org/backup.html: the copy is a snapshot of one committed state, taken while others write).
import SQLite from 'better-sqlite3'
import { execa } from 'execa'
import { copyFileSync, existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { binPath, runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { checkFile, dumpDatabase } from './helpers/dump.ts'
import { mountSmallDisk, underFileSizeLimit } from './helpers/small-disk.ts'
import { scaled, scaledTimeout } from './helpers/stress.ts'
import { startWriter, stopWriter, writerState } from './helpers/writer-state.ts'

let tmp: TempDir
let db: string
let template: TempDir
beforeAll(async () => {
  template = makeTempDir('pitside-backup-template-')
  expect((await runCli(['--db', template.path('init.db'), 'init'])).exitCode).toBe(0)
})
afterAll(() => template?.cleanup())
beforeEach(() => {
  tmp = makeTempDir('pitside-backup-')
  db = tmp.path('pitside.db')
  copyFileSync(template.path('init.db'), db) // a database as `pitside init` made it
})
afterEach(() => tmp.cleanup())

async function seed(batches: number) {
  const w = await startWriter(db, { count: batches })
  await new Promise((resolve) => w.once('exit', resolve))
}

describe('pitside backup', () => {
  it(
    'copies one committed state that passes the integrity check while another process writes and this one reads',
    async () => {
      await seed(50)
      // the writer keeps the newest 200 batches, so the database stays small however long it runs
      const writer = await startWriter(db, { pauseMs: 2, keep: 200 })
      const reader = new SQLite(db, { readonly: true })
      let reads = 0
      const readLoop = setInterval(() => {
        reader.prepare('select count(*) from farms').get()
        reads++
      }, 2)
      const runs = scaled(6)
      let previous = 0
      try {
        for (let i = 0; i < runs; i++) {
          const copy = tmp.path(`copy-${i}.db`)
          const r = await runCli(['--db', db, '--json', 'backup', copy])
          expect(r.stderr).toBe('')
          expect(r.exitCode).toBe(0)
          expect(JSON.parse(String(r.stdout))).toMatchObject({ integrity: 'ok', backup: copy })
          expect(checkFile(copy)).toEqual({ integrity: 'ok', foreignKeys: [] })
          const state = writerState(copy)
          expect(state.problems).toEqual([])
          expect(state.last).toBeGreaterThanOrEqual(Math.max(previous, 50))
          expect(state.batches).toBe(Math.min(state.last, 200))
          previous = state.last
          expect(existsSync(`${copy}-wal`)).toBe(false)
        }
      } finally {
        clearInterval(readLoop)
        reader.close()
        await stopWriter(writer)
      }
      // the writer kept going during the backups: the last copy holds more than the seed
      expect(writerState(db).last).toBeGreaterThan(50)
      expect(reads).toBeGreaterThan(0)
      expect(readdirSync(tmp.dir).filter((f) => f.includes('.partial-'))).toEqual([])
    },
    scaledTimeout(60_000),
  )

  it('refuses to replace an existing file unless --force is given', async () => {
    const copy = tmp.path('copy.db')
    writeFileSync(copy, 'keep me')
    const r = await runCli(['--db', db, 'backup', copy])
    expect(r.exitCode).toBe(67)
    expect(r.stderr).toMatch(/copy\.db already exists; name a new file or add --force/)
    expect(readFileSync(copy, 'utf8')).toBe('keep me')
    const forced = await runCli(['--db', db, 'backup', '--force', copy])
    expect(forced.exitCode).toBe(0)
    expect(checkFile(copy).integrity).toBe('ok')
  })

  it('fails with a clear disk-full error, leaves no partial file and keeps the database intact when the disk fills up', async () => {
    await seed(100) // about 0.5 MB of farms
    const before = dumpDatabase(db)
    // a 128 KiB tmpfs, or else a 64 KiB file-size limit, stands in for a full disk
    const disk = mountSmallDisk(128)
    const copy = disk ? join(disk.dir, 'copy.db') : tmp.path('copy.db')
    const [cmd, args] = disk
      ? ['node', [binPath, '--db', db, 'backup', copy]]
      : underFileSizeLimit(64, [binPath, '--db', db, 'backup', copy])
    try {
      const started = performance.now()
      const r = await execa(cmd, args, { reject: false })
      expect(performance.now() - started).toBeLessThan(10_000)
      expect(r.exitCode).toBe(74)
      expect(r.stderr).toMatch(disk ? /cannot write backup .*copy\.db: the disk is full/ : /cannot write backup .*copy\.db: the disk (is full|refused the write)/)
      expect(r.stderr).not.toMatch(/\bat .*\.js:\d+/)
      expect(existsSync(copy)).toBe(false)
      expect(readdirSync(dirname(copy)).filter((f) => f.includes('.partial-'))).toEqual([])
    } finally {
      disk?.unmount()
    }
    expect(dumpDatabase(db)).toBe(before)
    expect(checkFile(db).integrity).toBe('ok')
    expect((await runCli(['--db', db, 'backup', tmp.path('next.db')])).exitCode).toBe(0)
  })
})

describe('pitside restore', () => {
  it('brings back exactly the backed-up state and keeps the replaced database as <db>.before-restore', async () => {
    await seed(30)
    const copy = tmp.path('copy.db')
    expect((await runCli(['--db', db, 'backup', copy])).exitCode).toBe(0)
    const atBackup = dumpDatabase(copy)
    await seed(10)
    const beforeRestore = dumpDatabase(db)
    expect(writerState(db).batches).toBe(40)

    const r = await runCli(['--db', db, '--json', 'restore', copy])
    expect(r.exitCode).toBe(0)
    expect(JSON.parse(String(r.stdout))).toMatchObject({ kept_as: `${db}.before-restore`, upgraded: [] })
    expect(dumpDatabase(db)).toBe(atBackup)
    expect(writerState(db)).toEqual({ batches: 30, last: 30, problems: [] })
    expect(dumpDatabase(`${db}.before-restore`)).toBe(beforeRestore)
    expect((await runCli(['--db', db, 'check'])).exitCode).toBe(0)
    // the restored database takes writes again
    await seed(1)
    expect(writerState(db)).toEqual({ batches: 31, last: 31, problems: [] })
  })

  it('restores a file whose latest commits still sit in its -wal beside it (a copy made by hand)', async () => {
    await seed(3)
    const live = new SQLite(db)
    live.pragma('wal_autocheckpoint = 0') // keep the next commits in the WAL
    live.prepare(`insert into organizations (code, name) values ('walonly', 'Only in the WAL')`).run()
    const copy = tmp.path('by-hand.db')
    copyFileSync(db, copy)
    copyFileSync(`${db}-wal`, `${copy}-wal`)
    live.close()
    const target = tmp.path('restored.db')
    const r = await runCli(['--db', target, 'restore', copy])
    expect(r.exitCode, String(r.stderr)).toBe(0)
    const s = new SQLite(target, { readonly: true })
    expect(s.prepare(`select name from organizations where code = 'walonly'`).pluck().get()).toBe('Only in the WAL')
    s.close()
    expect(writerState(target)).toEqual({ batches: 3, last: 3, problems: [] })
  })

  it('refuses while another process has the database open and changes nothing', async () => {
    await seed(5)
    const copy = tmp.path('copy.db')
    expect((await runCli(['--db', db, 'backup', copy])).exitCode).toBe(0)
    await seed(5)
    const before = dumpDatabase(db)
    const viewer = new SQLite(db, { readonly: true }) // stands in for the viewer's connection
    viewer.prepare('select count(*) from farms').get()
    try {
      const r = await runCli(['--db', db, 'restore', copy])
      expect(r.exitCode).toBe(69)
      expect(r.stderr).toMatch(/is in use by another process .*stop it and run restore again/)
    } finally {
      viewer.close()
    }
    expect(dumpDatabase(db)).toBe(before)
    expect(existsSync(`${db}.before-restore`)).toBe(false)
    expect(readdirSync(tmp.dir).filter((f) => f.includes('.restoring-'))).toEqual([])
  })

  it('refuses a second restore while the first one’s kept file is still there', async () => {
    const copy = tmp.path('copy.db')
    expect((await runCli(['--db', db, 'backup', copy])).exitCode).toBe(0)
    expect((await runCli(['--db', db, 'restore', copy])).exitCode).toBe(0)
    const r = await runCli(['--db', db, 'restore', copy])
    expect(r.exitCode).toBe(67)
    expect(r.stderr).toMatch(/before-restore is still there from an earlier restore/)
  })

  const badBackups: { name: string; make: (file: string, good: string) => void; expected: RegExp }[] = [
    { name: 'an empty file', make: (f) => writeFileSync(f, ''), expected: /is not a SQLite database/ },
    { name: 'a CSV file', make: (f) => writeFileSync(f, 'sample_id,total_n\nA,1\n'), expected: /is not a SQLite database/ },
    {
      name: 'a SQLite file that is not a Pitside database',
      make: (f) => {
        const s = new SQLite(f)
        s.exec('create table notes (x text)')
        s.close()
      },
      expected: /not a Pitside database/,
    },
    {
      name: 'a database made by a newer Pitside',
      make: (f, good) => {
        writeFileSync(f, readFileSync(good))
        const s = new SQLite(f)
        s.prepare(`insert into kysely_migration (name, timestamp) values ('2099_01_01_0000_future', '2099-01-01')`).run()
        s.close()
      },
      expected: /made by a newer Pitside/,
    },
    {
      name: 'a damaged file (pages overwritten)',
      make: (f, good) => {
        const bytes = readFileSync(good)
        for (let i = 4096 * 3; i < Math.min(bytes.length, 4096 * 12); i += 7) bytes[i] = 0xa5
        writeFileSync(f, bytes)
      },
      expected: /integrity check failed|not a sound SQLite database/,
    },
    {
      name: 'a file with broken references',
      make: (f, good) => {
        writeFileSync(f, readFileSync(good))
        const s = new SQLite(f)
        s.pragma('foreign_keys = OFF')
        s.prepare(`insert into farms (organization_id, code, name) values (999, 'ORPHAN', 'Orphan')`).run()
        s.close()
      },
      expected: /broken reference\(s\): farms row \d+ points to a missing organizations row/,
    },
  ]
  for (const bad of badBackups) {
    it(`refuses to restore ${bad.name} and leaves the database as it was`, async () => {
      await seed(3)
      const good = tmp.path('good.db')
      expect((await runCli(['--db', db, 'backup', good])).exitCode).toBe(0)
      const before = dumpDatabase(db)
      const file = tmp.path('bad.db')
      bad.make(file, good)
      const r = await runCli(['--db', db, 'restore', file])
      expect(r.exitCode).toBe(65)
      expect(r.stderr).toMatch(bad.expected)
      expect(r.stderr).not.toMatch(/\bat .*\.js:\d+/)
      expect(dumpDatabase(db)).toBe(before)
      expect(existsSync(`${db}.before-restore`)).toBe(false)
    })
  }
})

describe('pitside check', () => {
  it('reports a sound database with exit 0 and its schema version', async () => {
    const r = await runCli(['--db', db, 'check'])
    expect(r.exitCode).toBe(0)
    expect(r.stdout).toMatch(/integrity ok, foreign keys ok, schema \d{4}_\d\d_\d\d_\d{4}_\w+ \(latest\)/)
  })

  it('reports broken references with exit 69', async () => {
    const s = new SQLite(db)
    s.pragma('foreign_keys = OFF')
    s.prepare(`insert into user_farms (user_id, farm_id) values (41, 42)`).run()
    s.close()
    const r = await runCli(['--db', db, '--json', 'check'])
    expect(r.exitCode).toBe(69)
    const out = JSON.parse(String(r.stdout))
    expect(out.ok).toBe(false)
    expect(out.foreign_keys).toHaveLength(2)
    expect(r.stderr).toMatch(/broken reference\(s\): user_farms row/)
  })

  it('reports a damaged file with exit 69 and no stack trace', async () => {
    await seed(20)
    const s = new SQLite(db)
    s.pragma('wal_checkpoint(TRUNCATE)')
    s.close()
    const bytes = readFileSync(db)
    for (let i = 4096 * 4; i < bytes.length; i += 13) bytes[i] = 0x5a
    writeFileSync(db, bytes)
    const r = await runCli(['--db', db, 'check'])
    expect(r.exitCode).toBe(69)
    expect(r.stderr).toMatch(/integrity check failed|not a sound SQLite database/)
    expect(r.stderr).not.toMatch(/\bat .*\.js:\d+/)
  })
})
