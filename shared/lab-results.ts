import { normalizeAnalysis, type AsIsAnalysis, type ManureForm } from './analysis.ts'
import type { Problem } from './errors.ts'
import type { LabRow } from './lab-csv.ts'
import type { BookValues } from './reference-sets/registry.ts'
import { k2oPerK, p2o5PerP } from './units.ts'

/** A storage as the lab import needs it: where results go and what they should look like. */
export interface LabStorage {
  id: number
  farmCode: string
  code: string
  kind: string
  species: string
  form: ManureForm
}

/** Earlier results of one storage, per analysis column: how many, their mean and standard deviation (as-is). */
export interface LabHistory {
  [column: string]: { n: number; mean: number; sd: number } | undefined
}

export interface LabCheckContext {
  /** key: lower-case farm code + '\u0000' + lower-case storage code */
  storages: ReadonlyMap<string, LabStorage>
  /** lower-case farm code → its code as stored and its storages' codes (for messages) */
  farms: ReadonlyMap<string, { code: string; storages: readonly string[] }>
  /** a storage's earlier (not superseded) results */
  history: (storageId: number) => LabHistory | undefined
  /** the book values that stand for a storage (its species, form and kind), or null when none */
  bookValues: (storage: LabStorage) => BookValues | null
  /** sample code → the sampling event recorded for it */
  samplingEvents?: ReadonlyMap<string, { id: number; storageId: number }>
}

/** A lab row resolved to its storage and normalized to as-is lb per 1000 US gal (liquid) or per short ton (solid). */
export interface LabResultValues {
  storageId: number
  samplingEventId: number | null
  form: ManureForm
  species: string
  perUnit: '1000gal' | 'ton'
  dryMatterPct: number | null
  totalN: number
  ammoniumN: number | null
  organicN: number | null
  p2o5: number | null
  k2o: number | null
  sulfur: number | null
  /** the row's own warnings plus plausibility warnings, each "column: reason"; null when none */
  warnings: string[] | null
}

export interface LabResult extends LabResultValues {
  row: LabRow
}

/**
 * How far a value may sit from a storage's own history before it is flagged (common practice,
 * not a published rule): more than a factor of 2 from the mean of at least 2 earlier results, or
 * more than 3 standard deviations from the mean of at least 5.
 */
export const historyRule = { factor: 2, factorMinResults: 2, sds: 3, sdMinResults: 5 } as const

type CheckedColumn = 'total_n' | 'ammonium_n' | 'p2o5' | 'k2o' | 'dry_matter_pct'

/** Drops binary rounding noise (57.3 − 39.2 = 18.099999999999994) at 9 decimals, far below any lab's precision. */
function tidy(x: number | null): number | null {
  return x === null ? null : Math.round(x * 1e9) / 1e9
}

function fmt(x: number): string {
  return String(Math.round(x * 100) / 100)
}

function listed(codes: readonly string[], max = 20): string {
  if (codes.length === 0) return 'none'
  return codes.length > max ? `${codes.slice(0, max).join(', ')}, … (${codes.length} in all)` : codes.join(', ')
}

/** An empty LabResultValues to pass to checkLabRow as its output. */
export function emptyLabResultValues(): LabResultValues {
  return {
    storageId: 0, samplingEventId: null, form: 'liquid', species: '', perUnit: '1000gal', dryMatterPct: null,
    totalN: 0, ammoniumN: null, organicN: null, p2o5: null, k2o: null, sulfur: null, warnings: null,
  }
}

/**
 * Resolves one parsed lab row to its storage, converts it to as-is lb/1000 gal or lb/ton
 * (shared/analysis.ts normalizeAnalysis) and checks plausibility, writing into `out` (reused by
 * bulk imports). Errors, pushed to `problems` (returns false): unknown farm or storage (naming
 * the known ones), a form that contradicts the storage, anything normalizeAnalysis refuses.
 * Warnings, stored with the result: a value outside the book-value range for the storage's
 * species and form, a value far from the storage's own history (historyRule), a species that
 * differs from the storage's, a sample id recorded for another storage. Never throws.
 */
