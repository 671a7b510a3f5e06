import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { isCanonicalDecimalAt, normalizeHeader, parseDateCell, parseNumberCell, readPlainDecimal } from './csv-cells.ts'
import { parseCsv } from './csv.ts'
import { canonicalDecimal } from './lab-reported.ts'

describe('parseCsv', () => {
  it('reads quoted newlines, doubled quotes, CRLF, CR-only ends and a BOM, keeping start lines', () => {
    const r = parseCsv('\ufeffa;b\r\n1;"x\r\ny"\r\n\r\n2;3\r\n"a""b";c\rlast;x')
    expect(r.delimiter).toBe(';')
    expect(r.records).toEqual([['a', 'b'], ['1', 'x\r\ny'], ['2', '3'], ['a"b', 'c'], ['last', 'x']])
    expect(r.lines).toEqual([1, 2, 5, 6, 7])
    expect(r.problem).toBeUndefined()
  })

  it('stops at a quote that is never closed and names the line it opened on', () => {
    const r = parseCsv('a,b\n1,2\n3,"x\n4,5\n')
    expect(r.records).toHaveLength(2)
    expect(r.problem).toMatchObject({ code: 'csv_quote_not_closed', line: 3 })
  })

  it('refuses text after a closing quote and a quote inside an unquoted cell', () => {
    expect(parseCsv('a,b\n1,"x"y\n').problem).toMatchObject({ code: 'csv_text_after_quote', line: 2 })
    expect(parseCsv('a,b\n1,x"y\n').problem).toMatchObject({ code: 'csv_stray_quote', line: 2 })
  })

  it('picks tab and semicolon delimiters from the header line', () => {
    expect(parseCsv('a\tb\n1\t2').delimiter).toBe('\t')
    expect(parseCsv('a;b;c\n1,5;2;3').delimiter).toBe(';')
  })
})

describe('parseNumberCell', () => {
  const cases = [
    { raw: '42', decimal: '.', value: 42, qualifier: null },
    { raw: ' 3.5 ', decimal: '.', value: 3.5, qualifier: null },
    { raw: '12,5', decimal: ',', value: 12.5, qualifier: null },
    { raw: '<0.1', decimal: '.', value: 0.1, qualifier: '<' },
    { raw: '< 0,05', decimal: ',', value: 0.05, qualifier: '<' },
    { raw: '>5000', decimal: '.', value: 5000, qualifier: '>' },
    { raw: '1,234.5', decimal: '.', value: 1234.5, qualifier: null },
    { raw: '1.234,5', decimal: ',', value: 1234.5, qualifier: null },
    { raw: '1e3', decimal: '.', value: 1000, qualifier: null },
  ] as const
  it.each(cases)('reads $raw with decimal mark "$decimal"', ({ raw, decimal, value, qualifier }) => {
    expect(parseNumberCell(raw, decimal)).toEqual({ ok: true, value: { value, qualifier } })
  })

  it('refuses a thousands separator that could be read two ways', () => {
    const r = parseNumberCell('1,234', '.')
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.reason).toMatch(/ambiguous/)
    expect(parseNumberCell('1.234', ',').ok).toBe(false)
  })

  it('refuses spreadsheet errors, words and the wrong decimal mark', () => {
    for (const raw of ['#VALUE!', '#DIV/0!', 'n/a', '12,5', '']) expect(parseNumberCell(raw, '.').ok).toBe(false)
  })
})

describe('parseDateCell', () => {
  const cases = [
    { raw: '2026-03-09', iso: '2026-03-09' },
    { raw: '2026/3/9', iso: '2026-03-09' },
    { raw: '3/9/2026', iso: '2026-03-09' }, // US month/day/year
    { raw: '09.03.2026', iso: '2026-03-09' }, // day.month.year
    // spreadsheet serial days (1900 system): 46090 is 2026-03-09, 25569 would be 1970-01-01
    { raw: '46090', iso: '2026-03-09' },
  ]
  it.each(cases)('reads $raw as $iso', ({ raw, iso }) => {
    expect(parseDateCell(raw)).toEqual({ ok: true, value: iso })
  })
  it('refuses impossible dates and text', () => {
    for (const raw of ['2026-02-30', '13/13/2026', 'soon', '']) expect(parseDateCell(raw).ok).toBe(false)
  })
})

describe('normalizeHeader', () => {
  it('forgives case, spacing, punctuation and takes the bracketed unit aside', () => {
    expect(normalizeHeader('Total N (lb/1000 gal)')).toEqual({ key: 'total_n', unit: 'lb/1000 gal' })
    expect(normalizeHeader('\ufeffReport-ID')).toEqual({ key: 'report_id', unit: null })
    expect(normalizeHeader(' Dry Matter % ')).toEqual({ key: 'dry_matter_pct', unit: null })
    expect(normalizeHeader('NH4-N [ppm]')).toEqual({ key: 'nh4_n', unit: 'ppm' })
  })
})

describe('readPlainDecimal and isCanonicalDecimalAt', () => {
  const plain = /^\d+(\.\d+)?$/
  const decimalText = fc.oneof(
    fc.stringMatching(/^\d{1,18}(\.\d{1,18})?$/),
    fc.double({ min: 0, max: 1e9, noNaN: true }).map(String),
    fc.tuple(fc.nat(999999), fc.nat(99999999)).map(([a, b]) => `${a}.${b}`),
    fc.string({ unit: fc.constantFrom('0', '1', '5', '9', '.', 'e', '-', '+', ' ', ','), maxLength: 10 }),
  )

  it('reads a plain decimal in place as Number() reads it, and nothing else', () => {
    fc.assert(
      fc.property(decimalText, fc.nat(3), (text, pad) => {
        const padded = 'x'.repeat(pad) + text + 'y'
        const value = readPlainDecimal(Buffer.from(padded), pad, pad + text.length)
        if (plain.test(text)) expect(Object.is(value, Number(text))).toBe(true)
        else expect(value).toBe(-1)
      }),
      { numRuns: 10000 },
    )
  })

  it('reads long and awkward decimals exactly', () => {
    for (const text of ['0', '0.0', '000', '028.71', '0.1', '0.30000000000000004', '123456789012345', '1234567890123456', '9007199254740993', '1.7976931348623157', '99999999999999999999.5']) {
      expect(readPlainDecimal(Buffer.from(text), 0, text.length)).toBe(Number(text))
    }
  })

  it('tells canonical decimals as the stored-cells pattern does', () => {
    fc.assert(
      fc.property(decimalText, fc.nat(3), (text, pad) => {
        const padded = '9'.repeat(pad) + text + '9'
        expect(isCanonicalDecimalAt(Buffer.from(padded), pad, pad + text.length)).toBe(canonicalDecimal.test(text))
      }),
      { numRuns: 10000 },
    )
  })
})
