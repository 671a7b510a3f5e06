import { seasonOfApplication } from './application-csv.ts'
import type { Problem } from './errors.ts'
import { computeFarmBalance, type FarmStorage } from './farm-balance.ts'
import type { FieldOverrides } from './field-csv.ts'
import { parseRateCase, type RateCase } from './rate-case.ts'
import { computeRate, type RateResult, type Warning } from './rate.ts'
import {
  cropNameValues,
  methodValues,
  previousCropValues,
  soilTestMethodValues,
  speciesValues,
  type ReferenceSet,
  type ReferenceSource,
  type Species,
} from './reference-sets/reference-set.ts'
import { findBookValues } from './reference-sets/registry.ts'
import { computeSampleStats } from './sampling.ts'
import type { StorageGeometry } from './storage.ts'

/**
 * Planning one farm for one season: pure. The database layer (shared/db/plans.ts) loads a
 * FarmSnapshot and stores what computePlan returns; this module decides everything in between.
 *
 * For each storage, the analysis that stands for what will be spread is its latest sampling
 * round: the lab results within `samplingRoundDays` of its latest result dated on or before the
 * as-of date, combined by computeSampleStats (mean, spread, number, CV). Without lab results the
 * reference set's book values stand in, with a warning. For each field, ONE RateCase (the
 * calculator's own input format) is built from its crop season, soil test, storage analysis,
 * method, residual N of the last two seasons' applications and its overrides, and computeRate
 * gives the field's numbers: a plan field equals `pitside calc rate` of its stored case.
 */

/** Samples within this many days of a storage's latest sample form one sampling round (common practice). */
export const samplingRoundDays = 45

/**
 * Ammonium-N as a share of total N, for analyses without ammonium-N (book values that list none,
 * labs that did not measure it). Iowa State University, Odor & Nutrient Management newsletter
 * (1998): ≥ 80 % in anaerobic lagoons, 60–70 % in slurry pits, 10–20 % in solid manure; the
 * midpoints of the ranges are used.
 */
export const ammoniumShareOfTotalN = {
  lagoon: 0.8,
  liquid: 0.65,
  solid: 0.15,
  source: 'Iowa State University Extension, Odor & Nutrient Management newsletter (1998): ammonium share of total N by storage',
} as const

/** Rate at which the residual N of a past application is computed and then scaled (it is linear in the rate). */
const residualReferenceRate = { liquid: 10000, solid: 100 } as const

export type PlanBasis = RateCase['basis']

// ── snapshot: everything a plan is computed from ─────────────────────────────────────────────

/** One lab result, as-is: lb per 1000 US gal (liquid) or per short ton (solid). */
export interface PlanLabResult {
  sampleCode: string
  reportNumber: string
  sampledOn: string
  dryMatterPct: number | null
  totalN: number | null
  ammoniumN: number | null
  p2o5: number | null
  k2o: number | null
}

export interface PlanStorageSnapshot {
  code: string
  name: string | null
  kind: string
  species: string
  form: 'liquid' | 'solid'
  shape: string | null
  lengthFt: number | null
  widthFt: number | null
  diameterFt: number | null
  depthFt: number | null
  sideSlope: number | null
  freeboardFt: number | null
  capacity: number | null
  capacityUnit: string | null
  currentAmount: number | null
  currentAmountOn: string | null
  currentDepthFt: number | null
  /** current (not superseded) results dated on or before the as-of date, oldest first */
  results: PlanLabResult[]
}

export interface PlanApplicationSnapshot {
  appliedOn: string
  storage: string | null
  /** total over the field */
  amount: number
  amountUnit: string
  method: string | null
  incorporatedWithinHours: number | null
}

export interface PlanFieldSnapshot {
  code: string
  name: string | null
  acres: number
  storage: string | null
  method: string | null
  incorporatedWithinHours: number | null
  overrides: FieldOverrides
  cropSeason: { season: number; crop: string; yieldGoal: number | null; previousCrop: string | null } | null
  soilTest: { sampledOn: string | null; pPpm: number | null; pMethod: string | null; kPpm: number | null } | null
  /** applications of the two seasons before the planned one, and of the planned season so far */
  applications: PlanApplicationSnapshot[]
}

