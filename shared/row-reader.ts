import { cellOf, type CsvTable } from './csv-table.ts'
import { parseDateCell, parseNumberCell } from './csv-cells.ts'
import type { Problem } from './errors.ts'

/**
 * Typed reading of one CSV row for the record imports (farms, storages, fields, samples,
 * applications). Every reader returns the value or null and, when the cell is wrong, adds a
 * problem with the row's line and the column name. Pure; never throws.
 */
export interface RowReader {
  readonly line: number
  /** True once any error (not warning) was reported for this row. */
  readonly failed: boolean
  /** Whether the file has the column at all (an absent optional column leaves stored values alone). */
  has(key: string): boolean
  raw(key: string): string
  text(key: string, options?: { required?: boolean; maxLength?: number }): string | null
  code(key: string, options?: { required?: boolean }): string | null
  number(key: string, options?: NumberOptions): number | null
  integer(key: string, options?: NumberOptions): number | null
  date(key: string, options?: { required?: boolean }): string | null
  choice<T extends string>(key: string, values: readonly T[], options?: { required?: boolean; aliases?: Readonly<Record<string, T>> }): T | null
  yesNo(key: string, options?: { required?: boolean }): boolean | null
  error(key: string | undefined, message: string, code?: string): void
  warn(key: string | undefined, message: string, code?: string): void
}

export interface NumberOptions {
  required?: boolean
  /** Smallest accepted value (inclusive). */
  min?: number
  /** Largest accepted value (inclusive). */
  max?: number
  /** The value must be larger than this. */
  above?: number
  /** Added to out-of-range messages, e.g. "write 0.75 for 75 %". */
  hint?: string
}

/** Codes of farms, storages, fields and samples: letters, digits, `-`, `_`, `.`; up to 40 characters. */
export const codePattern = /^[A-Za-z0-9][A-Za-z0-9_.-]{0,39}$/

const yes = new Set(['yes', 'y', 'true', 't', '1', 'x'])
const no = new Set(['no', 'n', 'false', 'f', '0'])

export function makeRowReader(table: CsvTable, row: readonly string[], line: number, problems: Problem[]): RowReader {
  let failed = false
  const error = (key: string | undefined, message: string, code = 'invalid_value') => {
    failed = true
    problems.push({ code, line, ...(key ? { column: key } : {}), message })
  }
  const warn = (key: string | undefined, message: string, code = 'implausible_value') => {
    problems.push({ code, line, severity: 'warning', ...(key ? { column: key } : {}), message })
  }
  const raw = (key: string) => cellOf(table, row, key)
  const missing = (key: string) => error(key, 'is required but empty', 'missing_value')

  const number = (key: string, o: NumberOptions = {}, integer = false): number | null => {
    const s = raw(key)
    if (s === '') {
      if (o.required) missing(key)
      return null
    }
    const parsed = parseNumberCell(s, table.decimal)
    if (!parsed.ok) {
      error(key, `expected a number, found ${parsed.reason.startsWith('"') ? parsed.reason : `"${s}" (${parsed.reason})`}`)
      return null
    }
    if (parsed.value.qualifier) {
      error(key, `expected a plain number, found "${s}" (a "${parsed.value.qualifier}" qualifier only belongs in lab results)`)
      return null
    }
    const v = parsed.value.value
    if (integer && !Number.isInteger(v)) {
      error(key, `expected a whole number, found ${s}`)
      return null
    }
    const hint = o.hint ? ` (${o.hint})` : ''
    if (o.above !== undefined && !(v > o.above)) {
      error(key, `expected a number above ${o.above}, found ${s}${hint}`)
      return null
    }
    if (o.min !== undefined && v < o.min) {
      error(key, `expected at least ${o.min}, found ${s}${hint}`)
      return null
    }
    if (o.max !== undefined && v > o.max) {
      error(key, `expected at most ${o.max}, found ${s}${hint}`)
      return null
    }
    return v
  }

  return {
    line,
    get failed() {
      return failed
    },
    has: (key) => (table.index[key] ?? -1) >= 0,
    raw,
    text(key, o = {}) {
      const s = raw(key)
      if (s === '') {
        if (o.required) missing(key)
        return null
      }
      const max = o.maxLength ?? 2000
      if (s.length > max) {
        error(key, `expected at most ${max} characters, found ${s.length}`)
        return null
      }
      return s
    },
    code(key, o = {}) {
      const s = raw(key)
      if (s === '') {
        if (o.required) missing(key)
        return null
      }
      if (!codePattern.test(s)) {
        error(key, `expected a code of letters, digits, "-", "_" or "." (at most 40, no spaces), found "${s}"`)
        return null
      }
      return s
    },
    number: (key, o) => number(key, o, false),
    integer: (key, o) => number(key, o, true),
    date(key, o = {}) {
      const s = raw(key)
      if (s === '') {
        if (o.required) missing(key)
        return null
      }
      const parsed = parseDateCell(s)
      if (!parsed.ok) {
        error(key, `expected a date (YYYY-MM-DD), found ${parsed.reason.startsWith('"') ? parsed.reason : `"${s}"`}`)
        return null
      }
      return parsed.value
    },
    choice(key, values, o = {}) {
      const s = raw(key)
      if (s === '') {
        if (o.required) missing(key)
        return null
      }
      const k = s.toLowerCase().replace(/[\s-]+/g, '_')
      const found = values.find((v) => v === k) ?? o.aliases?.[k]
      if (!found) {
        error(key, `expected one of ${values.join(', ')}; found "${s}"`)
        return null
      }
      return found
    },
    yesNo(key, o = {}) {
      const s = raw(key)
      if (s === '') {
        if (o.required) missing(key)
        return null
      }
      const k = s.toLowerCase()
      if (yes.has(k)) return true
      if (no.has(k)) return false
      error(key, `expected yes or no, found "${s}"`)
      return null
    },
    error,
    warn,
  }
}

export interface ParsedRows<T> {
  rows: T[]
  /** Errors refuse the file; warnings are reported with the import. */
  problems: Problem[]
}

/** Reads optional column `key` only when the file has it. */
export function optional<T>(r: RowReader, key: string, read: () => T | null): T | null | undefined {
  return r.has(key) ? read() : undefined
}

/** Reports rows whose key repeats an earlier row's, naming both lines. */
export function checkUniqueKeys<T extends { line: number }>(
  rows: readonly T[],
  keyOf: (row: T) => string,
  describe: (row: T) => string,
  column: string,
  problems: Problem[],
): T[] {
  const seen = new Map<string, number>()
  const kept: T[] = []
  for (const row of rows) {
    const key = keyOf(row)
    const first = seen.get(key)
    if (first !== undefined) {
      problems.push({
        code: 'duplicate_row',
        line: row.line,
        column,
        message: `${describe(row)} is already on line ${first}; give each one row`,
      })
      continue
    }
    seen.set(key, row.line)
    kept.push(row)
  }
  return kept
}


/** Problems in file order (stable for one line), as users read them. */
export function byLine(problems: Problem[]): Problem[] {
  return problems.map((p, i) => [p, i] as const).sort((a, b) => (a[0].line ?? 0) - (b[0].line ?? 0) || a[1] - b[1]).map(([p]) => p)
}
