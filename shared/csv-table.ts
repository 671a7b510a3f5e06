import { detectDecimalMark, normalizeHeader, type DecimalMark } from './csv-cells.ts'
import { parseCsv } from './csv.ts'
import type { Problem } from './errors.ts'

/** One column of an import format: its canonical name, the other names it goes by, whether required. */
export interface ColumnSpec {
  key: string
  aliases?: readonly string[]
  required?: boolean
}

export interface TableSpec {
  columns: readonly ColumnSpec[]
  /** Header keys (normalized) that are accepted and ignored. Unknown columns are otherwise a warning. */
  ignore?: readonly string[]
}

export interface CsvTable {
  /** Cells of each data row (header excluded, blank rows left out). */
  rows: string[][]
  /** 1-based line on which each row starts. */
  lines: number[]
  /** Index of each canonical column in a row, or -1 when the file lacks it. */
  index: Record<string, number>
  /** The unit written in a column's header, e.g. "lb/1000 gal" from "Total N (lb/1000 gal)". */
  headerUnits: Record<string, string | null>
  delimiter: string
  decimal: DecimalMark
  /** Errors stop the import; warnings (unknown columns) are reported. */
  problems: Problem[]
}

export interface TableOptions {
  delimiter?: string
  decimal?: DecimalMark
  /** Maps a file's own header names (normalized) to canonical keys, from an import profile. */
  rename?: Readonly<Record<string, string>>
}

/**
 * Reads CSV text with a header row into rows addressed by canonical column names. Header names
 * are matched forgivingly (case, spacing, punctuation, bracketed units, aliases). Problems carry
 * the line: missing or duplicate columns (line 1), rows with more cells than the header.
 */
export function parseCsvTable(text: string, spec: TableSpec, options: TableOptions = {}): CsvTable {
  const parsed = parseCsv(text, options.delimiter ? { delimiter: options.delimiter } : {})
  const problems: Problem[] = []
  const index: Record<string, number> = {}
  const headerUnits: Record<string, string | null> = {}
  for (const c of spec.columns) index[c.key] = -1

  const header = parsed.records[0]
  const empty: CsvTable = {
    rows: [],
    lines: [],
    index,
    headerUnits,
    delimiter: parsed.delimiter,
    decimal: options.decimal ?? '.',
    problems,
  }
  if (!header) {
    problems.push(parsed.problem ?? { code: 'no_header', line: 1, message: 'the file has no header row' })
    return empty
  }

  const byName = new Map<string, string>()
  for (const c of spec.columns) {
    byName.set(c.key, c.key)
    for (const a of c.aliases ?? []) byName.set(normalizeHeader(a).key, c.key)
  }
  for (const [from, to] of Object.entries(options.rename ?? {})) byName.set(normalizeHeader(from).key, to)
  const ignore = new Set(spec.ignore ?? [])
  const headerLine = parsed.lines[0] ?? 1

  header.forEach((cell, i) => {
    const { key: raw, unit } = normalizeHeader(cell)
    if (raw === '') {
      // an unnamed column is fine only if it stays empty: checked per row below
      return
    }
    const key = byName.get(raw)
    if (!key) {
      if (!ignore.has(raw)) {
        problems.push({
          code: 'unknown_column',
          severity: 'warning',
          line: headerLine,
          column: cell.trim(),
          message: `unknown column "${cell.trim()}" is ignored`,
        })
      }
      return
    }
    if (index[key] !== undefined && index[key] !== -1) {
      problems.push({
        code: 'duplicate_column',
        line: headerLine,
        column: key,
        message: `column "${cell.trim()}" appears twice (columns ${index[key]! + 1} and ${i + 1})`,
      })
      return
    }
    index[key] = i
    headerUnits[key] = unit
  })
  for (const c of spec.columns) {
    if (c.required && index[c.key] === -1) {
      problems.push({
        code: 'missing_column',
        line: headerLine,
        column: c.key,
        message: `required column "${c.key}" is missing${c.aliases?.length ? ` (also accepted: ${c.aliases.join(', ')})` : ''}`,
      })
    }
  }

  const rows: string[][] = []
  const lines: number[] = []
  const width = header.length
  for (let r = 1; r < parsed.records.length; r++) {
    const cells = parsed.records[r]!
    let blank = true
    for (let k = 0; k < cells.length; k++) {
      if (cells[k]!.trim() !== '') {
        blank = false
        break
      }
    }
    if (blank) continue // trailing "; ; ;" rows from spreadsheets
    const line = parsed.lines[r]!
    if (cells.length > width) {
      let extra = false
      for (let k = width; k < cells.length; k++) if (cells[k]!.trim() !== '') extra = true
      if (extra) {
        problems.push({
          code: 'too_many_cells',
          line,
          message: `has ${cells.length} cells but the header has ${width} (a delimiter inside a value must be quoted)`,
        })
        continue
      }
    }
    rows.push(cells)
    lines.push(line)
  }
  if (parsed.problem) problems.push(parsed.problem)

  let decimal = options.decimal
  if (!decimal) {
    const sample: string[] = []
    for (let r = 0; r < rows.length && r < 50; r++) sample.push(...rows[r]!)
    decimal = detectDecimalMark(parsed.delimiter, sample)
  }
  return { rows, lines, index, headerUnits, delimiter: parsed.delimiter, decimal, problems }
}

/** The trimmed cell of a canonical column, or '' when the file lacks the column or the row is short. */
export function cellOf(table: CsvTable, row: readonly string[], key: string): string {
  const i = table.index[key]
  if (i === undefined || i < 0) return ''
  const v = row[i]
  return v === undefined ? '' : v.trim()
}

export function hasErrors(problems: readonly Problem[]): boolean {
  return problems.some((p) => p.severity !== 'warning')
}
