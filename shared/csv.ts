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
  const delimiter = options.delimiter ?? detectDelimiter(input.charCodeAt(0) === 0xfeff ? input.slice(1) : input)
  const cursor = new CsvCursor(input, delimiter)
  const records: string[][] = []
  const lines: number[] = []
  while (cursor.next()) {
    const cells: string[] = new Array(cursor.count)
    for (let k = 0; k < cursor.count; k++) cells[k] = cursor.cell(k)
    records.push(cells)
    lines.push(cursor.line)
  }
  return cursor.problem ? { records, lines, delimiter, problem: cursor.problem } : { records, lines, delimiter }
}

/** A Node Buffer with the decoding slices Node gives every Buffer (not in its type declarations). */
export type TextBytes = Buffer & { latin1Slice(start: number, end: number): string; utf8Slice(start: number, end: number): string }

/** The bytes of `input` as TextBytes: a string is encoded as UTF-8; bytes are used in place, not copied. */
export function textBytes(input: string | Uint8Array): TextBytes {
  if (typeof input === 'string') return Buffer.from(input, 'utf8') as TextBytes
  return (Buffer.isBuffer(input) ? input : Buffer.from(input.buffer, input.byteOffset, input.byteLength)) as TextBytes
}

/**
 * How many bytes of byte-order marks (EF BB BF) `bytes` starts with: all of them are skipped, as
 * some exports write two (a decoder and a reader of the decoded text each skip one).
 */
export function leadingMarks(bytes: Uint8Array): number {
  let i = 0
  while (bytes[i] === 0xef && bytes[i + 1] === 0xbb && bytes[i + 2] === 0xbf) i += 3
  return i
}

/** The text of bytes[start, end) (UTF-8; ASCII without decoding). */
export function spanText(bytes: TextBytes, start: number, end: number): string {
  for (let i = start; i < end; i++) if (bytes[i]! >= 0x80) return bytes.utf8Slice(start, end)
  return bytes.latin1Slice(start, end)
}

/**
 * The reader behind parseCsv, one record at a time and without a string per cell: `next()` reads
 * the next record (leaving out blank lines) and leaves its cells as byte offsets into the UTF-8
 * text, so that a caller makes strings only of the cells it keeps and reads numbers from the bytes
 * (a big lab file is read without ever becoming one string). A string given is encoded first.
 * Pure; never throws.
 */
export class CsvCursor {
  /** cells in the current record */
  count = 0
  /** start of each cell's bytes (inside the quotes for a quoted cell); -1 for a cell with doubled quotes, see `escaped` */
  starts = new Int32Array(32)
  /** end (exclusive) of each cell's bytes */
  ends = new Int32Array(32)
  /** the unquoted text of cells whose start is -1 */
  escaped: string[] = []
  /** 1-based line on which the current record starts */
  line = 0
  /** byte offset at which the current record starts (give it to `seek` to read the record again) */
  start = 0
  /** set when reading stopped at a malformed quote; the record it is in is not returned */
  problem: Problem | undefined
  /** the text's UTF-8 bytes: the offsets are into these */
  readonly bytes: TextBytes
  private readonly d: number
  private pos: number
  private nextLine = 1

  constructor(text: string | Uint8Array, delimiter: string) {
    const b = textBytes(text)
    this.bytes = b
    this.d = delimiter.charCodeAt(0)
    this.pos = leadingMarks(b)
  }