export function checkLabRow(row: LabRow, context: LabCheckContext, problems: Problem[], out: LabResultValues): boolean {
  // rows of one storage usually follow each other: remember the last look-up
  let storage: LabStorage | undefined
  if (last.context === context && last.farm === row.farm && last.storageCode === row.storage) storage = last.storage
  else storage = resolveStorage(row, context, problems)
  if (!storage) return false
  if (row.form && row.form !== storage.form) {
    problems.push({ code: 'form_mismatch', line: row.line, column: 'form', message: `is ${row.form} but storage ${storage.farmCode}/${storage.code} holds ${storage.form} manure` })
    return false
  }
  const form = storage.form
  const a = asStored(row, form) ?? normalizeRow(row, form, problems)
  if (!a) return false

  const warnings = rowWarnings
  warnings.list = row.warnings ? [...row.warnings] : null
  if (row.species && row.species !== storage.species.toLowerCase()) {
    warn(warnings, 'species', `is ${row.species} but storage ${storage.farmCode}/${storage.code} is recorded as ${storage.species}`)
  }
  let samplingEventId: number | null = null
  const events = context.samplingEvents
  const event = events && events.size > 0 ? events.get(row.sampleId) : undefined
  if (event) {
    if (event.storageId === storage.id) samplingEventId = event.id
    else warn(warnings, 'sample_id', `${row.sampleId} was recorded as a sample of another storage; not linked to that sampling event`)
  }

  const book = context.bookValues(storage)
  const history = context.history(storage.id)
  if (book || history) {
    const unit = form === 'liquid' ? 'lb/1000 gal' : 'lb/ton'
    plausible(warnings, 'total_n', a.totalN, unit, form, book, book?.totalN, history?.total_n)
    plausible(warnings, 'ammonium_n', a.ammoniumN, unit, form, book, book?.ammoniumN, history?.ammonium_n)
    plausible(warnings, 'p2o5', a.p2o5, unit, form, book, book?.p2o5, history?.p2o5)
    plausible(warnings, 'k2o', a.k2o, unit, form, book, book?.k2o, history?.k2o)
    plausible(warnings, 'dry_matter_pct', a.dryMatterPct, '%', form, book, book?.dryMatterPct, history?.dry_matter_pct)
  }

  out.storageId = storage.id
  out.samplingEventId = samplingEventId
  out.form = form
  out.species = row.species ?? storage.species
  out.perUnit = a.per
  out.dryMatterPct = tidy(a.dryMatterPct)
  out.totalN = tidy(a.totalN)!
  out.ammoniumN = tidy(a.ammoniumN)
  out.organicN = tidy(a.organicN)
  out.p2o5 = tidy(a.p2o5)
  out.k2o = tidy(a.k2o)
  out.sulfur = tidy(a.sulfur)
  out.warnings = warnings.list
  return true
}

interface Warnings {
  list: string[] | null
}
/** the warnings of the row being checked (one object for every row: checkLabRow does not nest) */
const rowWarnings: Warnings = { list: null }

function warn(w: Warnings, column: string, message: string): void {
  ;(w.list ??= []).push(`${column}: ${message}`)
}

type BookRange = { low: number; high: number } | null | undefined

/** The book-range and history warnings of one value (as-is, in `u`). */
function plausible(w: Warnings, column: CheckedColumn, x: number | null, u: string, form: string, book: BookValues | null, range: BookRange, h: LabHistory[string]): void {
  if (x === null) return
  if (range && (x < range.low || x > range.high)) {
    warn(w, column, `${fmt(x)} ${u} is outside the book range ${fmt(range.low)}–${fmt(range.high)} ${u} for ${book!.species} ${form} manure (book values: ${book!.source.publisher}${book!.source.year ? ` ${book!.source.year}` : ''})`)
  }
  if (h && h.mean > 0) {
    if (h.n >= historyRule.factorMinResults && (x > h.mean * historyRule.factor || x < h.mean / historyRule.factor)) {
      warn(w, column, `${fmt(x)} ${u} is more than a factor of ${historyRule.factor} from this storage's mean of ${fmt(h.mean)} (${h.n} earlier results)`)
    } else if (h.n >= historyRule.sdMinResults && h.sd > 0 && Math.abs(x - h.mean) > historyRule.sds * h.sd) {
      warn(w, column, `${fmt(x)} ${u} is more than ${historyRule.sds} standard deviations (${fmt(h.sd)}) from this storage's mean of ${fmt(h.mean)} (${h.n} earlier results)`)
    }
  }
}

/** normalizeAnalysis of a row, its problems given the row's line; null when it refuses the row. */
function normalizeRow(row: LabRow, form: ManureForm, problems: Problem[]): AsIsAnalysis | null {
  const normalized = normalizeAnalysis({
    form,
    units: row.units,
    basis: row.basis,
    dryMatterPct: row.dryMatterPct ?? undefined,
    totalN: row.totalN,
    ammoniumN: row.ammoniumN ?? undefined,
    p2o5: row.p2o5 ?? undefined,
    p: row.p ?? undefined,
    k2o: row.k2o ?? undefined,
    k: row.k ?? undefined,
    sulfur: row.sulfur ?? undefined,
  })
  if (normalized.value) return normalized.value
  for (const p of normalized.problems) problems.push({ ...p, line: row.line })
  return null
}