export interface FarmSnapshot {
  farm: { code: string; name: string }
  storages: PlanStorageSnapshot[]
  fields: PlanFieldSnapshot[]
}

export interface PlanOptions {
  season: number
  /** YYYY-MM-DD */
  asOf: string
  referenceSet: ReferenceSet
  /** default basis; a field's own `basis` override wins (default n) */
  basis?: PlanBasis
}

// ── result: the plan JSON ────────────────────────────────────────────────────────────────────

type Triple = { n: number | null; p2o5: number | null; k2o: number | null }

export interface PlanAnalysis {
  per: '1000gal' | 'ton'
  dry_matter_pct: number | null
  total_n: number
  ammonium_n: number
  organic_n: number
  p2o5: number
  k2o: number
}

export interface PlanStorageResult {
  storage: string
  name: string | null
  kind: string
  species: string
  form: 'liquid' | 'solid'
  /** unit of in_storage, planned and surplus */
  unit: 'gal' | 'ton'
  in_storage: number | null
  /** recorded: storages.current_amount; depth: geometry at current_depth_ft; null: unknown */
  in_storage_source: 'recorded' | 'depth' | null
  in_storage_on: string | null
  planned: number
  surplus: number | null
  /** area the manure in storage needs at the fields' mean planned rate */
  acres_needed: number | null
  /** acres of the planned fields that draw from this storage */
  acres_available: number
  acres_short: number | null
  typical_rate: number | null
  /** lab: the latest sampling round; book: the reference set's book values (no lab result yet) */
  analysis_source: 'lab' | 'book'
  round: { from: string; to: string; sample_codes: string[] } | null
  /** number of lab results combined */
  samples: number
  analysis: PlanAnalysis | null
  /** coefficient of variation of each analyte over the round, in % (null with fewer than 2 values) */
  cv: Record<'dry_matter_pct' | 'total_n' | 'ammonium_n' | 'p2o5' | 'k2o', number | null> | null
  /** per analyte: n, mean, sd, min, max and the 90 % interval of the mean (null with one value) */
  spread: Record<string, { n: number; mean: number; sd: number | null; min: number; max: number; low: number | null; high: number | null }> | null
  warnings: Warning[]
}

/**
 * One field of a plan: its labels, then computeRate's result for its case, unchanged except that
 * the cited sources are named by id (`source_ids`); the plan lists each source once, in `sources`.
 */
export type PlanFieldResult = {
  field: string
  name: string | null
  acres: number
  crop: string
  yield_goal: number
  storage: string
  method: string
  incorporated_within_hours: number | null
  basis: PlanBasis
  /** residual N credited from earlier applications, lb/ac */
  credits: { manure_n: number; applications: number }
} & Omit<RateResult, 'warnings' | 'sources'> & { source_ids: string[]; warnings: Warning[] }

export interface PlanTotals {
  fields: number
  acres: number
  /** manure planned, per unit */
  planned: { gal: number; ton: number }
  /** nutrients over all planned fields, lb */
  applied_lb: { n: number; p2o5: number; k2o: number }
  supplied_lb: { n: number; p2o5: number; k2o: number }
  supplemental_lb: { n: number; p2o5: number; k2o: number }
  skipped: number
}

export interface PlanBody {
  farm: string
  season: number
  as_of: string
  basis: PlanBasis
  reference_set: string
  reference_set_version: string
  storages: PlanStorageResult[]
  fields: PlanFieldResult[]
  /** fields left out, each with the reason */
  skipped: { field: string; reason: string }[]
  totals: PlanTotals
  warnings: Warning[]
  /** the reference set's sources cited by any field, once each, in the set's order */
  sources: ReferenceSource[]
}

/** What a plan was computed from, stored in plans.inputs: the snapshot and each field's case. */
export interface PlanInputs {
  farm: string
  season: number
  as_of: string
  basis: PlanBasis
  reference_set: { name: string; version: string }
  storages: (Omit<PlanStorageSnapshot, 'results'> & { results_used: PlanLabResult[] })[]
  fields: (PlanFieldSnapshot & { case: RateCase | null; residual: ResidualCredit[] })[]
}

export interface ResidualCredit {
  applied_on: string
  storage: string
  amount: number
  amount_unit: string
  rate: number
  /** 2: the season after the application's; 3: two seasons after */
  year: 2 | 3
  residual_n: number
}

