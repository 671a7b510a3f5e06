/**
 * Reading single cells of spreadsheet exports: numbers with either decimal mark, below-detection
 * qualifiers, dates in the forms spreadsheets write, and header names with units or odd spacing.
 * Pure; each reader returns a value or a reason, never throws.
 */

export type CellResult<T> = { ok: true; value: T } | { ok: false; reason: string }

export interface NumberCell {
  value: number
  /** '<' for below detection ("<0.1"), '>' for above the reporting range; null when exact. */
  qualifier: '<' | '>' | null
}

export type DecimalMark = '.' | ','

const spreadsheetErrors = /^#(VALUE!|REF!|DIV\/0!|N\/A|NAME\?|NUM!|NULL!|SPILL!|CALC!|#+)$/i

/**
 * Reads a number written with the file's decimal mark. Thousands separators are accepted only
 * where they cannot be misread (`1.234,5` in a decimal-comma file); `1,234` in a decimal-point
 * file could be 1.234 or 1234 and is refused rather than guessed.
 */
export function parseNumberCell(raw: string, decimal: DecimalMark = '.'): CellResult<NumberCell> {
  let s = raw.trim()
  if (s === '') return { ok: false, reason: 'is empty' }
  if (spreadsheetErrors.test(s)) return { ok: false, reason: `"${s}" is a spreadsheet error, not a number` }
  let qualifier: NumberCell['qualifier'] = null
  const first = s.charCodeAt(0)
  if (first === 60 /* < */ || first === 62 /* > */) {
    qualifier = first === 60 ? '<' : '>'
    s = s.slice(1).trim()
    if (s.charCodeAt(0) === 61 /* = */) s = s.slice(1).trim()
  }
  // fast path: plain decimal with the file's mark
  const other = decimal === '.' ? ',' : '.'
  if (s.indexOf(other) === -1) {
    const t = decimal === ',' ? s.replace(',', '.') : s
    if (/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(t)) {
      const value = Number(t)
      if (Number.isFinite(value)) return { ok: true, value: { value, qualifier } }
    }
    return { ok: false, reason: `"${raw.trim()}" is not a number` }
  }
  const grouped = decimal === '.' ? /^[+-]?\d{1,3}(,\d{3})+(\.\d+)?$/ : /^[+-]?\d{1,3}(\.\d{3})+(,\d+)?$/
  if (grouped.test(s)) {
    if (s.indexOf(decimal) === -1) {
      return {
        ok: false,
        reason: `"${raw.trim()}" is ambiguous: "${other}" could be a decimal mark or a thousands separator (write the number without thousands separators)`,
      }
    }
    const value = Number(s.split(other).join('').replace(',', '.'))
    return { ok: true, value: { value, qualifier } }
  }
  return {
    ok: false,
    reason: `"${raw.trim()}" uses "${other}" but this file's decimal mark is "${decimal}"`,
  }
}

const isoDate = /^(\d{4})-(\d{1,2})-(\d{1,2})(?:[T ].*)?$/
const slashYmd = /^(\d{4})\/(\d{1,2})\/(\d{1,2})$/
const usDate = /^(\d{1,2})\/(\d{1,2})\/(\d{4})$/
const dottedDate = /^(\d{1,2})\.(\d{1,2})\.(\d{4})$/
const serialDate = /^\d{5}(\.\d+)?$/

/**
 * Reads a date as ISO `YYYY-MM-DD`. Accepts ISO dates, `YYYY/MM/DD`, US `M/D/YYYY`, `D.M.YYYY`,
 * and spreadsheet serial day numbers (1900 date system: day 1 is 1900-01-01, 25569 is 1970-01-01).
 */
