import type { AnalysisBasis, AnalysisUnits, ManureForm } from './analysis.ts'
import { isCanonicalDecimalAt, parseDateCell, parseNumberCell, readPlainDecimal, type DecimalMark } from './csv-cells.ts'
import { parseCsvTable, type ColumnSpec } from './csv-table.ts'
import { CsvCursor, hashSpans, leadingMarks, RecordIndex, spanText, textBytes, type TextBytes } from './csv.ts'
import type { Problem } from './errors.ts'
import type { LabProfile } from './lab-profile.ts'
import { canonicalDecimal, storedColumns } from './lab-reported.ts'

/**
 * One lab result as the file gives it: codes, the unit and basis it is reported in, and the
 * numbers as reported (not yet converted to as-is lb/1000 gal or lb/ton: that needs the
 * storage's form when the file does not say it; see computeLabResults in shared/lab-results.ts).
 *
 * Below-detection cells such as `<0.1` are read as the detection limit (0.1), an upper bound, with
 * the qualifier kept in `qualifiers` and a warning; they are never read as 0. `>` cells are read
 * as the reported bound, a lower bound, likewise flagged.
 */
export interface LabRow {
  line: number
  reportId: string
  sampleId: string
  /** YYYY-MM-DD */
  sampledOn: string
  farm: string
  storage: string
  /** null when the file does not say: the storage's form is used */
  form: ManureForm | null
  /** lower case; null when the file does not say: the storage's species is used */
  species: string | null
  basis: AnalysisBasis
  units: AnalysisUnits
  lab: string | null
  notes: string | null
  dryMatterPct: number | null
  totalN: number
  ammoniumN: number | null
  p2o5: number | null
  /** elemental P, when the file reports P instead of P2O5 */
  p: number | null
  k2o: number | null
  /** elemental K, when the file reports K instead of K2O */
  k: number | null
  sulfur: number | null
  ph: number | null
  /** JSON object: column → the cell's text as written, for every analysis cell that is not empty */
  reported: string
  /**
   * `reported` without the cells written as plain canonical decimals ("28.71", not "28.710",
   * "028.71" or "<0.1"), whose text String(value) gives back: what a result stored with its
   * values as reported needs to keep (see reportedCells in shared/lab-reported.ts)
   */
  reportedOdd: string
  /** JSON object: column → '<' (below detection) or '>' (above range); null when there are none */
  qualifiers: string | null
  /** warnings about this row (qualifiers, a dry matter derived from moisture, …); null when none */
  warnings: string[] | null
}

export interface LabCsv {
  rows: LabRow[]
  /** Errors (the file must not be imported) and warnings, each with its line and column. */
  problems: Problem[]
  delimiter: string
  decimal: DecimalMark
}

export interface LabCsvOptions {
  /** name used in messages; not read */
  file?: string
  profile?: LabProfile | null
  /** today's date, YYYY-MM-DD: a sampling date after it is refused (default: the current UTC date) */
  today?: string
}

/** The documented lab-file columns and the other names they go by (matched forgivingly). */
export const labColumns: readonly ColumnSpec[] = [
  { key: 'report_id', required: true, aliases: ['report', 'report no', 'report number', 'report_number', 'lab report', 'lab report id'] },
  { key: 'sample_id', required: true, aliases: ['sample', 'sample no', 'sample number', 'sample code', 'sample_code', 'client sample id'] },
  { key: 'sampled_on', required: true, aliases: ['sampled', 'sample date', 'date sampled', 'sampling date', 'sampled date', 'date'] },
  { key: 'farm', required: true, aliases: ['farm code', 'farm id', 'farm_code'] },
  { key: 'storage', required: true, aliases: ['storage code', 'storage id', 'storage_code', 'source'] },
  { key: 'form', aliases: ['manure form', 'manure type', 'physical form'] },
  { key: 'species', aliases: ['animal', 'animal type', 'livestock'] },
  { key: 'basis', aliases: ['reporting basis', 'result basis'] },
  { key: 'units', aliases: ['unit', 'reporting units', 'result units'] },
  { key: 'dry_matter_pct', aliases: ['dry matter', 'dry_matter', 'dm', 'dm pct', 'dry matter pct', 'solids', 'solids pct', 'total solids', 'total solids pct', 'ts'] },
  { key: 'moisture_pct', aliases: ['moisture', 'water', 'water pct', 'h2o'] },
  { key: 'total_n', required: true, aliases: ['total nitrogen', 'n', 'total kjeldahl n', 'tkn', 'n total', 'nitrogen'] },
  { key: 'ammonium_n', aliases: ['nh4 n', 'nh4', 'ammonium', 'ammonium nitrogen', 'nh4 nitrogen', 'ammoniacal n', 'ammonia n', 'nh3 n'] },
  { key: 'p2o5', aliases: ['phosphate', 'total p2o5', 'p2o5 total'] },
  { key: 'p', aliases: ['phosphorus', 'total p', 'total phosphorus', 'p total'] },
  { key: 'k2o', aliases: ['potash', 'total k2o', 'k2o total'] },
  { key: 'k', aliases: ['potassium', 'total k', 'total potassium', 'k total'] },
  { key: 'lab', aliases: ['laboratory', 'lab name'] },
  { key: 'sulfur', aliases: ['s', 'sulphur', 'total s', 'total sulfur'] },
  { key: 'ph' },
  { key: 'notes', aliases: ['note', 'comment', 'comments', 'remarks'] },
]

