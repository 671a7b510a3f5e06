/**
 * Writing CSV that any spreadsheet opens safely: RFC 4180 quoting (cells holding the delimiter,
 * a quote, CR or LF are quoted, quotes doubled, records end in CRLF) and formula injection
 * neutralized (a text cell that a spreadsheet would run as a formula gets a leading apostrophe).
 * Pure; every CSV Pitside writes goes through here, and shared/csv.ts reads it back.
 */

export type CsvValue = string | number | boolean | null | undefined

export interface CsvWriteOptions {
  delimiter?: ',' | ';' | '\t'
}

// = + - @ start a formula in common spreadsheets; tab and CR at the start are used to smuggle one in.
// Leading blanks do not stop a spreadsheet from evaluating, so they are looked through (any Unicode
// white space, zero-width space and BOM included: which ones a given spreadsheet skips varies).
const formulaStart = /^[\s\u200b\ufeff]*[=+\-@\t\r]/

/**
 * One cell as CSV text. Numbers (finite JS numbers) are written as numbers and never prefixed, so
 * a negative amount stays a number; NaN, ±Infinity, null and undefined become an empty cell.
 * Text that a spreadsheet would read as a formula gets a leading `'`.
 */
export function formatCsvCell(value: CsvValue, delimiter = ','): string {
  if (value === null || value === undefined) return ''
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : ''
  if (typeof value === 'boolean') return value ? 'true' : 'false'
  let s = value
  if (formulaStart.test(s)) s = "'" + s
  if (s.includes('"') || s.includes(delimiter) || s.includes('\n') || s.includes('\r')) {
    return '"' + s.replace(/"/g, '""') + '"'
  }
  return s
}

/** Rows (the first is usually the header) as RFC 4180 CSV text with CRLF record ends. */
export function writeCsv(rows: readonly (readonly CsvValue[])[], options: CsvWriteOptions = {}): string {
  const d = options.delimiter ?? ','
  let out = ''
  for (const row of rows) {
    let line = ''
    for (let i = 0; i < row.length; i++) {
      if (i > 0) line += d
      line += formatCsvCell(row[i], d)
    }
    out += line + '\r\n'
  }
  return out
}