export interface PlanComputation {
  plan: PlanBody
  inputs: PlanInputs
}

// ── helpers ──────────────────────────────────────────────────────────────────────────────────

const round = (x: number, digits = 3) => {
  const f = 10 ** digits
  return Math.round(x * f) / f
}

function daysBefore(date: string, days: number): string {
  const t = Date.UTC(Number(date.slice(0, 4)), Number(date.slice(5, 7)) - 1, Number(date.slice(8, 10))) - days * 86_400_000
  return new Date(t).toISOString().slice(0, 10)
}

const speciesSet = new Set<string>(speciesValues)
const methodSet = new Set<string>(methodValues)
const cropSet = new Set<string>(cropNameValues)
const previousSet = new Set<string>(previousCropValues)
const soilMethodSet = new Set<string>(soilTestMethodValues)

/** The latest sampling round on or before `date`: results (sorted oldest first) within samplingRoundDays of the latest. */
export function findSamplingRound<T extends { sampledOn: string }>(results: readonly T[], date: string): T[] {
  let last = -1
  for (let i = results.length - 1; i >= 0; i--) {
    if (results[i]!.sampledOn <= date) {
      last = i
      break
    }
  }
  if (last < 0) return []
  const from = daysBefore(results[last]!.sampledOn, samplingRoundDays)
  const out: T[] = []
  for (let i = last; i >= 0 && results[i]!.sampledOn >= from; i--) out.push(results[i]!)
  return out.reverse()
}

const analytes = [
  ['dry_matter_pct', 'dryMatterPct'],
  ['total_n', 'totalN'],
  ['ammonium_n', 'ammoniumN'],
  ['p2o5', 'p2o5'],
  ['k2o', 'k2o'],
] as const

interface StorageAnalysis {
  source: 'lab' | 'book'
  round: PlanLabResult[]
  analysis: PlanAnalysis
  cv: PlanStorageResult['cv']
  spread: PlanStorageResult['spread']
  warnings: Warning[]
}

/**
 * The analysis that stands for a storage on a date: its sampling round combined (means), with
 * analytes the round lacks and storages without results filled from book values. Null when there
 * is neither (the warning says so).
 */