export function parseDateCell(raw: string): CellResult<string> {
  const s = raw.trim()
  if (s === '') return { ok: false, reason: 'is empty' }
  let m: RegExpExecArray | null
  let y: number, mo: number, d: number
  if ((m = isoDate.exec(s)) || (m = slashYmd.exec(s))) {
    y = Number(m[1]); mo = Number(m[2]); d = Number(m[3])
  } else if ((m = usDate.exec(s))) {
    y = Number(m[3]); mo = Number(m[1]); d = Number(m[2])
  } else if ((m = dottedDate.exec(s))) {
    y = Number(m[3]); mo = Number(m[2]); d = Number(m[1])
  } else if (serialDate.test(s)) {
    const serial = Math.floor(Number(s))
    if (serial < 20000 || serial > 80000) return { ok: false, reason: `"${s}" is not a date` }
    const ms = (serial - 25569) * 86_400_000
    return { ok: true, value: new Date(ms).toISOString().slice(0, 10) }
  } else {
    return { ok: false, reason: `"${s}" is not a date (expected YYYY-MM-DD)` }
  }
  const date = new Date(Date.UTC(y, mo - 1, d))
  if (date.getUTCFullYear() !== y || date.getUTCMonth() !== mo - 1 || date.getUTCDate() !== d) {
    return { ok: false, reason: `"${s}" is not a real date` }
  }
  return { ok: true, value: date.toISOString().slice(0, 10) }
}

export interface HeaderName {
  /** lower_snake_case name, units and punctuation removed: "Total N (lb/1000 gal)" → "total_n" */
  key: string
  /** the unit written in brackets after the name, if any: "lb/1000 gal" */
  unit: string | null
}

/** Normalizes a header cell so that case, spacing, punctuation and a bracketed unit are forgiven. */
export function normalizeHeader(raw: string): HeaderName {
  let s = raw.replace(/^\ufeff/, '').trim()
  let unit: string | null = null
  const bracket = /[([]\s*([^)\]]*?)\s*[)\]]\s*$/.exec(s)
  if (bracket) {
    unit = bracket[1] || null
    s = s.slice(0, bracket.index)
  }
  const key = s
    .toLowerCase()
    .replace(/%/g, ' pct ')
    .replace(/[-\s./]+/g, '_')
    .replace(/[^a-z0-9_]/g, '')
    .replace(/_+/g, '_')
    .replace(/^_|_$/g, '')
  return { key, unit }
}

/**
 * Sees whether a decimal-comma convention is in use: a semicolon-delimited file whose cells
 * carry commas between digits. Files can also state it explicitly through an import profile.
 */
export function detectDecimalMark(delimiter: string, sampleCells: readonly string[]): DecimalMark {
  if (delimiter !== ';') return '.'
  for (const cell of sampleCells) if (/\d,\d/.test(cell)) return ','
  return '.'
}

const pow10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15]

/**
 * The value of the UTF-8 text bytes[from, to) when it is a plain decimal (digits, optionally a point and more
 * digits: `\d+(\.\d+)?`), read from the bytes without making a string; -1 when it is not.
 * Equal to Number() of the same text: with at most 15 digits the digits make an exact integer and
 * dividing it by an exact power of ten rounds once, as Number() does; longer texts go through Number().
 */
export function readPlainDecimal(text: Uint8Array, from: number, to: number): number {
  let i = from
  let m = 0
  let digits = 0
  let c = 0
  for (; i < to; i++) {
    c = text[i]!
    if (c < 48 || c > 57) break
    m = m * 10 + (c - 48)
    digits++
  }
  if (digits === 0) return -1
  let decimals = 0
  if (i < to) {
    if (c !== 46 /* . */ || i + 1 === to) return -1
    for (i++; i < to; i++) {
      c = text[i]!
      if (c < 48 || c > 57) return -1
      m = m * 10 + (c - 48)
      decimals++
    }
    digits += decimals
  }
  if (digits > 15) return Number(String.fromCharCode(...text.subarray(from, to)))
  return decimals === 0 ? m : m / pow10[decimals]!
}

/**
 * Whether text[from, to) is a decimal written the way String(Number(text)) writes it back, with at
 * most 6 integer digits and 8 decimals: the pattern `canonicalDecimal` of shared/lab-reported.ts,
 * checked on the bytes in place.
 */
export function isCanonicalDecimalAt(text: Uint8Array, from: number, to: number): boolean {
  if (from >= to) return false
  let i = from
  const first = text[i++]!
  if (first >= 49 && first <= 57) {
    for (let n = 0; n < 5 && i < to; n++, i++) {
      const c = text[i]!
      if (c < 48 || c > 57) break
    }
  } else if (first !== 48) return false
  if (i === to) return true
  if (text[i]! !== 46) return false
  i++
  const decimals = to - i
  if (decimals < 1 || decimals > 8) return false
  for (let k = i; k < to; k++) {
    const c = text[k]!
    if (c < 48 || c > 57) return false
  }
  return text[to - 1] !== 48
}
