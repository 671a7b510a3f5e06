import type SQLite from 'better-sqlite3'
import { statSync } from 'node:fs'
import { readFile } from 'node:fs/promises'
import {
  currentLabResultsReader,
  findLabImportBySha,
  findLabStorages,
  findSamplingEvents,
  labHistoryReader,
  labResultSignature,
} from '../../shared/db/labs.ts'
import { LabRowWriteError } from '../../shared/db/lab-write.ts'
import { spareLabWriter, startLabFileWriter, type LabFileWriter, type SpareLabWriter } from '../../shared/db/lab-writer.ts'
import { appErrorFromSqlite } from '../../shared/db/sqlite-errors.ts'
import { textProblem } from '../../shared/decode-text.ts'
import { AppError, formatProblems, isAppError, type ErrorCode, type Problem } from '../../shared/errors.ts'
import { readLabCsv, type LabRow } from '../../shared/lab-csv.ts'
import type { LabProfile } from '../../shared/lab-profile.ts'
import { checkLabRow, emptyLabResultValues, type LabCheckContext, type LabResultValues } from '../../shared/lab-results.ts'
import { bookValuesForStorage } from '../../shared/lab-book-values.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson, printTable } from '../output.ts'
import { hashedEarly, takeEarlyLabWriter } from '../early-start.ts'
import { readInput, readInputBytes } from '../read-input.ts'
import { withAdvisorSqlite } from './advisor-sqlite.ts'

export interface LabImportDeps {
  sqlite: SQLite.Database
}

export interface LabImportOptions {
  /** supersede stored results of the same report and sample whose values differ, keeping them as history */
  replace?: boolean
  profile?: LabProfile | null
  /** reference set whose book values the plausibility checks use (default: the built-in default) */
  referenceSet?: string
  /** YYYY-MM-DD; sampling dates after it are refused (default: today) */
  today?: string
  /** called after each file */
  onFile?: (done: number, total: number, file: string) => void
}

export type LabFileOutcome = 'imported' | 'replaced' | 'unchanged' | 'refused'

export interface LabFileSummary {
  file: string
  sha256: string | null
  outcome: LabFileOutcome
  rows: number
  new: number
  unchanged: number
  replaced: number
  warnings: number
  /** why a file was unchanged or refused, in a sentence */
  reason: string | null
  /** errors (refused files) with line and column */
  problems: Problem[]
  /** warnings with line and column, stored with the results */
  warningList: Problem[]
  importRunId: number | null
  /** the error code a refusal maps to (invalid_input for problems in the data) */
  errorCode: ErrorCode | null
}

export interface LabImportSummary {
  files: LabFileSummary[]
  totals: { files: number; rows: number; new: number; unchanged: number; replaced: number; warnings: number; refused: number }
}

function emptySummary(file: string, sha256: string | null): LabFileSummary {
  return {
    file,
    sha256,
    outcome: 'refused',
    rows: 0,
    new: 0,
    unchanged: 0,
    replaced: 0,
    warnings: 0,
    reason: null,
    problems: [],
    warningList: [],
    importRunId: null,
    errorCode: null,
  }
}

/**
 * The core of `pitside labs import`, callable in-process (the demo and the benchmark use it).
 * Each file is read, parsed and checked completely first; a file with any error writes nothing.
 * A good file is written in one transaction with its import run and lab reports. A file whose
 * sha256 was imported before, and rows whose report and sample are stored with the same values,
 * are left alone and reported as unchanged; with `replace`, rows whose values differ supersede
 * the stored result (kept, with `superseded_by` pointing at the new one). Never throws for bad
 * files: their problems are in the summary. Throws AppError('database'|'io') when writing fails.
 */
export async function importLabFiles(deps: LabImportDeps, files: readonly string[], options: LabImportOptions = {}): Promise<LabImportSummary> {
  const { sqlite } = deps
  // the first file's writer thread (when it is big) loads while the file is read: started by the
  // command line before the program loaded (cli/early-start.ts), or now
  const early = takeEarlyLabWriter()
  const first = files[0] !== undefined && files[0] !== '-' ? files[0] : null
  const spare = { writer: first ? spareLabWriter(sqlite, sizeOf(first), early) : null }
  if (!first) void early?.worker.terminate()
  try {
    return await importAll(sqlite, files, options, spare)
  } finally {
    spare.writer?.close()
  }
}

function sizeOf(path: string): number | undefined {
  try {
    return statSync(path).size
  } catch {
    return undefined // reading it tells why
  }
}