function storageAnalysis(s: PlanStorageSnapshot, date: string, set: ReferenceSet): { value: StorageAnalysis | null; warnings: Warning[] } {
  const warnings: Warning[] = []
  const roundResults = findSamplingRound(s.results, date)
  const book = speciesSet.has(s.species) ? findBookValues(s.species as Species, s.form, set, s.kind) : null
  const share = s.kind === 'lagoon' ? ammoniumShareOfTotalN.lagoon : s.form === 'liquid' ? ammoniumShareOfTotalN.liquid : ammoniumShareOfTotalN.solid
  const unit = s.form === 'liquid' ? 'lb/1000 gal' : 'lb/ton'
  const means: Record<string, number | null> = {}
  const cv: Record<string, number | null> = {}
  const spread: NonNullable<PlanStorageResult['spread']> = {}
  if (roundResults.length > 0) {
    for (const [key, prop] of analytes) {
      const values = roundResults.map((r) => r[prop]).filter((v): v is number => v !== null)
      if (values.length === 0) {
        means[key] = null
        cv[key] = null
        continue
      }
      const st = computeSampleStats(values)
      means[key] = round(st.mean)
      cv[key] = st.cv === null ? null : round(st.cv * 100, 1)
      spread[key] = {
        n: st.n,
        mean: round(st.mean),
        sd: st.sd === null ? null : round(st.sd),
        min: st.min,
        max: st.max,
        low: st.interval ? round(st.interval.low) : null,
        high: st.interval ? round(st.interval.high) : null,
      }
    }
  } else if (!book) {
    warnings.push({ code: 'no_analysis', message: `storage ${s.code} has no lab result on or before ${date} and the reference set ${set.name} has no book values for ${s.species} ${s.form} manure` })
    return { value: null, warnings }
  } else {
    warnings.push({
      code: 'book_values',
      message: `storage ${s.code} has no lab result on or before ${date}: planned on book values (${book.source.publisher}${book.source.year ? ` ${book.source.year}` : ''}); sample it before spreading, lab values often differ by 50 % or more`,
    })
  }
  const fromBook = (key: 'total_n' | 'p2o5' | 'k2o' | 'dry_matter_pct', bookValue: number | null | undefined) => {
    if (means[key] !== null && means[key] !== undefined) return
    if (bookValue === null || bookValue === undefined) {
      means[key] = null
      return
    }
    means[key] = bookValue
    if (roundResults.length > 0) warnings.push({ code: 'book_value_for_analyte', message: `storage ${s.code}: the sampling round has no ${key}; used the book value ${bookValue} ${key === 'dry_matter_pct' ? '%' : unit}` })
  }
  fromBook('total_n', book?.totalN.typical)
  fromBook('p2o5', book?.p2o5.typical)
  fromBook('k2o', book?.k2o.typical)
  fromBook('dry_matter_pct', book?.dryMatterPct?.typical)
  if (means.total_n === null || means.p2o5 === null || means.k2o === null) {
    const missing = ['total_n', 'p2o5', 'k2o'].filter((k) => means[k] === null)
    warnings.push({ code: 'no_analysis', message: `storage ${s.code}: no ${missing.join(', ')} in its lab results or book values` })
    return { value: null, warnings }
  }
  if (means.ammonium_n === null || means.ammonium_n === undefined) {
    const bookNh4 = roundResults.length === 0 ? book?.ammoniumN?.typical : undefined
    if (bookNh4 !== undefined) means.ammonium_n = bookNh4
    else {
      means.ammonium_n = round(means.total_n! * share)
      warnings.push({
        code: 'ammonium_assumed',
        message: `storage ${s.code}: no ammonium-N measured; taken as ${share * 100} % of total N for ${s.kind === 'lagoon' ? 'a lagoon' : `${s.form} manure`} (${ammoniumShareOfTotalN.source})`,
      })
    }
  }
  const totalN = means.total_n!
  const ammoniumN = Math.min(means.ammonium_n!, totalN)
  return {
    value: {
      source: roundResults.length > 0 ? 'lab' : 'book',
      round: roundResults,
      analysis: {
        per: s.form === 'liquid' ? '1000gal' : 'ton',
        dry_matter_pct: means.dry_matter_pct ?? null,
        total_n: totalN,
        ammonium_n: ammoniumN,
        organic_n: round(totalN - ammoniumN),
        p2o5: means.p2o5!,
        k2o: means.k2o!,
      },
      cv: roundResults.length > 0 ? (cv as NonNullable<PlanStorageResult['cv']>) : null,
      spread: roundResults.length > 0 ? spread : null,
      warnings,
    },
    warnings,
  }
}

function manureOf(s: PlanStorageSnapshot, a: PlanAnalysis): RateCase['manure'] {
  const m: RateCase['manure'] = {
    form: s.form,
    species: (speciesSet.has(s.species) ? s.species : 'other') as Species,
    units: s.form === 'liquid' ? 'lb_per_1000gal' : 'lb_per_ton',
    basis: 'as_is',
    total_n: a.total_n,
    ammonium_n: a.ammonium_n,
    p2o5: a.p2o5,
    k2o: a.k2o,
  }
  if (a.dry_matter_pct !== null) m.dry_matter_pct = a.dry_matter_pct
  return m
}

function applicationOf(method: string, hours: number | null, overrides: FieldOverrides): RateCase['application'] {
  const a: RateCase['application'] = { method: method as RateCase['application']['method'] }
  if (method === 'broadcast_incorporated' && hours !== null) a.incorporated_within_hours = hours
  for (const k of ['ammonium_retention', 'organic_n_release', 'n_availability', 'p2o5_availability', 'k2o_availability'] as const) {
    const v = overrides[k]
    if (typeof v === 'number') a[k] = v
  }
  return a
}

