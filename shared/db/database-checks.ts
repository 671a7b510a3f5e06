import type SQLite from 'better-sqlite3'
import { closeSync, fsyncSync, openSync, readSync } from 'node:fs'
import { dirname } from 'node:path'
import { migrationNames } from './migrations.ts'

// The checks behind `pitside check`, `pitside backup` and `pitside restore`. They follow SQLite's own
// practice of running `PRAGMA integrity_check` after every test run (sqlite.org/testing.html, §7).

export interface SchemaState {
  /** Migrations recorded in the file, oldest first. Empty for a file that Pitside never migrated. */
  applied: string[]
  /** The newest migration this build knows. */
  latest: string
  /** Known migrations not yet applied (the file is older than this build). */
  pending: string[]
  /** Migrations recorded in the file that this build does not know (the file is newer than this build). */
  unknown: string[]
  /** True when the file has Pitside's migration table at all. */
  pitside: boolean
}

export interface ForeignKeyProblem {
  table: string
  rowid: number | null
  parent: string
}

export interface DatabaseReport {
  /** `['ok']` when the file is sound; otherwise SQLite's own messages, at most 20. */
  integrity: string[]
  foreignKeys: ForeignKeyProblem[]
  schema: SchemaState
  /** Row count of each Pitside table present in the file. */
  rows: Record<string, number>
}

const sqliteMagic = Buffer.from('SQLite format 3\0', 'latin1')

/** True when the file starts with SQLite's 16-byte header string. */
export function hasSqliteHeader(file: string): boolean {
  const fd = openSync(file, 'r')
  try {
    const head = Buffer.alloc(16)
    const n = readSync(fd, head, 0, 16, 0)
    return n === 16 && head.equals(sqliteMagic)
  } finally {
    closeSync(fd)
  }
}

/** Reads which migrations the file has applied and compares them with the ones this build knows. */
export function readSchemaState(sqlite: SQLite.Database): SchemaState {
  const hasTable = sqlite
    .prepare(`select 1 from sqlite_master where type = 'table' and name = 'kysely_migration'`)
    .get()
  const applied = hasTable
    ? (sqlite.prepare('select name from kysely_migration order by name').all() as { name: string }[]).map((r) => r.name)
    : []
  const known = new Set(migrationNames)
  const done = new Set(applied)
  return {
    applied,
    latest: migrationNames[migrationNames.length - 1]!,
    pending: migrationNames.filter((m) => !done.has(m)),
    unknown: applied.filter((m) => !known.has(m)),
    pitside: Boolean(hasTable),
  }
}

/** Runs `integrity_check` and `foreign_key_check`, reads the schema state and counts rows. Never writes. */
export function inspectDatabase(sqlite: SQLite.Database): DatabaseReport {
  const integrity = (sqlite.prepare('pragma integrity_check(20)').all() as { integrity_check: string }[]).map(
    (r) => r.integrity_check,
  )
  const foreignKeys = (
    sqlite.prepare('pragma foreign_key_check').all() as { table: string; rowid: number | null; parent: string }[]
  ).map((r) => ({ table: r.table, rowid: r.rowid, parent: r.parent }))
  const schema = readSchemaState(sqlite)
  const tables = (
    sqlite
      .prepare(`select name from sqlite_master where type = 'table' and name not like 'sqlite_%' and name not like 'kysely_%' order by name`)
      .all() as { name: string }[]
  ).map((r) => r.name)
  const rows: Record<string, number> = {}
  if (integrity.length === 1 && integrity[0] === 'ok') {
    for (const t of tables) {
      rows[t] = (sqlite.prepare(`select count(*) as n from "${t.replaceAll('"', '""')}"`).get() as { n: number }).n
    }
  }
  return { integrity, foreignKeys, schema, rows }
}

/** One line per thing that is wrong with the report; empty when the file is sound and current. */
export function describeProblems(report: DatabaseReport, file: string): string[] {
  const out: string[] = []
  if (!(report.integrity.length === 1 && report.integrity[0] === 'ok')) {
    out.push(`${file}: integrity check failed: ${report.integrity.join('; ')}`)
  }
  if (report.foreignKeys.length > 0) {
    const sample = report.foreignKeys
      .slice(0, 5)
      .map((f) => `${f.table} row ${f.rowid ?? '?'} points to a missing ${f.parent} row`)
      .join('; ')
    out.push(`${file}: ${report.foreignKeys.length} broken reference(s): ${sample}`)
  }
  if (!report.schema.pitside) {
    out.push(`${file}: not a Pitside database (no migration table); expected one made by \`pitside init\``)
  } else if (report.schema.unknown.length > 0) {
    out.push(
      `${file}: made by a newer Pitside (migrations ${report.schema.unknown.join(', ')} are unknown to this version); upgrade Pitside first`,
    )
  }
  return out
}

/** Flushes a file and its directory entry to disk so a rename survives a power cut. */
export function fsyncFileAndDir(file: string): void {
  const fd = openSync(file, 'r+')
  try {
    fsyncSync(fd)
  } finally {
    closeSync(fd)
  }
  try {
    const dfd = openSync(dirname(file), 'r')
    try {
      fsyncSync(dfd)
    } finally {
      closeSync(dfd)
    }
  } catch {
    // some file systems cannot fsync a directory; the file itself is already on disk
  }
}