/** Nutrient columns: reported in the row's units (and the header's units when there is no units column). */
const nutrientKeys = ['total_n', 'ammonium_n', 'p2o5', 'p', 'k2o', 'k', 'sulfur'] as const

const unitAliases: readonly (readonly [string, AnalysisUnits])[] = [
  ['lb_per_1000gal', 'lb_per_1000gal'],
  ['lb/1000 gal', 'lb_per_1000gal'],
  ['lb/1000 US gal', 'lb_per_1000gal'],
  ['lb per 1000 gal', 'lb_per_1000gal'],
  ['lb/kgal', 'lb_per_1000gal'],
  ['lb_per_ton', 'lb_per_ton'],
  ['lb/ton', 'lb_per_ton'],
  ['lb/short ton', 'lb_per_ton'],
  ['lb per ton', 'lb_per_ton'],
  ['pct', 'pct'],
  ['%', 'pct'],
  ['percent', 'pct'],
  ['ppm', 'ppm'],
  ['mg/kg', 'ppm'],
  ['mg_per_l', 'mg_per_l'],
  ['mg/L', 'mg_per_l'],
  ['g_per_l', 'g_per_l'],
  ['g/L', 'g_per_l'],
  ['kg_per_m3', 'kg_per_m3'],
  ['kg/m3', 'kg_per_m3'],
  ['kg/m³', 'kg_per_m3'],
  ['kg_per_t', 'kg_per_t'],
  ['kg/t', 'kg_per_t'],
  ['kg/tonne', 'kg_per_t'],
]

const basisAliases: readonly (readonly [string, AnalysisBasis])[] = [
  ['as_is', 'as_is'],
  ['as is', 'as_is'],
  ['as received', 'as_is'],
  ['as sampled', 'as_is'],
  ['wet', 'as_is'],
  ['fresh', 'as_is'],
  ['dry', 'dry'],
  ['dry weight', 'dry'],
  ['dm', 'dry'],
  ['dry matter', 'dry'],
]

const formAliases: readonly (readonly [string, ManureForm])[] = [
  ['liquid', 'liquid'],
  ['slurry', 'liquid'],
  ['solid', 'solid'],
  ['semi-solid', 'solid'],
  ['litter', 'solid'],
]

/** Lower case without spaces, underscores or hyphens; "lbs" → "lb", "1,000" → "1000", "³" → "3". */
function compact(s: string): string {
  return s.toLowerCase().replace(/[\s_-]+/g, '').replace(/lbs/g, 'lb').replace(/1,000/g, '1000').replace(/³/g, '3')
}

function lookup<T>(aliases: readonly (readonly [string, T])[]): Map<string, T> {
  return new Map(aliases.map(([name, value]) => [compact(name), value]))
}
const unitNames = lookup(unitAliases)
const basisNames = lookup(basisAliases)
const formNames = lookup(formAliases)

/** Reads a unit as labs write it ("lb/1000 gal", "lbs/ton", "%", "mg/kg"); null when unknown. */
export function parseLabUnits(text: string): AnalysisUnits | null {
  return unitNames.get(compact(text)) ?? null
}

/** Reads a reporting basis ("as is", "as received", "dry basis", "DM"); null when unknown. */
export function parseLabBasis(text: string): AnalysisBasis | null {
  const c = compact(text)
  return basisNames.get(c) ?? basisNames.get(c.replace(/basis$/, '')) ?? null
}