/** What is in a storage now, in gal (liquid) or ton (solid): the recorded amount, else the geometry at the measured depth. */
function inStorage(s: PlanStorageSnapshot): { amount: number | null; source: 'recorded' | 'depth' | null; geometry: FarmStorage | null; warning?: Warning } {
  const unit = s.form === 'liquid' ? 'gal' : 'ton'
  if (s.currentAmount !== null) {
    if (s.capacityUnit && s.capacityUnit !== unit) {
      return { amount: null, source: null, geometry: null, warning: { code: 'in_storage_unit', message: `storage ${s.code}: current amount is in ${s.capacityUnit}, expected ${unit} for ${s.form} manure; balance left out` } }
    }
    return { amount: s.currentAmount, source: 'recorded', geometry: { name: s.code, amount: s.currentAmount } }
  }
  if (s.currentDepthFt !== null && s.form === 'liquid' && s.depthFt !== null) {
    let geometry: StorageGeometry | null = null
    if (s.shape === 'rectangular' && s.lengthFt && s.widthFt) geometry = { shape: 'rectangular', length: s.lengthFt, width: s.widthFt, depth: s.depthFt }
    else if (s.shape === 'circular' && s.diameterFt) geometry = { shape: 'circular', diameter: s.diameterFt, depth: s.depthFt }
    else if (s.shape === 'basin' && s.lengthFt && s.widthFt && s.sideSlope !== null) {
      geometry = { shape: 'basin', topLength: s.lengthFt, topWidth: s.widthFt, depth: s.depthFt, sideSlope: s.sideSlope }
    }
    if (geometry) {
      const storage: FarmStorage = {
        name: s.code,
        geometry: { geometry, units: 'us', manureDepth: s.currentDepthFt, ...(s.freeboardFt !== null ? { freeboard: s.freeboardFt } : {}) },
      }
      try {
        const b = computeFarmBalance({ form: 'liquid', units: 'us', storages: [storage], planned: [], areaAvailable: 0 })
        return { amount: round(b.stored, 0), source: 'depth', geometry: { name: s.code, amount: round(b.stored, 0) } }
      } catch (error) {
        return { amount: null, source: null, geometry: null, warning: { code: 'in_storage_geometry', message: `storage ${s.code}: ${(error as Error).message}` } }
      }
    }
  }
  return {
    amount: null,
    source: null,
    geometry: null,
    warning: { code: 'in_storage_unknown', message: `storage ${s.code}: no current amount${s.form === 'liquid' ? ' or measured depth with its geometry' : ''}; the balance of planned against stored is left out` },
  }
}

// ── the plan ─────────────────────────────────────────────────────────────────────────────────

/**
 * Computes one farm's plan for a season. Returns the plan JSON (without id, version and
 * created_at, which the database assigns) and the inputs to store with it. Fields that cannot be
 * planned (no crop season for the season, no storage or method, a storage without any analysis,
 * a case the calculator refuses) are listed in `skipped` with the reason. Pure; never throws for
 * data problems.
 */
