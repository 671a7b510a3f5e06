import SQLite from 'better-sqlite3'
import { Migrator, sql } from 'kysely'
import { afterEach, describe, expect, it } from 'vitest'
import { migrateToLatest, migrationNames } from '../../shared/db/migrations.ts'
import { newDatabasePageSize, openWriterSqlite } from '../../shared/db/open-sqlite.ts'
import * as createSchema from '../../migrations/2026_12_01_0900_create_schema.ts'
import { openWriter } from '../../shared/db/open-database.ts'
import { makeTempDatabase, makeTempDir } from '../helpers/temp-db.ts'

type Opened = Awaited<ReturnType<typeof makeTempDatabase>>
let opened: Opened | undefined
afterEach(async () => {
  await opened?.close()
  opened?.tmp.cleanup()
  opened = undefined
})

const expectedTables = [
  'applications', 'crop_seasons', 'farms', 'fields', 'import_runs', 'lab_reports', 'lab_result_kinds', 'lab_results',
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

  it('move a database with lab results from the first schema to the latest: each result keeps its report number and import time through its report and run', async () => {
    const tmp = makeTempDir()
    const first = openWriter(tmp.path('first.db'))
    try {
      const migrator = new Migrator({ db: first.db, provider: { getMigrations: async () => ({ '2026_12_01_0900_create_schema': createSchema }) } })
      const { error } = await migrator.migrateToLatest()
      expect(error).toBeUndefined()
      const s = first.sqlite
      s.exec(`insert into organizations (code, name) values ('o', 'Tamarack Valley Advisors');
        insert into farms (organization_id, code, name) values (1, 'QBF', 'Quarry Bend Farm');
        insert into storages (farm_id, code, kind, species, form) values (1, 'P1', 'deep_pit', 'swine', 'liquid');
        insert into import_runs (kind, file_name, sha256, outcome, created_at) values ('labs', 'labs.csv', 'abc', 'imported', '2026-11-02 08:00:00');
        insert into lab_reports (lab, report_number, import_run_id) values ('Cobble Run Analytical', 'CRA-26-0001', 1);
        insert into lab_results (lab_report_id, storage_id, report_number, sample_code, sampled_on, form, species, basis, units, reported, per_unit, total_n, import_run_id, created_at)
          values (1, 1, 'CRA-26-0001', 'S-1', '2026-10-20', 'liquid', 'swine', 'as_is', 'lb_per_1000gal', '{}', '1000gal', 41.5, 1, '2026-11-02 08:00:00'),
                 (1, 1, 'CRA-26-0001', 'S-2', '2026-10-20', 'solid', 'swine', 'dry', 'pct', '{}', 'ton', 2.1, 1, '2026-11-02 08:00:00'),
                 (1, 1, 'CRA-26-0001', 'S-3', '2026-10-20', 'liquid', 'swine', 'as_is', 'lb_per_1000gal', '{}', '1000gal', 40.9, 1, '2026-11-02 08:00:00');`)
      const outcome = await migrateToLatest(first.db)
      expect(outcome.applied).toEqual(migrationNames.slice(1))
      const columns = s.prepare('select name from pragma_table_info(?)').pluck().all('lab_results')
      expect(columns).not.toContain('report_number')
      expect(columns).not.toContain('created_at')
      // a report's file is its import run's
      const reportColumns = s.prepare('select name from pragma_table_info(?)').pluck().all('lab_reports')
      expect(reportColumns).not.toContain('source_file')
      expect(reportColumns).not.toContain('source_sha256')
      expect(
        s.prepare(`select p.report_number, i.created_at, r.sample_code, r.total_n from lab_results r
          join lab_reports p on p.id = r.lab_report_id join import_runs i on i.id = r.import_run_id where r.sample_code = 'S-1'`).all(),
      ).toEqual([{ report_number: 'CRA-26-0001', created_at: '2026-11-02 08:00:00', sample_code: 'S-1', total_n: 41.5 }])
      // a result is found by its report and sample through the index on (lab_report_id, sample_code)
      const plan = s.prepare(`explain query plan select id from lab_results where lab_report_id = 1 and sample_code = 'S-1'`).all() as { detail: string }[]
      expect(plan.map((p) => p.detail).join(' ')).toMatch(/lab_results_report_sample_idx/)
      // a storage's results are found through the index by storage
      const byStorage = s.prepare(`explain query plan select id from lab_results where storage_id = 1 and superseded_by is null`).all() as { detail: string }[]
      expect(byStorage.map((p) => p.detail).join(' ')).toMatch(/lab_results_storage_idx/)
      expect(s.prepare(`select sql from sqlite_master where name = 'lab_results_storage_idx'`).pluck().get()).toMatch(/\("?storage_id"?\)/)
      // what the result was reported as is its kind's, stored once
      for (const c of ['form', 'species', 'basis', 'units', 'per_unit']) expect(columns).not.toContain(c)
      expect(
        s.prepare(`select r.sample_code, k.form, k.species, k.basis, k.units, k.per_unit from lab_results r join lab_result_kinds k on k.id = r.kind_id order by r.sample_code`).all(),
      ).toEqual([
        { sample_code: 'S-1', form: 'liquid', species: 'swine', basis: 'as_is', units: 'lb_per_1000gal', per_unit: '1000gal' },
        { sample_code: 'S-2', form: 'solid', species: 'swine', basis: 'dry', units: 'pct', per_unit: 'ton' },
        { sample_code: 'S-3', form: 'liquid', species: 'swine', basis: 'as_is', units: 'lb_per_1000gal', per_unit: '1000gal' },
      ])
      expect(s.prepare('select count(*) from lab_result_kinds').pluck().get()).toBe(2)
      expect(s.pragma('integrity_check', { simple: true })).toBe('ok')
    } finally {
      await first.close()
      tmp.cleanup()
    }
  })
})