async function importAll(sqlite: SQLite.Database, files: readonly string[], options: LabImportOptions, spare: { writer: SpareLabWriter | null }): Promise<LabImportSummary> {
  const batch: BatchContext = {
    ...findLabStorages(sqlite),
    samplingEvents: findSamplingEvents(sqlite),
    bookValues: bookValuesForStorage(options.referenceSet),
  }
  const summaries: LabFileSummary[] = []

  for (let f = 0; f < files.length; f++) {
    const path = files[f]!
    summaries.push(await importOne(sqlite, path, batch, options, spare))
    options.onFile?.(f + 1, files.length, path)
  }

  const totals = { files: summaries.length, rows: 0, new: 0, unchanged: 0, replaced: 0, warnings: 0, refused: 0 }
  for (const s of summaries) {
    totals.rows += s.rows
    totals.new += s.new
    totals.unchanged += s.unchanged
    totals.replaced += s.replaced
    totals.warnings += s.warnings
    if (s.outcome === 'refused') totals.refused++
  }
  return { files: summaries, totals }
}

interface BatchContext {
  storages: ReturnType<typeof findLabStorages>['storages']
  farms: ReturnType<typeof findLabStorages>['farms']
  samplingEvents: ReturnType<typeof findSamplingEvents>
  bookValues: LabCheckContext['bookValues']
}

async function importOne(sqlite: SQLite.Database, path: string, batch: BatchContext, options: LabImportOptions, spare: { writer: SpareLabWriter | null }): Promise<LabFileSummary> {
  let input: { name: string; bytes: Buffer; sha256: string } | undefined
  let problem: Problem | null | undefined
  try {
    if (spare.writer && path !== '-') {
      // a spare writer thread hashes the bytes (in shared memory) while this thread checks them, or
      // has hashed them already (bytes read before the program loaded, cli/early-start.ts)
      const { name, bytes } = await readInputBytes(path, { shared: true })
      const hashing = spare.writer.sha256(bytes as Buffer & Uint8Array<SharedArrayBuffer>, hashedEarly(bytes))
      hashing.catch(() => undefined) // awaited below, after the check
      problem = textProblem(bytes)
      input = { name, bytes, sha256: await hashing }
    } else input = await readInput(path)
  } catch (error) {
    if (!isAppError(error)) throw error
    const s = emptySummary(path, null)
    s.reason = error.message
    s.errorCode = error.code
    return s
  }
  const name = input.name
  const sha256 = input.sha256
  const summary = emptySummary(name, sha256)
  const refuse = (problems: Problem[], reason: string) => {
    summary.outcome = 'refused'
    summary.problems = problems
    summary.reason = reason
    summary.errorCode = 'invalid_input'
    summary.new = 0
    summary.unchanged = 0
    summary.replaced = 0
    summary.warnings = 0
    summary.warningList = []
    return summary
  }

  const previous = findLabImportBySha(sqlite, sha256)
  if (previous) {
    summary.outcome = 'unchanged'
    summary.rows = previous.rows
    summary.unchanged = previous.rows
    summary.reason = `the same file (sha256 ${sha256.slice(0, 12)}…) was imported as ${previous.fileName} on ${previous.createdAt} UTC`
    return summary
  }

  // the writer (a worker thread with its own connection) starts while the bytes are checked
  const thread = spare.writer
  spare.writer = null
  const starting = startLabFileWriter(sqlite, { fileName: name, sha256, message: options.profile?.name ? `profile: ${options.profile.name}` : null, bytes: input.bytes.length }, thread)
  starting.catch(() => undefined) // awaited below; an early failure must not go unhandled meanwhile
  if (problem === undefined) problem = textProblem(input.bytes)
  // the rows are read from the bytes themselves, never decoded into one string (shared/lab-csv.ts)
  const bytes = input.bytes
  if (problem) {
    await starting.then((w) => w.finish(null)).catch(() => undefined)
    return refuse([problem], 'not a UTF-8 text file')
  }

  // One pass: each row is parsed, resolved, checked and sorted into new / unchanged / replacing,
  // and the new ones go to the file's open transaction (written by a worker thread while the
  // next rows are read: shared/db/lab-writer.ts). The transaction is committed only when the last
  // row has passed; one error anywhere rolls the whole file back.
  let writer: LabFileWriter
  try {
    writer = await starting
  } catch (error) {
    throw writeFailure(error, name)
  }
  const context: LabCheckContext = {
    storages: batch.storages,
    farms: batch.farms,
    history: labHistoryReader(sqlite, writer.runId),
    bookValues: batch.bookValues,
    samplingEvents: batch.samplingEvents,
  }
  const stored = currentLabResultsReader(sqlite)
  const checkProblems: Problem[] = []
  const rowWarnings: Problem[] = []
  const values = emptyLabResultValues()
  let unchanged = 0
  let read: ReturnType<typeof readLabCsv> | undefined
  let written: Awaited<ReturnType<LabFileWriter['finish']>> = null
  let finished = false
  try {
    read = readLabCsv(bytes, { file: name, profile: options.profile ?? null, ...(options.today ? { today: options.today } : {}) }, (row) => {
      if (!checkLabRow(row, context, checkProblems, values)) return
      if (checkProblems.length > 0 || writer.failed) return // refused anyway: go on checking, stop writing
      const existing = stored(row.reportId).get(row.sampleId)
      let supersedes: number | null = null
      if (existing) {
        if (existing.signature === signatureOf(row, values)) {
          unchanged++
          return
        }
        if (!options.replace) {
          unchanged++
          rowWarnings.push({
            code: 'stored_differs',
            severity: 'warning',
            line: row.line,
            column: 'sample_id',
            message: `report ${row.reportId} sample ${row.sampleId} is already stored with other values; kept the stored result (use --replace to supersede it)`,
          })
          return
        }
        supersedes = existing.id
      }
      if (values.warnings) {
        for (const w of values.warnings) {
          const colon = w.indexOf(': ')
          rowWarnings.push({ code: 'plausibility', severity: 'warning', line: row.line, column: w.slice(0, colon), message: w.slice(colon + 2) })
        }
      }
      writer.add(row, values, supersedes)
    })
    const passed = checkProblems.length === 0 && !read.problems.some((p) => p.severity !== 'warning')
    finished = true
    written = await writer.finish(passed ? { rows: read.rows, unchanged, warnings: read.problems.length + rowWarnings.length } : null)
  } catch (error) {
    if (!finished) await writer.finish(null).catch(() => undefined)
    throw writeFailure(error, error instanceof LabRowWriteError ? `${name}:${error.line}` : name)
  }
  summary.importRunId = written?.runId ?? null
  const added = written?.count ?? 0
  const replaced = written?.replaced ?? 0
  const r = read!
  const errors = [...r.problems.filter((p) => p.severity !== 'warning'), ...checkProblems].sort((a, b) => (a.line ?? 0) - (b.line ?? 0))
  summary.rows = r.rows + countRowsWithErrors(r.problems)
  if (errors.length > 0) return refuse(errors, `${errors.length} problem${errors.length === 1 ? '' : 's'}; nothing was written`)

  summary.warningList = [...r.problems, ...rowWarnings].sort((a, b) => (a.line ?? 0) - (b.line ?? 0))
  summary.warnings = summary.warningList.length
  summary.unchanged = unchanged
  summary.replaced = replaced
  summary.new = added - replaced
  if (summary.importRunId === null) {
    summary.outcome = 'unchanged'
    summary.reason = 'every result of this file is already stored'
    return summary
  }
  summary.outcome = replaced > 0 ? 'replaced' : 'imported'
  return summary
}

