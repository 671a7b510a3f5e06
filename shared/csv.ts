import type { Problem } from './errors.ts'

/**
 * RFC 4180 CSV, as spreadsheets write it: quoted fields with doubled quotes, quoted newlines,
 * LF, CRLF or CR-only line ends, a UTF-8 byte-order mark. Pure and allocation-light: it is the
 * hot loop of every import (see docs/decisions/0002-own-csv-reader.md for why it is ours).
 */
export interface CsvRecords {
  /** Each record's cells, blank lines left out. */
  records: string[][]
  /** 1-based line on which each record starts (same index as records). */
  lines: number[]
  delimiter: string
  /** First problem that stops reading (unclosed quote, stray quote); records before it are kept. */
  problem?: Problem
}

const QUOTE = 34
const CR = 13
const LF = 10

/** Picks the delimiter from the first line: the most frequent of `,` `;` and tab outside quotes. */
export function detectDelimiter(text: string): string {
  let comma = 0
  let semicolon = 0
  let tab = 0
  let quoted = false
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i)
    if (c === QUOTE) quoted = !quoted
    else if (quoted) continue
    else if (c === LF || c === CR) break
    else if (c === 44) comma++
    else if (c === 59) semicolon++
    else if (c === 9) tab++
  }
  if (semicolon > comma && semicolon >= tab) return ';'
  if (tab > comma && tab > semicolon) return '\t'
  return ','
}

/** Reads CSV text into records. Never throws; a malformed quote ends reading with a problem. */
export function parseCsv(input: string, options: { delimiter?: string } = {}): CsvRecords {
  const text = input.charCodeAt(0) === 0xfeff ? input.slice(1) : input
  const delimiter = options.delimiter ?? detectDelimiter(text)
  const d = delimiter.charCodeAt(0)
  const records: string[][] = []
  const lines: number[] = []
  const n = text.length
  let i = 0
  let line = 1

  while (i < n) {
    const startLine = line
    const cells: string[] = []
    let endOfRecord = false
    while (!endOfRecord) {
      if (i < n && text.charCodeAt(i) === QUOTE) {
        // quoted field
        let value = ''
        let from = i + 1
        let j = from
        for (;;) {
          const q = text.indexOf('"', j)
          if (q === -1) {
            return {
              records,
              lines,
              delimiter,
              problem: {
                code: 'csv_quote_not_closed',
                line: startLine,
                message: `a quoted cell opened on line ${startLine} is never closed (add the closing ")`,
              },
            }
          }
          for (let k = j; k < q; k++) {
            const c = text.charCodeAt(k)
            if (c === LF) line++
            else if (c === CR && text.charCodeAt(k + 1) !== LF) line++
          }
          if (text.charCodeAt(q + 1) === QUOTE) {
            value += text.slice(from, q + 1)
            from = q + 2
            j = from
            continue
          }
          value += text.slice(from, q)
          i = q + 1
          break
        }
        cells.push(value)
        const c = i < n ? text.charCodeAt(i) : -1
        if (c === d) {
          i++
        } else if (c === LF || c === CR || c === -1) {
          endOfRecord = true
        } else {
          return {
            records,
            lines,
            delimiter,
            problem: {
              code: 'csv_text_after_quote',
              line,
              message: `unexpected text after a closing quote in cell ${cells.length} (a quote inside a cell must be doubled: "")`,
            },
          }
        }
      } else {
        // unquoted field: up to the next delimiter or line end
        let j = i
        let c = -1
        for (; j < n; j++) {
          c = text.charCodeAt(j)
          if (c === d || c === LF || c === CR) break
          if (c === QUOTE) {
            return {
              records,
              lines,
              delimiter,
              problem: {
                code: 'csv_stray_quote',
                line,
                message: `a quote inside unquoted cell ${cells.length + 1} (quote the whole cell and double the quote: "")`,
              },
            }
          }
        }
        cells.push(text.slice(i, j))
        i = j
        if (j >= n) {
          endOfRecord = true
        } else if (c === d) {
          i++
        } else {
          endOfRecord = true
        }
      }
    }
    // consume the line end
    if (i < n) {
      const c = text.charCodeAt(i)
      if (c === CR) {
        i += text.charCodeAt(i + 1) === LF ? 2 : 1
        line++
      } else if (c === LF) {
        i++
        line++
      }
    }
    if (!(cells.length === 1 && cells[0] === '')) {
      records.push(cells)
      lines.push(startLine)
    }
  }
  return { records, lines, delimiter }
}