/** Splits a header's bracketed unit such as "% dry basis" or "lb/ton, as is" into unit and basis. */
function parseHeaderUnit(text: string): { units: AnalysisUnits | null; basis: AnalysisBasis | null; text: string } {
  let basis: AnalysisBasis | null = null
  let rest = text
  const m = /[,;]?\s*(dry\s*(basis|weight|matter)?|as[\s-]*(is|received|sampled)|wet(\s*basis)?)\s*(basis)?\s*$/i.exec(rest)
  if (m) {
    basis = parseLabBasis(m[1]!)
    rest = rest.slice(0, m.index)
  }
  return { units: rest.trim() === '' ? null : parseLabUnits(rest), basis, text }
}

function todayIso(): string {
  return new Date().toISOString().slice(0, 10)
}

/** Where the text after the first `n` lines starts (LF, CRLF or CR ends), and how many lines there were to skip. */
function afterLines(bytes: Uint8Array, n: number): { offset: number; lines: number } {
  let i = 0
  let seen = 0
  while (i < bytes.length && seen < n) {
    const c = bytes[i]
    if (c === 13) {
      seen++
      if (bytes[i + 1] === 10) i++
    } else if (c === 10) seen++
    i++
  }
  return { offset: i, lines: seen }
}

const plainNumber = /^\d+(\.\d+)?$/

/** The header and the rows after it in about this many bytes are read by parseCsvTable (which detects the decimal mark from them). */
const headBytes = 256 * 1024

/**
 * Where the first run of whole records from `from` ends: just after the first line feed at or
 * after `from + headBytes` that is outside quotes (an even number of quotes before it); the end of
 * the bytes when there is none.
 */
function headEnd(bytes: Uint8Array, from: number): number {
  let quotes = 0
  let nextQuote = bytes.indexOf(34, from)
  let nl = bytes.indexOf(10, Math.min(from + headBytes, bytes.length))
  for (;;) {
    if (nl === -1) return bytes.length
    while (nextQuote !== -1 && nextQuote < nl) {
      quotes++
      nextQuote = bytes.indexOf(34, nextQuote + 1)
    }
    if (quotes % 2 === 0) return nl + 1
    nl = bytes.indexOf(10, nl + 1)
  }
}

function hasPoint(bytes: Uint8Array, from: number, to: number): boolean {
  for (let i = from; i < to; i++) if (bytes[i] === 46) return true
  return false
}

/** The last text read from one column and what it was read as (`has` once it has been read). */
class Recent<T> {
  raw: string | null = null
  has = false
  value: T | undefined = undefined
}

function cached<T>(cache: Map<string, T>, raw: string, read: (raw: string) => T): T {
  let v = cache.get(raw)
  if (v === undefined && !cache.has(raw)) {
    v = read(raw)
    cache.set(raw, v)
  }
  return v as T
}

export interface LabCsvRead {
  /** rows passed to onRow (rows with errors are not passed) */
  rows: number
  problems: Problem[]
  delimiter: string
  decimal: DecimalMark
}

/**
 * The streaming form of parseLabCsv, for big files: calls `onRow` once per good row with ONE row
 * object that is reused for every call (copy what you keep; `warnings` is a fresh array or null).
 * Rows with errors are reported in `problems` and not passed on. Reads the text or, for a big file,
 * its UTF-8 bytes as they are (checked as UTF-8 first, see shared/decode-text.ts: the bytes never
 * become one string), making strings only of the cells a row keeps. Pure apart from the callback;
 * never throws.
 */