/**
 * A write that failed (disk full, I/O error, …) as the user reads it: where (file, and line when a
 * row's insert failed) and why; the file's transaction has been rolled back. Causes SQLite reports
 * for the outside world become AppErrors (io, database); anything else stays a bug, with its place.
 */
function writeFailure(error: unknown, where: string): unknown {
  if (isAppError(error)) return error
  const mapped = appErrorFromSqlite(error, `${where}: cannot store the results`)
  if (mapped) return mapped
  return new Error(`${where}: ${(error as Error)?.message ?? String(error)}; nothing from this file was written`, { cause: error })
}

function signatureOf(row: LabRow, v: LabResultValues): string {
  return labResultSignature({
    storageId: v.storageId,
    sampledOn: row.sampledOn,
    basis: row.basis,
    units: row.units,
    dryMatterPct: v.dryMatterPct,
    totalN: v.totalN,
    ammoniumN: v.ammoniumN,
    p2o5: v.p2o5,
    k2o: v.k2o,
    sulfur: v.sulfur,
    ph: row.ph,
  })
}

function countRowsWithErrors(problems: readonly Problem[]): number {
  const lines = new Set<number>()
  for (const p of problems) if (p.severity !== 'warning' && p.line !== undefined && p.line > 1) lines.add(p.line)
  return lines.size
}

/** Reads and checks a `--profile` file; throws AppError('invalid_input') naming each mistake. */
export async function readLabProfile(path: string): Promise<LabProfile> {
  let text: string
  try {
    text = await readFile(path, 'utf8')
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code
    throw new AppError(code === 'ENOENT' ? 'not_found' : 'io', `${path}: cannot read the profile (${code ?? (error as Error).message})`)
  }
  const { parseLabProfile } = await import('../../shared/lab-profile.ts') // its schema loads zod: only when asked for
  const { profile, problems } = parseLabProfile(text)
  if (!profile) throw new AppError('invalid_input', formatProblems(problems, path))
  return profile
}

