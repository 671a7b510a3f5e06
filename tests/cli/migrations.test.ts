import SQLite from 'better-sqlite3'
import { sql } from 'kysely'
import { afterEach, describe, expect, it } from 'vitest'
import { migrateToLatest, migrationNames } from '../../shared/db/migrations.ts'
import { newDatabasePageSize, openWriterSqlite } from '../../shared/db/open-sqlite.ts'
import { makeTempDatabase } from '../helpers/temp-db.ts'

type Opened = Awaited<ReturnType<typeof makeTempDatabase>>
let opened: Opened | undefined
afterEach(async () => {
  await opened?.close()
  opened?.tmp.cleanup()
  opened = undefined
})

const expectedTables = [
  'applications', 'crop_seasons', 'farms', 'fields', 'import_runs', 'lab_reports', 'lab_results',
  'organizations', 'plan_fields', 'plans', 'sampling_events', 'share_links', 'soil_tests',
  'storages', 'user_farms', 'users',
]

async function schemaDump(o: Opened): Promise<string> {
  const rows = await sql<{ sql: string }>`select sql from sqlite_master where sql is not null order by name`.execute(o.db)
  return rows.rows.map((r) => r.sql).join('\n')
}

describe('migrations', () => {
  it('bring a fresh database to the latest schema', async () => {
    opened = await makeTempDatabase()
    const tables = await opened.db.introspection.getTables()
    const names = tables.map((t) => t.name).filter((n) => !n.startsWith('kysely_'))
    expect(names.sort()).toEqual(expectedTables)
    const applied = await sql<{ name: string }>`select name from kysely_migration order by name`.execute(opened.db)
    expect(applied.rows.map((r) => r.name)).toEqual(migrationNames)
  })

  it('change nothing when run again', async () => {
    opened = await makeTempDatabase()
    const before = await schemaDump(opened)
    const again = await migrateToLatest(opened.db)
    expect(again.applied).toEqual([])
    expect(await schemaDump(opened)).toBe(before)
  })

  it('turn on WAL and foreign keys on the writer connection', async () => {
    opened = await makeTempDatabase()
    expect(opened.sqlite.pragma('journal_mode', { simple: true })).toBe('wal')
    expect(opened.sqlite.pragma('foreign_keys', { simple: true })).toBe(1)
    expect(() =>
      opened!.sqlite.prepare('insert into farms (organization_id, code, name) values (999, ?, ?)').run('x', 'y'),
    ).toThrow(/FOREIGN KEY/)
  })

  it('give a new database 16 KiB pages, and leave an existing file its own page size', async () => {
    opened = await makeTempDatabase()
    expect(opened.sqlite.pragma('page_size', { simple: true })).toBe(newDatabasePageSize)
    // a file made with SQLite's default 4 KiB pages keeps them, and takes the schema
    const file = opened.tmp.path('old-pages.db')
    const old = new SQLite(file)
    old.pragma('page_size = 4096')
    old.exec('create table t (x)')
    old.close()
    const reopened = openWriterSqlite(file)
    try {
      expect(reopened.pragma('page_size', { simple: true })).toBe(4096)
      expect(reopened.pragma('journal_mode', { simple: true })).toBe('wal')
    } finally {
      reopened.close()
    }
  })
})