export function computePlan(snapshot: FarmSnapshot, options: PlanOptions): PlanComputation {
  const set = options.referenceSet
  const defaultBasis = options.basis ?? 'n'
  const planWarnings: Warning[] = []
  const storagesByCode = new Map(snapshot.storages.map((s) => [s.code, s]))
  const analyses = new Map<string, StorageAnalysis | null>()
  const storageWarnings = new Map<string, Warning[]>()
  for (const s of snapshot.storages) {
    const { value, warnings } = storageAnalysis(s, options.asOf, set)
    analyses.set(s.code, value)
    storageWarnings.set(s.code, [...warnings])
  }

  // residual N per unit of rate, by storage, round, method and incorporation
  const residualCache = new Map<string, RateResult['residual_n'] | null>()
  const analysisAt = new Map<string, StorageAnalysis | null>()
  const residualPerRate = (s: PlanStorageSnapshot, appliedOn: string, method: string, hours: number | null): { year2: number; year3: number } | null => {
    // the round that stood for the storage when it was spread; the plan's own when there was none yet
    const first = findSamplingRound(s.results, appliedOn)[0]
    const roundKey = `${s.code}|${first?.sampledOn ?? 'plan'}`
    let a = analysisAt.get(roundKey)
    if (a === undefined) {
      a = first ? storageAnalysis(s, appliedOn, set).value : (analyses.get(s.code) ?? null)
      analysisAt.set(roundKey, a)
    }
    if (!a) return null
    const key = `${roundKey}|${method}|${hours}`
    let r = residualCache.get(key)
    if (r === undefined) {
      const ref = residualReferenceRate[s.form]
      const c: RateCase = { manure: manureOf(s, a.analysis), application: applicationOf(method, hours, {}), need: {}, fixed_rate: ref, basis: 'n', units: 'us', reference_set: set.name }
      const parsed = parseRateCase(c, { referenceSets: [set] })
      r = parsed.value ? computeRate(parsed.value, { referenceSet: set }).residual_n : null
      if (r) r = { year2: r.year2 / ref, year3: r.year3 / ref }
      residualCache.set(key, r)
    }
    return r
  }

  const fields: PlanFieldResult[] = []
  const skipped: { field: string; reason: string }[] = []
  const inputFields: PlanInputs['fields'] = []
  const plannedBy = new Map<string, { area: number; rate: number; name: string }[]>()
  const citedIds = new Set<string>()

  for (const f of snapshot.fields) {
    const residual: ResidualCredit[] = []
    const skip = (reason: string) => {
      skipped.push({ field: f.code, reason })
      inputFields.push({ ...f, case: null, residual })
    }
    const cs = f.cropSeason
    if (!cs || cs.season !== options.season) {
      skip(`no crop season ${options.season} (add it to the fields file)`)
      continue
    }
    if (!f.storage) {
      skip('no storage to draw manure from')
      continue
    }
    const storage = storagesByCode.get(f.storage)
    if (!storage) {
      skip(`storage ${f.storage} is not a storage of farm ${snapshot.farm.code}`)
      continue
    }
    const analysis = analyses.get(storage.code)
    if (!analysis) {
      skip(`storage ${storage.code} has no analysis (no lab result and no book values)`)
      continue
    }
    if (!f.method || !methodSet.has(f.method)) {
      skip(f.method ? `method ${f.method} is not one of ${methodValues.join(', ')}` : 'no application method')
      continue
    }
    if (!cropSet.has(cs.crop)) {
      skip(`crop ${cs.crop} is not one of ${cropNameValues.join(', ')}`)
      continue
    }
    if (cs.yieldGoal === null || !(cs.yieldGoal > 0)) {
      skip('no yield goal')
      continue
    }
    const fieldWarnings: Warning[] = [...analysis.warnings.filter((w) => w.code === 'book_values')]

    // residual N of the last two seasons' applications (the engine's residual model)
    let manureN = 0
    for (const app of f.applications) {
      const appSeason = seasonOfApplication(app.appliedOn)
      const year = options.season - appSeason + 1
      if (year === 1) {
        if (app.appliedOn <= options.asOf) {
          fieldWarnings.push({
            code: 'applied_this_season',
            message: `${app.amount} ${app.amountUnit} were already applied on ${app.appliedOn} for this season; they are not credited in this plan (reduce the need with an n_need override)`,
          })
        }
        continue
      }
      if (year !== 2 && year !== 3) continue
      const from = app.storage ? storagesByCode.get(app.storage) : storage
      if (!from) continue
      const expected = from.form === 'liquid' ? 'gal' : 'ton'
      if (app.amountUnit !== expected) {
        fieldWarnings.push({ code: 'residual_unit', message: `the application of ${app.appliedOn} is in ${app.amountUnit} but storage ${from.code} holds ${from.form} manure; no residual N credited for it` })
        continue
      }
      const method = app.method && methodSet.has(app.method) ? app.method : f.method
      const perRate = residualPerRate(from, app.appliedOn, method, app.method ? app.incorporatedWithinHours : f.incorporatedWithinHours)
      if (!perRate) continue
      const rate = app.amount / f.acres
      const n = rate * (year === 2 ? perRate.year2 : perRate.year3)
      manureN += n
      residual.push({ applied_on: app.appliedOn, storage: from.code, amount: app.amount, amount_unit: app.amountUnit, rate: round(rate, 1), year, residual_n: round(n, 2) })
    }

    const o = f.overrides
    const basis: PlanBasis = o.basis ?? defaultBasis
    const crop: NonNullable<RateCase['crop']> = { name: cs.crop as NonNullable<RateCase['crop']>['name'], yield_goal: cs.yieldGoal }
    if (cs.previousCrop && previousSet.has(cs.previousCrop)) crop.previous_crop = cs.previousCrop as NonNullable<RateCase['crop']>['previous_crop']
    const soil = f.soilTest
    if (soil?.pMethod && soilMethodSet.has(soil.pMethod)) {
      const method = soil.pMethod as NonNullable<RateCase['crop']>['soil_test_p_method']
      if (soil.pPpm !== null) {
        crop.soil_test_p_ppm = soil.pPpm
        crop.soil_test_p_method = method
      }
      // one extraction for both: the fields file gives one soil-test method
      if (soil.kPpm !== null) {
        crop.soil_test_k_ppm = soil.kPpm
        crop.soil_test_k_method = method
      }
    }
    if (manureN > 0) crop.credits = { manure_n: round(manureN, 2) }

    const c: RateCase = {
      manure: manureOf(storage, analysis.analysis),
      application: applicationOf(f.method, f.incorporatedWithinHours, o),
      crop,
      basis,
      units: 'us',
      reference_set: set.name,
      acres: f.acres,
    }
    const need: NonNullable<RateCase['need']> = {}
    if (typeof o.n_need === 'number') need.n = o.n_need
    if (typeof o.p2o5_need === 'number') need.p2o5 = o.p2o5_need
    if (typeof o.k2o_need === 'number') need.k2o = o.k2o_need
    if (Object.keys(need).length > 0) c.need = need
    if (typeof o.max_rate === 'number') c.max_rate = o.max_rate
    if (typeof o.applicator_capacity === 'number') c.applicator_capacity = o.applicator_capacity

    const parsed = parseRateCase(c, { referenceSets: [set] })
    if (!parsed.value) {
      skip(`the calculator refuses its case: ${parsed.problems.map((p) => `${(p.path ?? []).join('.')}: ${p.message}`).join('; ')}`)
      continue
    }
    const r = computeRate(parsed.value, { referenceSet: set })
    inputFields.push({ ...f, case: c, residual })
    const { warnings: engineWarnings, sources, ...numbers } = r
    const sourceIds = sources.map((x) => x.id)
    for (const id of sourceIds) citedIds.add(id)
    fields.push({
      field: f.code,
      name: f.name,
      acres: f.acres,
      crop: cs.crop,
      yield_goal: cs.yieldGoal,
      storage: storage.code,
      method: f.method,
      incorporated_within_hours: f.method === 'broadcast_incorporated' ? f.incorporatedWithinHours : null,
      basis,
      credits: { manure_n: round(manureN, 2), applications: residual.length },
      ...numbers,
      source_ids: sourceIds,
      warnings: [...engineWarnings, ...fieldWarnings],
    })
    const list = plannedBy.get(storage.code) ?? []
    list.push({ name: f.code, area: f.acres, rate: r.rate })
    plannedBy.set(storage.code, list)
  }

  const storages: PlanStorageResult[] = snapshot.storages.map((s) => {
    const a = analyses.get(s.code) ?? null
    const warnings = storageWarnings.get(s.code)!
    const planned = plannedBy.get(s.code) ?? []
    const now = inStorage(s)
    if (now.warning && planned.length > 0) warnings.push(now.warning)
    const acresAvailable = planned.reduce((x, p) => x + p.area, 0)
    let balance: ReturnType<typeof computeFarmBalance> | null = null
    if (now.geometry) {
      balance = computeFarmBalance({ form: s.form, units: 'us', storages: [now.geometry], planned, areaAvailable: acresAvailable })
      if (planned.length > 0) for (const w of balance.warnings) warnings.push({ code: 'storage_balance', message: `storage ${s.code}: ${w}` })
    }
    const plannedAmount = planned.reduce((x, p) => x + p.area * p.rate, 0)
    return {
      storage: s.code,
      name: s.name,
      kind: s.kind,
      species: s.species,
      form: s.form,
      unit: s.form === 'liquid' ? 'gal' : 'ton',
      in_storage: now.amount,
      in_storage_source: now.source,
      in_storage_on: now.source === 'recorded' ? s.currentAmountOn : null,
      planned: round(plannedAmount, 0),
      surplus: balance ? round(balance.surplus, 0) : null,
      acres_needed: balance?.areaNeeded === null || !balance ? null : round(balance.areaNeeded, 1),
      acres_available: round(acresAvailable, 2),
      acres_short: balance?.areaShort === null || !balance ? null : round(balance.areaShort, 1),
      typical_rate: balance?.typicalRate === null || !balance ? null : round(balance.typicalRate, 1),
      analysis_source: a?.source ?? 'book',
      round: a && a.source === 'lab' ? { from: a.round[0]!.sampledOn, to: a.round[a.round.length - 1]!.sampledOn, sample_codes: a.round.map((r) => r.sampleCode) } : null,
      samples: a?.round.length ?? 0,
      analysis: a?.analysis ?? null,
      cv: a?.cv ?? null,
      spread: a?.spread ?? null,
      warnings,
    }
  })

  const totals: PlanTotals = {
    fields: fields.length,
    acres: round(fields.reduce((x, f) => x + f.acres, 0), 2),
    planned: { gal: 0, ton: 0 },
    applied_lb: { n: 0, p2o5: 0, k2o: 0 },
    supplied_lb: { n: 0, p2o5: 0, k2o: 0 },
    supplemental_lb: { n: 0, p2o5: 0, k2o: 0 },
    skipped: skipped.length,
  }
  for (const f of fields) {
    if (f.total_manure !== null) totals.planned[f.total_manure_unit === 'gal' ? 'gal' : 'ton'] += f.total_manure
    for (const k of ['n', 'p2o5', 'k2o'] as const) {
      totals.applied_lb[k] += f.applied[k] * f.acres
      totals.supplied_lb[k] += f.supplied[k] * f.acres
      totals.supplemental_lb[k] += (f.supplemental[k] ?? 0) * f.acres
    }
  }
  totals.planned.gal = round(totals.planned.gal, 0)
  totals.planned.ton = round(totals.planned.ton, 1)
  for (const t of [totals.applied_lb, totals.supplied_lb, totals.supplemental_lb]) for (const k of ['n', 'p2o5', 'k2o'] as const) t[k] = round(t[k], 0)
  if (skipped.length > 0) planWarnings.push({ code: 'fields_skipped', message: `${skipped.length} field${skipped.length === 1 ? '' : 's'} not planned: ${skipped.map((s) => `${s.field} (${s.reason})`).join('; ')}` })
  if (fields.length === 0) planWarnings.push({ code: 'no_fields', message: `no field of farm ${snapshot.farm.code} could be planned for ${options.season}` })

  return {
    plan: {
      farm: snapshot.farm.code,
      season: options.season,
      as_of: options.asOf,
      basis: defaultBasis,
      reference_set: set.name,
      reference_set_version: set.version,
      storages,
      fields,
      skipped,
      totals,
      warnings: planWarnings,
      sources: set.sources.filter((x) => citedIds.has(x.id)),
    },
    inputs: {
      farm: snapshot.farm.code,
      season: options.season,
      as_of: options.asOf,
      basis: defaultBasis,
      reference_set: { name: set.name, version: set.version },
      storages: snapshot.storages.map(({ results, ...rest }) => {
        const a = analyses.get(rest.code)
        return { ...rest, results_used: a?.round ?? [] }
      }),
      fields: inputFields,
    },
  }
}

/** The plan JSON as printed by `pitside plan --json` (one element of `plans`) and stored in plans.result (without id). */
export function planJson(body: PlanBody, meta: { id?: number; version: number; createdAt: string }) {
  const { farm, season, reference_set, ...rest } = body
  return {
    ...(meta.id !== undefined ? { id: meta.id } : {}),
    farm,
    season,
    version: meta.version,
    reference_set,
    created_at: meta.createdAt,
    ...rest,
  }
}

export type PlanJson = ReturnType<typeof planJson>

/** Problems with the plan options, as values: an as-of date that is not a date, a season far from it. */
export function checkPlanOptions(o: { season: number; asOf: string }): Problem[] {
  const problems: Problem[] = []
  if (!Number.isInteger(o.season) || o.season < 1900 || o.season > 2200) problems.push({ code: 'invalid_season', column: 'season', message: `expected a year such as 2027, found ${o.season}` })
  if (!/^\d{4}-\d{2}-\d{2}$/.test(o.asOf) || Number.isNaN(Date.parse(o.asOf))) problems.push({ code: 'invalid_date', column: 'as-of', message: `expected a date YYYY-MM-DD, found ${o.asOf}` })
  return problems
}