const maxListed = 50

function printProblems(g: { quiet: boolean }, s: LabFileSummary): void {
  if (s.outcome === 'refused') {
    if (s.problems.length === 0) process.stderr.write(`${s.file}: ${s.reason}\n`)
    else {
      process.stderr.write(formatProblems(s.problems.slice(0, maxListed), s.file) + '\n')
      if (s.problems.length > maxListed) process.stderr.write(`${s.file}: … and ${s.problems.length - maxListed} more problems (see --json)\n`)
      process.stderr.write(`${s.file}: refused, nothing was written\n`)
    }
  }
  if (!g.quiet && s.warningList.length > 0) {
    process.stderr.write(formatProblems(s.warningList.slice(0, maxListed), s.file).replace(/^/gm, 'warning: ') + '\n')
    if (s.warningList.length > maxListed) process.stderr.write(`warning: ${s.file}: … and ${s.warningList.length - maxListed} more warnings (see --json)\n`)
  }
}

export function labImportJson(summary: LabImportSummary) {
  return {
    files: summary.files.map((s) => ({
      file: s.file,
      sha256: s.sha256,
      outcome: s.outcome,
      rows: s.rows,
      new: s.new,
      unchanged: s.unchanged,
      replaced: s.replaced,
      warnings: s.warnings,
      reason: s.reason,
      import_run_id: s.importRunId,
      problems: s.problems.map((p) => ({ line: p.line ?? null, column: p.column ?? null, code: p.code, message: p.message })),
      warning_list: s.warningList.map((p) => ({ line: p.line ?? null, column: p.column ?? null, code: p.code, message: p.message })),
    })),
    totals: summary.totals,
  }
}

export const run: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const files = (args[0] as string[] | undefined) ?? []
  if (files.length === 0) throw new AppError('usage', 'give one or more lab files, or - for standard input')
  if (files.filter((f) => f === '-').length > 1) throw new AppError('usage', 'standard input (-) can be read only once')
  const profile = options.profile ? await readLabProfile(options.profile) : null

  const showBar = process.stderr.isTTY && !g.quiet && files.length > 1
  const bar = showBar ? await makeBar(files.length) : null
  const summary = await withAdvisorSqlite(g.db, 'write', (sqlite) =>
    importLabFiles({ sqlite }, files, {
      replace: Boolean(options.replace),
      profile,
      ...(options.reference ? { referenceSet: options.reference } : {}),
      onFile: (done) => bar?.update(done),
    }),
  ).finally(() => bar?.stop())

  for (const s of summary.files) printProblems(g, s)
  if (g.json) printJson(labImportJson(summary))
  else {
    const t = summary.totals
    const rows = [...summary.files, { file: `total (${t.files} file${t.files === 1 ? '' : 's'})`, rows: t.rows, new: t.new, unchanged: t.unchanged, replaced: t.replaced, warnings: t.warnings, outcome: t.refused > 0 ? `${t.refused} refused` : '' }]
    printTable(rows, [
      { header: 'file', value: (r) => r.file },
      { header: 'rows', value: (r) => r.rows, align: 'right' },
      { header: 'new', value: (r) => r.new, align: 'right' },
      { header: 'unchanged', value: (r) => r.unchanged, align: 'right' },
      { header: 'replaced', value: (r) => r.replaced, align: 'right' },
      { header: 'warnings', value: (r) => r.warnings, align: 'right' },
      { header: 'refused', value: (r) => ('errorCode' in r ? (r.outcome === 'refused' ? 'refused' : '') : r.outcome) },
    ])
    const unchangedFiles = summary.files.filter((s) => s.outcome === 'unchanged')
    for (const s of unchangedFiles) note(g, `${s.file}: unchanged: ${s.reason}`)
  }
  const refused = summary.files.filter((s) => s.outcome === 'refused')
  if (refused.length > 0) {
    const code = refused.find((s) => s.errorCode && s.errorCode !== 'invalid_input')?.errorCode ?? 'invalid_input'
    throw new AppError(code, `${refused.length} of ${summary.files.length} file${summary.files.length === 1 ? '' : 's'} refused (nothing was written from ${refused.length === 1 ? 'it' : 'them'}): ${refused.map((s) => s.file).join(', ')}`)
  }
}

async function makeBar(total: number) {
  const { default: cliProgress } = await import('cli-progress')
  const bar = new cliProgress.SingleBar(
    { format: 'importing lab files [{bar}] {value}/{total}', stream: process.stderr, clearOnComplete: true, hideCursor: true },
    cliProgress.Presets.legacy,
  )
  bar.start(total, 0)
  return bar
}