export function readLabCsv(text: string | Uint8Array, options: LabCsvOptions, onRow: (row: LabRow) => void): LabCsvRead {
  const profile = options.profile ?? null
  const today = options.today ?? todayIso()
  const rename: Record<string, string> = {}
  if (profile) for (const [from, to] of Object.entries(profile.columns)) rename[from] = to
  const source: TextBytes = textBytes(text)
  // a profile's lines before the header are left out, their line ends kept for the line numbers
  const skipped = afterLines(source, profile?.skipLines ?? 0)
  const bom = skipped.offset === 0 ? leadingMarks(source) : 0

  // the first run of records (header and the rows after it) goes through parseCsvTable, which maps
  // the header and detects the decimal mark; then every row is read in one pass (CsvCursor)
  const firstRun = headEnd(source, skipped.offset)
  const head = '\n'.repeat(skipped.lines) + spanText(source, skipped.offset + bom, firstRun)
  const table = parseCsvTable(head, { columns: labColumns, ignore: ['organic_n'] }, {
    ...(profile?.delimiter ? { delimiter: profile.delimiter } : {}),
    ...(profile?.decimal ? { decimal: profile.decimal } : {}),
    rename,
  })
  const problems: Problem[] = [...table.problems]
  const decimal = table.decimal
  let passed = 0
  const result = (): LabCsvRead => ({ rows: passed, problems, delimiter: table.delimiter, decimal })
  if (problems.some((p) => p.severity !== 'warning' && (p.code === 'no_header' || p.code === 'missing_column' || p.code === 'duplicate_column'))) {
    return result()
  }

  const ix = table.index
  const at = (key: string) => ix[key] ?? -1
  const headerLine = 1 + (profile?.skipLines ?? 0)

  // units and basis given in the header ("Total N (lb/1000 gal)"): used when there is no units/basis column
  let headerUnits: AnalysisUnits | null = null
  let headerUnitsFrom = ''
  let headerBasis: AnalysisBasis | null = null
  for (const key of nutrientKeys) {
    const raw = table.headerUnits[key]
    if (!raw || at(key) < 0) continue
    const hu = parseHeaderUnit(raw)
    if (hu.units === null && hu.basis === null) {
      problems.push({ code: 'unknown_unit', line: headerLine, column: key, message: `the unit "${raw}" in the header is not one Pitside reads (e.g. lb/1000 gal, lb/ton, %, ppm, mg/L, kg/m3, kg/t)` })
      continue
    }
    if (hu.units) {
      if (headerUnits && hu.units !== headerUnits) {
        problems.push({ code: 'mixed_units', line: headerLine, column: key, message: `the header gives ${hu.units} but ${headerUnitsFrom} is in ${headerUnits}: report every nutrient in one unit, or add a units column` })
      } else if (!headerUnits) {
        headerUnits = hu.units
        headerUnitsFrom = key
      }
    }
    if (hu.basis) headerBasis = headerBasis ?? hu.basis
  }
  const dmHeader = table.headerUnits.dry_matter_pct ?? table.headerUnits.moisture_pct
  if (dmHeader && parseLabUnits(dmHeader) !== 'pct') {
    problems.push({ code: 'unknown_unit', line: headerLine, column: at('dry_matter_pct') >= 0 ? 'dry_matter_pct' : 'moisture_pct', message: `dry matter and moisture are read as % of the as-is mass, found the unit "${dmHeader}"` })
  }

  let defaultUnits: AnalysisUnits | null = null
  if (profile?.defaults.units) {
    defaultUnits = parseLabUnits(profile.defaults.units)
    if (!defaultUnits) problems.push({ code: 'unknown_unit', column: 'units', message: `the profile's default unit "${profile.defaults.units}" is not one Pitside reads` })
  }
  let defaultBasis: AnalysisBasis | null = null
  if (profile?.defaults.basis) {
    defaultBasis = parseLabBasis(profile.defaults.basis)
    if (!defaultBasis) problems.push({ code: 'unknown_basis', column: 'basis', message: `the profile's default basis "${profile.defaults.basis}" is not as_is or dry` })
  }
  const fallbackUnits = headerUnits ?? defaultUnits
  const fallbackBasis = headerBasis ?? defaultBasis
  if (at('units') < 0 && !fallbackUnits) {
    problems.push({ code: 'missing_column', line: headerLine, column: 'units', message: 'the file does not say its units: add a units column (lb_per_1000gal, lb_per_ton, pct, ppm, …) or write the unit in the headers, e.g. "Total N (lb/1000 gal)"' })
  }
  if (at('basis') < 0 && !fallbackBasis) {
    problems.push({ code: 'missing_column', line: headerLine, column: 'basis', message: 'the file does not say its basis: add a basis column (as_is or dry) or write it in the headers, e.g. "Total N (lb/ton, as is)"' })
  }
  if (at('p2o5') >= 0 && at('p') >= 0) {
    problems.push({ code: 'conflicting_columns', line: headerLine, column: 'p', message: 'the file has both p and p2o5 columns: keep one' })
  }
  if (at('k2o') >= 0 && at('k') >= 0) {
    problems.push({ code: 'conflicting_columns', line: headerLine, column: 'k', message: 'the file has both k and k2o columns: keep one' })
  }
  for (const [key, alt] of [['ammonium_n', null], ['p2o5', 'p'], ['k2o', 'k']] as const) {
    if (at(key) < 0 && (alt === null || at(alt) < 0)) {
      problems.push({ code: 'missing_column', line: headerLine, column: key, message: `required column "${key}"${alt ? ` (or ${alt})` : ''} is missing` })
    }
  }
  if (at('dry_matter_pct') < 0 && at('moisture_pct') < 0) {
    problems.push({ code: 'missing_column', line: headerLine, column: 'dry_matter_pct', message: 'required column "dry_matter_pct" (or moisture) is missing' })
  }
  if (problems.some((p) => p.severity !== 'warning')) return result()

  const iReport = at('report_id'), iSample = at('sample_id'), iDate = at('sampled_on'), iFarm = at('farm'), iStorage = at('storage')
  const iForm = at('form'), iSpecies = at('species'), iBasis = at('basis'), iUnits = at('units')
  const iDm = at('dry_matter_pct'), iMoisture = at('moisture_pct'), iTotalN = at('total_n'), iNh4 = at('ammonium_n')
  const iP2o5 = at('p2o5'), iP = at('p'), iK2o = at('k2o'), iK = at('k'), iLab = at('lab'), iS = at('sulfur'), iPh = at('ph'), iNotes = at('notes')
  const defaultForm = profile?.defaults.form ?? null
  const defaultSpecies = profile?.defaults.species?.toLowerCase() ?? null
  const defaultLab = profile?.defaults.lab ?? null

  // rows by report and sample, with the line they first appear on
  const seenRecords = new RecordIndex((source.length / Math.max(1, firstRun - skipped.offset)) * (table.rows.length + 1) * 1.1)
  const again = new CsvCursor(source, table.delimiter)
  let rs = 0, re = 0, ss = 0, se = 0 // the current row's report and sample codes
  const sameSpan = (s1: number, e1: number, s2: number, e2: number): boolean => {
    if (e1 - s1 !== e2 - s2) return false
    for (let i = 0; i < e1 - s1; i++) if (source[s1 + i] !== source[s2 + i]) return false
    return true
  }
  const sameCodes = (offset: number): boolean => {
    again.seek(offset)
    again.next()
    if (!again.span(iReport) || !sameSpan(again.spanStart, again.spanEnd, rs, re)) return false
    return again.span(iSample) && sameSpan(again.spanStart, again.spanEnd, ss, se)
  }
  const seen = new Map<string, Map<string, number>>() // codes with doubled quotes: report → sample → line
  const dateCache = new Map<string, string | { reason: string }>()
  const unitCache = new Map<string, AnalysisUnits | null>()
  const basisCache = new Map<string, AnalysisBasis | null>()
  const formCache = new Map<string, ManureForm | null>()
  // consecutive rows mostly repeat a column's text (one report's date, a storage's codes): the last
  // text of each column and what it was read as
  const rDate = new Recent<string | { reason: string }>()
  const rForm = new Recent<ManureForm | null>()
  const rUnits = new Recent<AnalysisUnits | null>()
  const rBasis = new Recent<AnalysisBasis | null>()
  const rSpecies = new Recent<string>()
  const rReport = new Recent<null>()
  const rFarm = new Recent<null>()
  const rStorage = new Recent<null>()
  const rLab = new Recent<null>()

  // the analysis cells of the current row, in the order they are read: `reported` is put together
  // from them only when asked for (a result stored as reported keeps `reportedOdd` instead)
  const repColumns: string[] = []
  const repStarts = new Int32Array(16)
  const repEnds = new Int32Array(16)
  /** the whole entry for a cell read by the general path */
  const repEntries: (string | null)[] = []
  let repCount = 0
  let rowCount = 0
  let reportedRow = -1
  let reportedText = ''
  const reportedOf = (): string => {
    if (reportedRow === rowCount) return reportedText
    let s = '{'
    for (let r = 0; r < repCount; r++) {
      if (r > 0) s += ','
      s += repEntries[r] ?? '"' + repColumns[r]! + '":"' + source.latin1Slice(repStarts[r]!, repEnds[r]!) + '"'
    }
    reportedText = s + '}'
    reportedRow = rowCount
    return reportedText
  }

  const row: LabRow = {
    line: 0, reportId: '', sampleId: '', sampledOn: '', farm: '', storage: '', form: null, species: null,
    basis: 'as_is', units: 'lb_per_1000gal', lab: null, notes: null, dryMatterPct: null, totalN: 0,
    ammoniumN: null, p2o5: null, p: null, k2o: null, k: null, sulfur: null, ph: null, reported: '',
    reportedOdd: '', qualifiers: null, warnings: null,
  }
  Object.defineProperty(row, 'reported', {
    enumerable: true,
    get: reportedOf,
    set: (value: string) => {
      reportedText = value
      reportedRow = rowCount
    },
  })
  let reportedOdd = ''
  let qualifiers = ''
  let line = 0
  let bad = false
  let warnings: string[] | null = null
  const cur = new CsvCursor(source, table.delimiter)
  if (skipped.offset > 0) cur.seek(skipped.offset, skipped.lines + 1)

  const err = (column: string, code: string, message: string) => {
    problems.push({ code, line, column, message })
    bad = true
  }
  const warn = (column: string, message: string) => {
    ;(warnings ??= []).push(`${column}: ${message}`)
  }
  /** cell k trimmed; the previous row's string when the text is the same */
  const textOf = <T>(k: number, recent: Recent<T>): string => {
    if (k < 0) return ''
    const last = recent.raw
    if (last !== null && cur.is(k, last)) return last
    recent.raw = cur.trimmed(k)
    recent.has = false
    return recent.raw
  }
  const readDate = (raw: string): string | { reason: string } => {
    const parsed = parseDateCell(raw)
    return parsed.ok ? parsed.value : { reason: parsed.reason }
  }
  const readForm = (raw: string): ManureForm | null => formNames.get(compact(raw)) ?? null
  const addEntry = (column: string, s: number, e: number, entry: string | null) => {
    if (repCount === repStarts.length) return // never: there are 10 analysis columns
    repColumns[repCount] = column
    repStarts[repCount] = s
    repEnds[repCount] = e
    repEntries[repCount] = entry
    repCount++
  }
  // numbers: plain decimals are read from the characters in place; everything else goes through parseNumberCell
  const num = (k: number, column: string, required: boolean): number | null => {
    if (k < 0) return null
    if (k < cur.count) {
      const s = cur.starts[k]!
      const e = cur.ends[k]!
      if (s >= 0 && s < e) {
        const a = source[s]!
        const b = source[e - 1]!
        // in a decimal-comma file "6.240" is a thousands separator (or ambiguous), never 6.24
        if (a >= 48 && a <= 57 && b >= 48 && b <= 57 && (decimal === '.' || !hasPoint(source, s, e))) {
          const value = readPlainDecimal(source, s, e)
          if (value !== -1) {
            addEntry(column, s, e, null)
            if (!storedColumns.has(column) || !isCanonicalDecimalAt(source, s, e)) {
              const entry = '"' + column + '":"' + source.latin1Slice(s, e) + '"' // digits and a point
              reportedOdd += reportedOdd === '' ? entry : ',' + entry
            }
            return value
          }
        }
      }
    }
    const raw = cur.trimmed(k)
    if (raw === '') {
      if (required) err(column, 'missing', 'is empty (a number is required)')
      return null
    }
    if (plainNumber.test(raw) && (decimal === '.' || raw.indexOf('.') === -1)) {
      const entry = '"' + column + '":"' + raw + '"'
      addEntry(column, 0, 0, entry)
      if (!storedColumns.has(column) || !canonicalDecimal.test(raw)) reportedOdd += reportedOdd === '' ? entry : ',' + entry
      return Number(raw)
    }
    const entry = '"' + column + '":' + JSON.stringify(raw)
    addEntry(column, 0, 0, entry)
    reportedOdd += reportedOdd === '' ? entry : ',' + entry
    const parsed = parseNumberCell(raw, decimal)
    if (!parsed.ok) {
      err(column, 'not_a_number', parsed.reason)
      return null
    }
    const { value, qualifier } = parsed.value
    if (value < 0) {
      err(column, 'negative', `${raw} is negative (a lab value cannot be negative)`)
      return null
    }
    if (qualifier === '<') {
      qualifiers += (qualifiers === '' ? '"' : ',"') + column + '":"<"'
      warn(column, `${raw} is below the lab's detection limit: stored as ${value}, an upper bound`)
    } else if (qualifier === '>') {
      qualifiers += (qualifiers === '' ? '"' : ',"') + column + '":">"'
      warn(column, `${raw} is above the lab's reporting range: stored as ${value}, a lower bound`)
    }
    return value
  }

  const readRow = () => {
    bad = false
    warnings = null
    repCount = 0
    reportedOdd = ''
    qualifiers = ''
    rowCount++

    const reportId = textOf(iReport, rReport)
    const sampleId = iSample < 0 ? '' : cur.trimmed(iSample)
    const farm = textOf(iFarm, rFarm)
    const storage = textOf(iStorage, rStorage)
    if (reportId === '') err('report_id', 'missing', 'is empty (the lab report number, e.g. CRA-24-0117)')
    if (sampleId === '') err('sample_id', 'missing', 'is empty (the sample id written on the bottle)')
    if (farm === '') err('farm', 'missing', 'is empty (the farm code)')
    if (storage === '') err('storage', 'missing', 'is empty (the storage code)')
    if (reportId !== '' && sampleId !== '') {
      let first: number | undefined
      let spans = cur.span(iReport)
      if (spans) {
        rs = cur.spanStart
        re = cur.spanEnd
        spans = cur.span(iSample)
        if (spans) {
          ss = cur.spanStart
          se = cur.spanEnd
          first = seenRecords.add(hashSpans(source, rs, re, ss, se), cur.start, line, sameCodes) || undefined
        }
      }
      if (!spans) {
        // a code with doubled quotes, which no span holds
        let samples = seen.get(reportId)
        if (!samples) seen.set(reportId, (samples = new Map()))
        first = samples.get(sampleId)
        if (first === undefined) samples.set(sampleId, line)
      }
      if (first !== undefined) err('sample_id', 'duplicate_row', `report ${reportId} sample ${sampleId} already appears on line ${first}`)
    }

    let sampledOn = ''
    const rawDate = textOf(iDate, rDate)
    if (!rDate.has) {
      rDate.value = cached(dateCache, rawDate, readDate)
      rDate.has = true
    }
    const d = rDate.value!
    if (typeof d === 'string') {
      if (d > today) err('sampled_on', 'future_date', `${d} is after today (${today})`)
      else sampledOn = d
    } else err('sampled_on', 'invalid_date', d.reason)

    let form: ManureForm | null = defaultForm
    const rawForm = textOf(iForm, rForm)
    if (rawForm !== '') {
      if (!rForm.has) {
        rForm.value = cached(formCache, rawForm, readForm)
        rForm.has = true
      }
      const f = rForm.value!
      if (f) form = f
      else err('form', 'unknown_form', `expected liquid or solid, found "${rawForm}"`)
    }
    const rawSpecies = textOf(iSpecies, rSpecies)
    if (rawSpecies !== '' && !rSpecies.has) {
      rSpecies.value = rawSpecies.toLowerCase()
      rSpecies.has = true
    }
    const species = rawSpecies !== '' ? rSpecies.value! : defaultSpecies

    let units: AnalysisUnits | null = fallbackUnits
    const rawUnits = textOf(iUnits, rUnits)
    if (rawUnits !== '') {
      if (!rUnits.has) {
        rUnits.value = cached(unitCache, rawUnits, parseLabUnits)
        rUnits.has = true
      }
      const u = rUnits.value!
      if (!u) err('units', 'unknown_unit', `"${rawUnits}" is not a unit Pitside reads (lb_per_1000gal, lb_per_ton, pct, ppm, mg_per_l, g_per_l, kg_per_m3, kg_per_t)`)
      else if (headerUnits && u !== headerUnits) err('units', 'mixed_units', `is ${u} but the header says ${headerUnits}`)
      else units = u
    } else if (!units) err('units', 'missing', 'is empty and the header gives no unit')

    let basis: AnalysisBasis | null = fallbackBasis
    const rawBasis = textOf(iBasis, rBasis)
    if (rawBasis !== '') {
      if (!rBasis.has) {
        rBasis.value = cached(basisCache, rawBasis, parseLabBasis)
        rBasis.has = true
      }
      const b = rBasis.value!
      if (b) basis = b
      else err('basis', 'unknown_basis', `expected as_is or dry, found "${rawBasis}"`)
    } else if (!basis) err('basis', 'missing', 'is empty (as_is or dry)')

    let dryMatterPct = num(iDm, 'dry_matter_pct', false)
    const moisture = num(iMoisture, 'moisture_pct', false)
    if (dryMatterPct !== null && dryMatterPct > 100) {
      err('dry_matter_pct', 'dry_matter_range', `expected dry matter between 0 and 100 %, found ${dryMatterPct}`)
      dryMatterPct = null
    }
    if (moisture !== null) {
      if (moisture > 100) err('moisture_pct', 'moisture_range', `expected moisture between 0 and 100 %, found ${moisture}`)
      else if (dryMatterPct !== null) {
        if (Math.abs(dryMatterPct + moisture - 100) > 0.5) {
          err('moisture_pct', 'moisture_disagrees', `moisture ${moisture} % and dry matter ${dryMatterPct} % do not add up to 100 %`)
        }
      } else {
        dryMatterPct = Math.round((100 - moisture) * 1e6) / 1e6
        warn('dry_matter_pct', `taken as 100 − moisture ${moisture} % = ${dryMatterPct} %`)
      }
    }
    const totalN = num(iTotalN, 'total_n', true)
    const ammoniumN = num(iNh4, 'ammonium_n', false)
    const p2o5 = num(iP2o5, 'p2o5', false)
    const p = num(iP, 'p', false)
    const k2o = num(iK2o, 'k2o', false)
    const k = num(iK, 'k', false)
    const sulfur = num(iS, 'sulfur', false)
    const ph = num(iPh, 'ph', false)
    if (ph !== null && ph > 14) err('ph', 'ph_range', `expected a pH between 0 and 14, found ${ph}`)
    if (totalN !== null && ammoniumN !== null && ammoniumN > totalN) {
      err('ammonium_n', 'ammonium_above_total', `${ammoniumN} is larger than total_n ${totalN} (ammonium-N is part of total N)`)
    }
    if (basis === 'dry' && (dryMatterPct === null || dryMatterPct === 0)) {
      err('dry_matter_pct', 'missing_dry_matter', 'a dry-basis result needs dry matter above 0 % to convert to as-is')
    }
    if (bad || totalN === null || !units || !basis) return

    const lab = textOf(iLab, rLab)
    const notes = iNotes < 0 ? '' : cur.trimmed(iNotes)
    row.line = line
    row.reportId = reportId
    row.sampleId = sampleId
    row.sampledOn = sampledOn
    row.farm = farm
    row.storage = storage
    row.form = form
    row.species = species
    row.basis = basis
    row.units = units
    row.lab = lab !== '' ? lab : defaultLab
    row.notes = notes !== '' ? notes : null
    row.dryMatterPct = dryMatterPct
    row.totalN = totalN
    row.ammoniumN = ammoniumN
    row.p2o5 = p2o5
    row.p = p
    row.k2o = k2o
    row.k = k
    row.sulfur = sulfur
    row.ph = ph
    row.reportedOdd = reportedOdd === '' ? '{}' : '{' + reportedOdd + '}'
    row.qualifiers = qualifiers === '' ? null : '{' + qualifiers + '}'
    row.warnings = warnings
    passed++
    onRow(row)
  }

  // one pass over the records after the header: the first run of records has been read by
  // parseCsvTable without a problem (else reading stopped above), so the reader sees the same records
  cur.next() // the header
  const width = cur.count
  while (cur.next()) {
    line = cur.line
    let blank = true
    for (let c = 0; c < cur.count; c++) {
      if (!cur.blank(c)) {
        blank = false
        break
      }
    }
    if (blank) continue // trailing "; ; ;" rows from spreadsheets
    if (cur.count > width) {
      let extra = false
      for (let c = width; c < cur.count; c++) if (!cur.blank(c)) extra = true
      if (extra) {
        problems.push({ code: 'too_many_cells', line, message: `has ${cur.count} cells but the header has ${width} (a delimiter inside a value must be quoted)` })
        continue
      }
    }
    readRow()
  }
  if (cur.problem) problems.push(cur.problem)
  if (passed === 0 && !problems.some((p) => p.severity !== 'warning')) {
    problems.push({ code: 'no_rows', line: headerLine, message: 'the file has a header but no results' })
  }
  return result()
}

/**
 * Reads a lab file's CSV text into lab rows plus every problem found, each with its line and
 * column: bad numbers, negative values, ammonium-N above total N, dry matter outside 0–100 %,
 * moisture and dry matter that disagree, unknown units/basis/form, dates that are not real or lie
 * in the future, a report and sample repeated within the file. Spreadsheet exports are read as they
 * come: BOM, CRLF, `;` with decimal comma, trailing empty rows, quoted newlines. Pure; never throws.
 * Every row is checked even after the first error, so one run lists everything to fix.
 */
export function parseLabCsv(text: string, options: LabCsvOptions = {}): LabCsv {
  const rows: LabRow[] = []
  const read = readLabCsv(text, options, (row) => rows.push({ ...row }))
  return { rows, problems: read.problems, delimiter: read.delimiter, decimal: read.decimal }
}
