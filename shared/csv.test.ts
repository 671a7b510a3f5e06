import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { CsvCursor, hashSpans, parseCsv, RecordIndex } from './csv.ts'

/** Every record the cursor reads, as parseCsv gives records, lines and the problem. */
function readAll(text: string, delimiter: string) {
  const cur = new CsvCursor(text, delimiter)
  const records: string[][] = []
  const lines: number[] = []
  while (cur.next()) {
    const cells: string[] = []
    for (let k = 0; k < cur.count; k++) cells.push(cur.cell(k))
    records.push(cells)
    lines.push(cur.line)
  }
  return { records, lines, problem: cur.problem }
}

// CSV-ish text: the characters that matter to a CSV reader (RFC 4180 quotes, the three
// delimiters, the three line ends, a BOM) and some that String.prototype.trim removes
const csvText = fc.string({
  unit: fc.constantFrom('"', '""', ',', ';', '\t', '\r', '\n', '\r\n', '\ufeff', ' ', '\u00a0', '\u2028', 'a', 'b', '1', '.', 'é'),
  maxLength: 120,
})
const delimiter = fc.constantFrom(',', ';', '\t')

describe('CsvCursor', () => {
  it('reads the same records, start lines and problem as parseCsv', () => {
    fc.assert(
      fc.property(csvText, delimiter, (text, d) => {
        const expected = parseCsv(text, { delimiter: d })
        expect(readAll(text, d)).toEqual({ records: expected.records, lines: expected.lines, problem: expected.problem })
      }),
      { numRuns: 5000 },
    )
  })

  it('reads quoted newlines, doubled quotes, CRLF, CR-only ends and a BOM with their start lines', () => {
    const r = readAll('\ufeffa;b\r\n1;"x\r\ny"\r\n\r\n2;3\r\n"a""b";c\rlast;x', ';')
    expect(r.records).toEqual([['a', 'b'], ['1', 'x\r\ny'], ['2', '3'], ['a"b', 'c'], ['last', 'x']])
    expect(r.lines).toEqual([1, 2, 5, 6, 7])
    expect(r.problem).toBeUndefined()
  })

  it('trims, compares and spans each cell (in UTF-8 bytes) as String.prototype.trim sees it', () => {
    fc.assert(
      fc.property(csvText, delimiter, fc.string({ maxLength: 3 }), (text, d, other) => {
        const cur = new CsvCursor(text, d)
        while (cur.next()) {
          for (let k = 0; k <= cur.count; k++) {
            const trimmed = cur.cell(k).trim()
            expect(cur.trimmed(k)).toBe(trimmed)
            expect(cur.blank(k)).toBe(trimmed === '')
            expect(cur.is(k, trimmed)).toBe(true)
            expect(cur.is(k, other)).toBe(other === trimmed)
            if (cur.span(k)) expect(cur.bytes.toString('utf8', cur.spanStart, cur.spanEnd)).toBe(trimmed)
            else expect(cur.cell(k)).toContain('"')
          }
        }
      }),
      { numRuns: 3000 },
    )
  })
})

describe('RecordIndex', () => {
  it('finds a record again by its codes, wherever they lie, and keeps the first line', () => {
    const words = fc.constantFrom('', 'a', 'b', 'ab', 'ba', 'aa', 'S1', 'S10', 'R-1')
    fc.assert(
      fc.property(fc.array(fc.tuple(words, words), { maxLength: 300 }), fc.boolean(), (pairs, weakHash) => {
        // every pair written into one text, so that equal codes lie at different places
        const text = pairs.map(([a, b]) => a + '|' + b + '|').join('')
        const starts: number[] = []
        let at = 0
        for (const [a, b] of pairs) {
          starts.push(at)
          at += a.length + b.length + 2
        }
        const codesAt = (offset: number) => {
          const i = starts.indexOf(offset)
          return JSON.stringify(pairs[i])
        }
        const index = new RecordIndex(4)
        const reference = new Map<string, number>()
        pairs.forEach(([a, b], i) => {
          const line = i + 2
          const aStart = starts[i]!
          const bStart = aStart + a.length + 1
          // a hash that collides often, to check that equal hashes are told apart
          const hash = weakHash ? a.length : hashSpans(Buffer.from(text), aStart, aStart + a.length, bStart, bStart + b.length)
          const key = JSON.stringify([a, b])
          const first = index.add(hash, aStart, line, (earlier) => codesAt(earlier) === key)
          expect(first).toBe(reference.get(key) ?? 0)
          if (!reference.has(key)) reference.set(key, line)
        })
      }),
      { numRuns: 500 },
    )
  })

  it('hashes equal codes alike wherever they lie', () => {
    const bytes = Buffer.from('R1|S2|xR1|S2|')
    expect(hashSpans(bytes, 0, 2, 3, 5)).toBe(hashSpans(bytes, 7, 9, 10, 12))
    expect(hashSpans(bytes, 0, 2, 3, 5)).not.toBe(hashSpans(bytes, 3, 5, 0, 2))
  })
})