  /** Reads the next record; false at the end of the text or at a malformed quote (see `problem`). */
  next(): boolean {
    const text = this.bytes
    const d = this.d
    const n = text.length
    let i = this.pos
    let line = this.nextLine
    while (i < n) {
      const startLine = line
      const start = i
      let count = 0
      for (;;) {
        if (count === this.starts.length) this.grow()
        if (i < n && text[i] === QUOTE) {
          let value: string | null = null
          let from = i + 1
          let j = from
          for (;;) {
            const q = text.indexOf(QUOTE, j)
            if (q === -1) {
              return this.stop(n, line, {
                code: 'csv_quote_not_closed',
                line: startLine,
                message: `a quoted cell opened on line ${startLine} is never closed (add the closing ")`,
              })
            }
            for (let k = j; k < q; k++) {
              const c = text[k]
              if (c === LF) line++
              else if (c === CR && text[k + 1] !== LF) line++
            }
            if (text[q + 1] === QUOTE) {
              value = (value ?? '') + spanText(text, from, q + 1)
              from = q + 2
              j = from
              continue
            }
            if (value === null) {
              this.starts[count] = from
              this.ends[count] = q
            } else {
              this.starts[count] = -1
              this.ends[count] = -2
              this.escaped[count] = value + spanText(text, from, q)
            }
            count++
            i = q + 1
            break
          }
          const c = i < n ? text[i]! : -1
          if (c === d) i++
          else if (c === LF || c === CR || c === -1) break
          else {
            return this.stop(n, line, {
              code: 'csv_text_after_quote',
              line,
              message: `unexpected text after a closing quote in cell ${count} (a quote inside a cell must be doubled: "")`,
            })
          }
        } else {
          let j = i
          let c = -1
          for (; j < n; j++) {
            c = text[j]!
            if (c === d || c === LF || c === CR) break
            if (c === QUOTE) {
              return this.stop(n, line, {
                code: 'csv_stray_quote',
                line,
                message: `a quote inside unquoted cell ${count + 1} (quote the whole cell and double the quote: "")`,
              })
            }
          }
          this.starts[count] = i
          this.ends[count] = j
          count++
          i = j
          if (j < n && c === d) i++
          else break
        }
      }
      if (i < n) {
        const c = text[i]
        if (c === CR) {
          i += text[i + 1] === LF ? 2 : 1
          line++
        } else if (c === LF) {
          i++
          line++
        }
      }
      if (count !== 1 || this.starts[0] !== this.ends[0]) {
        this.count = count
        this.line = startLine
        this.start = start
        this.pos = i
        this.nextLine = line
        return true
      }
    }
    this.count = 0
    this.pos = i
    this.nextLine = line
    return false
  }

  /** Goes back (or on) to the record that starts at byte `offset`, read by the next `next()` as on `line`. */
  seek(offset: number, line = 1): void {
    this.pos = offset
    this.nextLine = line
    this.problem = undefined
  }

  /** The text of cell k as parseCsv gives it ('' past the last cell). */
  cell(k: number): string {
    if (k >= this.count) return ''
    const s = this.starts[k]!
    return s === -1 ? this.escaped[k]! : spanText(this.bytes, s, this.ends[k]!)
  }

  /** The text of cell k trimmed as String.prototype.trim trims ('' past the last cell). */
  trimmed(k: number): string {
    if (k >= this.count) return ''
    const s = this.starts[k]!
    if (s === -1) return this.escaped[k]!.trim()
    const e = this.ends[k]!
    if (s === e) return ''
    const text = this.bytes
    const a = text[s]!
    const b = text[e - 1]!
    // printable ASCII at both ends: nothing to trim
    if (a > 32 && a < 127 && b > 32 && b < 127) return spanText(text, s, e)
    return spanText(text, s, e).trim()
  }

  /** Whether cell k, trimmed, is `value` (compared in place, without making a string of the cell). */
  is(k: number, value: string): boolean {
    if (k >= this.count) return value === ''
    const s = this.starts[k]!
    if (s === -1) return this.escaped[k]!.trim() === value
    const e = this.ends[k]!
    const len = e - s
    if (len === 0) return value === ''
    const text = this.bytes
    const a = text[s]!
    const b = text[e - 1]!
    if (!(a > 32 && a < 127 && b > 32 && b < 127)) return spanText(text, s, e).trim() === value
    // a value with other than ASCII has more UTF-8 bytes than UTF-16 units: equal lengths mean ASCII
    if (len !== value.length) return len > value.length && !isAscii(value) && spanText(text, s, e) === value
    for (let k2 = 0; k2 < len; k2++) {
      const c = value.charCodeAt(k2)
      if (c >= 0x80 || text[s + k2] !== c) return false
    }
    return true
  }

  /** start of the trimmed bytes of the cell last given to `span` */
  spanStart = 0
  /** end (exclusive) of the trimmed bytes of the cell last given to `span` */
  spanEnd = 0

  /**
   * Sets spanStart and spanEnd to where cell k's trimmed text lies in the bytes (an empty span past
   * the last cell); false for a cell with doubled quotes, whose text is not a span of the bytes.
   */
  span(k: number): boolean {
    if (k >= this.count) {
      this.spanStart = this.spanEnd = 0
      return true
    }
    let s = this.starts[k]!
    if (s === -1) return false
    let e = this.ends[k]!
    if (s < e) {
      const text = this.bytes
      const a = text[s]!
      const b = text[e - 1]!
      if (!(a > 32 && a < 127 && b > 32 && b < 127)) {
        const raw = spanText(text, s, e)
        const trimmed = raw.trim()
        if (trimmed === '') e = s
        else {
          // the trimmed-off ends as UTF-8 bytes
          s += Buffer.byteLength(raw.slice(0, raw.length - raw.trimStart().length))
          e -= Buffer.byteLength(raw.slice(raw.trimEnd().length))
        }
      }
    }
    this.spanStart = s
    this.spanEnd = e
    return true
  }