function amount(x: number | null): boolean {
  return x === null || (Number.isFinite(x) && x >= 0)
}

/** One object reused for the rows that asStored reads: callers use it before the next row. */
const storedAnalysis: AsIsAnalysis = { per: '1000gal', dryMatterPct: null, totalN: 0, ammoniumN: null, organicN: null, p2o5: null, k2o: null, sulfur: null }

/**
 * The as-is analysis of a row reported as-is in the units its form is stored in, where
 * normalizeAnalysis has nothing to convert (its factor is 1) and nothing to refuse; null for every
 * other row, which goes through normalizeAnalysis. Gives exactly normalizeAnalysis's values.
 */
function asStored(row: LabRow, form: ManureForm): AsIsAnalysis | null {
  if (row.basis !== 'as_is' || row.units !== (form === 'liquid' ? 'lb_per_1000gal' : form === 'solid' ? 'lb_per_ton' : null)) return null
  const dm = row.dryMatterPct
  if (dm !== null && !(Number.isFinite(dm) && dm >= 0 && dm <= 100)) return null
  const { totalN, ammoniumN, p, k } = row
  let { p2o5, k2o } = row
  if (!(Number.isFinite(totalN) && totalN >= 0) || !amount(ammoniumN) || !amount(p2o5) || !amount(p) || !amount(k2o) || !amount(k) || !amount(row.sulfur)) return null
  if ((p !== null && p2o5 !== null) || (k !== null && k2o !== null)) return null
  if (ammoniumN !== null && ammoniumN > totalN) return null
  if (p !== null) p2o5 = p * p2o5PerP
  if (k !== null) k2o = k * k2oPerK
  const a = storedAnalysis
  a.per = form === 'liquid' ? '1000gal' : 'ton'
  a.dryMatterPct = dm
  a.totalN = totalN
  a.ammoniumN = ammoniumN
  a.organicN = ammoniumN === null ? null : totalN - ammoniumN
  a.p2o5 = p2o5
  a.k2o = k2o
  a.sulfur = row.sulfur
  return a
}

const last: { context: LabCheckContext | null; seen: Map<string, Map<string, LabStorage>> | undefined; farm: string; storageCode: string; storage: LabStorage | undefined } = {
  context: null,
  seen: undefined,
  farm: '',
  storageCode: '',
  storage: undefined,
}
/** per context: farm code as written in the file → storage code as written → the storage */
const resolved = new WeakMap<LabCheckContext, Map<string, Map<string, LabStorage>>>()

function resolveStorage(row: LabRow, context: LabCheckContext, problems: Problem[]): LabStorage | undefined {
  let seen = last.context === context ? last.seen : resolved.get(context)
  if (!seen) resolved.set(context, (seen = new Map()))
  let ofFarm = seen.get(row.farm)
  const hit = ofFarm?.get(row.storage)
  if (hit) return remember(context, seen, row, hit)
  const farmKey = row.farm.toLowerCase()
  const farm = context.farms.get(farmKey)
  if (!farm) {
    const known = [...context.farms.values()].map((f) => f.code).sort()
    problems.push({ code: 'unknown_farm', line: row.line, column: 'farm', message: `farm "${row.farm}" is not known (known farms: ${listed(known)}); import it with \`pitside farms import\` first` })
    return undefined
  }
  const storage = context.storages.get(farmKey + '\u0000' + row.storage.toLowerCase())
  if (!storage) {
    problems.push({ code: 'unknown_storage', line: row.line, column: 'storage', message: `storage "${row.storage}" is not a storage of farm ${farm.code} (its storages: ${listed(farm.storages)})` })
    return undefined
  }
  if (!ofFarm) seen.set(row.farm, (ofFarm = new Map()))
  ofFarm.set(row.storage, storage)
  return remember(context, seen, row, storage)
}

function remember(context: LabCheckContext, seen: Map<string, Map<string, LabStorage>>, row: LabRow, storage: LabStorage): LabStorage {
  last.context = context
  last.seen = seen
  last.farm = row.farm
  last.storageCode = row.storage
  last.storage = storage
  return storage
}

/** checkLabRow over an array of rows: the resolved results and every problem. Pure; never throws. */
export function computeLabResults(rows: readonly LabRow[], context: LabCheckContext): { results: LabResult[]; problems: Problem[] } {
  const problems: Problem[] = []
  const results: LabResult[] = []
  for (const row of rows) {
    const out = emptyLabResultValues()
    if (checkLabRow(row, context, problems, out)) results.push({ ...out, row })
  }
  return { results, problems }
}
