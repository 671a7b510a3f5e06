import { createHash } from 'node:crypto'
import type SQLite from 'better-sqlite3'
import type { Kysely } from 'kysely'
import { insertImportRun, type ImportItem, type PreparedImport, type RecordKind } from '../../shared/db/record-import.ts'
import type { Database } from '../../shared/db/schema.ts'
import { AppError, formatProblems, type Problem } from '../../shared/errors.ts'
import { byLine } from '../../shared/row-reader.ts'
import type { GlobalOptions } from '../globals.ts'
import { note, printJson, printTable } from '../output.ts'
import { readInputText } from '../read-input.ts'
import { withAdvisorDb } from './advisor-db.ts'

/** What the in-process import cores need: the Kysely handle and the raw connection of one database. */
export interface ImportDeps {
  db: Kysely<Database>
  sqlite: SQLite.Database
}

/** A file path (or "-" for standard input), or text already in memory. */
export type ImportSource = string | { name: string; text: string; sha256?: string }

export interface ImportOptions {
  /** Compare and report only; write nothing. */
  dryRun?: boolean
  /** Today's date (YYYY-MM-DD) for checks of future dates; defaults to the local date. */
  today?: string
}

export interface FileReport {
  file: string
  sha256: string
  /** imported: something was written; unchanged: the file matched what is stored; dry_run: nothing written by request. */
  outcome: 'imported' | 'unchanged' | 'dry_run'
  rows: number
  new: number
  changed: number
  unchanged: number
  warnings: Problem[]
  items: ImportItem[]
  importRunId: number | null
}

export interface ImportReport {
  kind: RecordKind
  dryRun: boolean
  files: FileReport[]
}

interface LoadedSource {
  name: string
  text: string
  sha256: string
}

const maxProblemsShown = 50

/** The local calendar date as YYYY-MM-DD. */
export function localToday(now = new Date()): string {
  const p = (n: number) => String(n).padStart(2, '0')
  return `${now.getFullYear()}-${p(now.getMonth() + 1)}-${p(now.getDate())}`
}

async function load(source: ImportSource): Promise<LoadedSource> {
  if (typeof source === 'string') return readInputText(source)
  return {
    name: source.name,
    text: source.text,
    sha256: source.sha256 ?? createHash('sha256').update(source.text).digest('hex'),
  }
}

function errorsOf(problems: readonly Problem[]): Problem[] {
  return problems.filter((p) => p.severity !== 'warning')
}

function refusal(files: { name: string; problems: Problem[] }[]): AppError {
  const parts: string[] = []
  let total = 0
  for (const f of files) {
    const errors = byLine(errorsOf(f.problems))
    if (!errors.length) continue
    total += errors.length
    parts.push(formatProblems(errors.slice(0, maxProblemsShown), f.name))
    if (errors.length > maxProblemsShown) parts.push(`${f.name}: … and ${errors.length - maxProblemsShown} more problems`)
  }
  const refused = files.filter((f) => errorsOf(f.problems).length).map((f) => f.name)
  parts.push(`${total} problem${total === 1 ? '' : 's'} in ${refused.join(', ')}; nothing was written`)
  return new AppError('invalid_input', parts.join('\n'))
}

/**
 * Imports record files of one kind: every file is read, parsed and compared with the database
 * first; any error in any file refuses the whole call (AppError 'invalid_input' listing every
 * problem as `file:line: column: reason`) and nothing is written. Then each file is compared again
 * and written in its own transaction, with an import_runs row when it changed something.
 */
export async function runRecordImport(
  deps: ImportDeps,
  kind: RecordKind,
  sources: readonly ImportSource[],
  options: ImportOptions,
  prepare: (text: string) => Promise<PreparedImport>,
): Promise<ImportReport> {
  if (!sources.length) throw new AppError('usage', `give at least one ${kind} file (or - for standard input)`)
  const loaded: LoadedSource[] = []
  for (const s of sources) loaded.push(await load(s))

  // one file: compared and written inside a single transaction
  if (loaded.length === 1 && !options.dryRun) return { kind, dryRun: false, files: [await writeFile(deps, kind, loaded[0]!, prepare)] }

  const checked: { name: string; problems: Problem[]; prepared: PreparedImport }[] = []
  for (const file of loaded) {
    const prepared = await prepare(file.text)
    checked.push({ name: file.name, problems: prepared.problems, prepared })
  }
  if (checked.some((c) => errorsOf(c.problems).length)) throw refusal(checked)

  const files: FileReport[] = []
  for (let i = 0; i < loaded.length; i++) {
    const file = loaded[i]!
    if (options.dryRun) {
      files.push(report(file, checked[i]!.prepared, 'dry_run', null))
      continue
    }
    files.push(await writeFile(deps, kind, file, prepare))
  }
  return { kind, dryRun: Boolean(options.dryRun), files }
}