  /** Whether cell k is empty once trimmed. */
  blank(k: number): boolean {
    if (k >= this.count) return true
    const s = this.starts[k]!
    if (s === -1) return this.escaped[k]!.trim() === ''
    const e = this.ends[k]!
    if (s === e) return true
    const a = this.bytes[s]!
    if (a > 32 && a < 127) return false
    return spanText(this.bytes, s, e).trim() === ''
  }

  private stop(n: number, line: number, problem: Problem): false {
    this.problem = problem
    this.count = 0
    this.pos = n
    this.nextLine = line
    return false
  }

  private grow(): void {
    const starts = new Int32Array(this.starts.length * 2)
    const ends = new Int32Array(this.ends.length * 2)
    starts.set(this.starts)
    ends.set(this.ends)
    this.starts = starts
    this.ends = ends
  }
}

function isAscii(text: string): boolean {
  for (let i = 0; i < text.length; i++) if (text.charCodeAt(i) >= 0x80) return false
  return true
}

/** A 32-bit hash (FNV-1a) of the bytes bytes[aStart, aEnd) and bytes[bStart, bEnd), as a pair. */
export function hashSpans(bytes: Uint8Array, aStart: number, aEnd: number, bStart: number, bEnd: number): number {
  let h = 0x811c9dc5 | 0
  for (let i = aStart; i < aEnd; i++) h = Math.imul(h ^ bytes[i]!, 0x01000193)
  h = Math.imul(h ^ 0xffff, 0x01000193) ^ (aEnd - aStart)
  for (let i = bStart; i < bEnd; i++) h = Math.imul(h ^ bytes[i]!, 0x01000193)
  return h ^ (h >>> 15)
}

/**
 * Records of a text filed by a hash of what identifies them (e.g. a lab file's report and sample
 * codes), each with the line it was first seen on, to find repeats. Only the hash, the record's
 * offset and its line are kept (12 bytes a slot, in one typed array): a file's 200,000 records cost
 * no strings or objects for the garbage collector and little fresh memory, which is slow to get
 * on a busy machine. Equal hashes are told apart by the caller, who reads the earlier record again.
 */
export class RecordIndex {
  /** per slot: hash, offset of the record, line; line 0 marks an empty slot */
  private slots: Int32Array
  private mask: number
  private size = 0

  /** `expected`: about how many records will be added (the index grows past it) */
  constructor(expected = 1024) {
    let n = 16
    while (n * 0.8 < expected) n *= 2
    this.slots = new Int32Array(n * 3)
    this.mask = n - 1
  }

  /**
   * Files the record at `offset`, first seen on `line` (≥ 1), under `hash` and returns 0; or, when
   * `same(earlierOffset)` says a record filed under the same hash is the same, returns that
   * record's line and files nothing.
   */
  add(hash: number, offset: number, line: number, same: (earlierOffset: number) => boolean): number {
    const slots = this.slots
    for (let i = hash & this.mask; ; i = (i + 1) & this.mask) {
      const o = i * 3
      const seen = slots[o + 2]!
      if (seen === 0) {
        slots[o] = hash
        slots[o + 1] = offset
        slots[o + 2] = line
        if (++this.size > (this.mask + 1) * 0.8) this.grow()
        return 0
      }
      if (slots[o] === hash && same(slots[o + 1]!)) return seen
    }
  }

  private grow(): void {
    const old = this.slots
    const n = (this.mask + 1) * 2
    const slots = new Int32Array(n * 3)
    const mask = n - 1
    for (let o = 0; o < old.length; o += 3) {
      if (old[o + 2] === 0) continue
      let i = old[o]! & mask
      while (slots[i * 3 + 2] !== 0) i = (i + 1) & mask
      const p = i * 3
      slots[p] = old[o]!
      slots[p + 1] = old[o + 1]!
      slots[p + 2] = old[o + 2]!
    }
    this.slots = slots
    this.mask = mask
  }
}