async function writeFile(
  deps: ImportDeps,
  kind: RecordKind,
  file: LoadedSource,
  prepare: (text: string) => Promise<PreparedImport>,
): Promise<FileReport> {
  const { sqlite, db } = deps
  sqlite.exec('BEGIN IMMEDIATE')
  try {
    // compared again inside the transaction: an earlier file of this call may have changed things
    const prepared = await prepare(file.text)
    if (errorsOf(prepared.problems).length) throw refusal([{ name: file.name, problems: prepared.problems }])
    const counts = countItems(prepared.items)
    if (counts.new + counts.changed === 0) {
      sqlite.exec('ROLLBACK')
      return report(file, prepared, 'unchanged', null)
    }
    const importRunId = insertImportRun(sqlite, db, {
      kind,
      fileName: file.name,
      sha256: file.sha256,
      rows: prepared.items.length,
      rowsNew: counts.new,
      rowsChanged: counts.changed,
      rowsUnchanged: counts.unchanged,
      warnings: prepared.problems.length,
    })
    prepared.write({ sqlite, db, importRunId, now: new Date().toISOString() })
    sqlite.exec('COMMIT')
    return report(file, prepared, 'imported', importRunId)
  } catch (error) {
    if (sqlite.inTransaction) sqlite.exec('ROLLBACK')
    throw error
  }
}

function countItems(items: readonly ImportItem[]) {
  const c = { new: 0, changed: 0, unchanged: 0 }
  for (const item of items) c[item.status]++
  return c
}

function report(file: LoadedSource, prepared: PreparedImport, outcome: FileReport['outcome'], importRunId: number | null): FileReport {
  return {
    file: file.name,
    sha256: file.sha256,
    outcome,
    rows: prepared.items.length,
    ...countItems(prepared.items),
    warnings: byLine(prepared.problems.filter((p) => p.severity === 'warning')),
    items: prepared.items,
    importRunId,
  }
}

/** Opens the database (which must be at the latest schema), runs `body` and closes it again. */
export async function withDatabase<T>(file: string, body: (deps: ImportDeps) => Promise<T>): Promise<T> {
  return withAdvisorDb(file, 'write', (opened) => body({ db: opened.db, sqlite: opened.sqlite }))
}

function describeChanges(item: ImportItem): string {
  const show = (v: unknown) => (v === null || v === undefined || v === '' ? '(empty)' : String(v))
  return item.changes.map((c) => `${c.column}: ${show(c.from)} → ${show(c.to)}`).join('; ')
}

export function reportJson(r: ImportReport) {
  return {
    kind: r.kind,
    dry_run: r.dryRun,
    files: r.files.map((f) => ({
      file: f.file,
      sha256: f.sha256,
      outcome: f.outcome,
      rows: f.rows,
      new: f.new,
      changed: f.changed,
      unchanged: f.unchanged,
      import_run_id: f.importRunId,
      warnings: f.warnings.map((w) => ({ line: w.line ?? null, column: w.column ?? null, message: w.message })),
      items: f.items.map((i) => ({ line: i.line, key: i.key, status: i.status, changes: i.changes })),
    })),
  }
}

/**
 * Prints an import's outcome: warnings and notes on stderr; on stdout, with --dry-run every row
 * (new / changed / unchanged and what would change), otherwise one summary row per file.
 */
export function printImportReport(g: GlobalOptions, r: ImportReport): void {
  for (const f of r.files) {
    if (f.warnings.length) process.stderr.write(formatProblems(f.warnings.map((w) => ({ ...w, message: `${w.message} (warning)` })), f.file) + '\n')
  }
  if (g.json) return printJson(reportJson(r))
  if (r.dryRun) {
    printTable(
      r.files.flatMap((f) => f.items.map((i) => ({ ...i, file: f.file }))),
      [
        ...(r.files.length > 1 ? [{ header: 'file', value: (i: ImportItem & { file: string }) => i.file }] : []),
        { header: 'line', value: (i) => i.line, align: 'right' as const },
        { header: r.kind.replace(/s$/, ''), value: (i) => i.key },
        { header: 'would be', value: (i) => i.status },
        { header: 'changes', value: (i) => describeChanges(i) },
      ],
    )
  } else {
    printTable(r.files, [
      { header: 'file', value: (f) => f.file },
      { header: 'rows', value: (f) => f.rows, align: 'right' },
      { header: 'new', value: (f) => f.new, align: 'right' },
      { header: 'changed', value: (f) => f.changed, align: 'right' },
      { header: 'unchanged', value: (f) => f.unchanged, align: 'right' },
      { header: 'warnings', value: (f) => f.warnings.length, align: 'right' },
    ])
  }
  for (const f of r.files) {
    if (r.dryRun) note(g, `${f.file}: dry run: ${f.new} new, ${f.changed} changed, ${f.unchanged} unchanged; nothing was written`)
    else if (f.outcome === 'unchanged') note(g, `${f.file}: nothing changed (all ${f.rows} rows are already stored as given)`)
    else note(g, `${f.file}: imported ${r.kind}: ${f.new} new, ${f.changed} changed, ${f.unchanged} unchanged`)
  }
}
