import { hasErrors, parseCsvTable, type TableSpec } from './csv-table.ts'
import type { Problem } from './errors.ts'
import {
  cropNameValues,
  methodValues,
  previousCropValues,
  soilTestMethodValues,
  type ApplicationMethod,
  type CropName,
  type PreviousCrop,
  type SoilTestMethod,
} from './reference-sets/reference-set.ts'
import { byLine, checkUniqueKeys, makeRowReader, optional, type ParsedRows, type RowReader } from './row-reader.ts'

// The vocabularies are the reference sets' own, so that what is imported is what the engine reads.
export const cropCodes = cropNameValues
export type CropCode = CropName
/** What grew the season before, as the legume-credit tables name it (alfalfa_second_year: two seasons after alfalfa). */
export const previousCropCodes = previousCropValues
export type PreviousCropCode = PreviousCrop
export const applicationMethods = methodValues
export type { ApplicationMethod }
export const soilTestPMethods = soilTestMethodValues
export type SoilTestPMethod = SoilTestMethod

/** The unit a crop's yield goal is written in, per acre. */
export const yieldGoalUnits: Record<CropCode, 'bu' | 'ton'> = {
  corn_grain: 'bu',
  corn_silage: 'ton',
  soybean: 'bu',
  wheat: 'bu',
  alfalfa: 'ton',
  grass_hay: 'ton',
}

// Yield goals outside these per-acre ranges are probably a typo or the wrong unit (common practice,
// deliberately wide; not an agronomic limit).
const plausibleYieldGoal: Record<CropCode, [number, number]> = {
  corn_grain: [40, 350],
  corn_silage: [5, 40],
  soybean: [15, 110],
  wheat: [20, 180],
  alfalfa: [1, 12],
  grass_hay: [0.5, 10],
}

export const planBases = ['n', 'p2o5', 'lowest'] as const
export type PlanBasis = (typeof planBases)[number]

/**
 * Per-field overrides, stored as JSON in `fields.overrides` under these snake_case keys. Needs are
 * lb per acre that the manure must still supply after all credits; availability factors are
 * fractions (0.75, not 75); max_rate is in the field's rate unit (gal or ton per acre);
 * applicator_capacity is gal or ton per load.
 */
export interface FieldOverrides {
  basis?: PlanBasis
  n_need?: number
  p2o5_need?: number
  k2o_need?: number
  ammonium_retention?: number
  organic_n_release?: number
  n_availability?: number
  p2o5_availability?: number
  k2o_availability?: number
  max_rate?: number
  applicator_capacity?: number
}
export type OverrideKey = keyof FieldOverrides
const needKeys = ['n_need', 'p2o5_need', 'k2o_need'] as const
const fractionKeys = ['ammonium_retention', 'organic_n_release', 'n_availability', 'p2o5_availability', 'k2o_availability'] as const
export const overrideKeys: readonly OverrideKey[] = ['basis', ...needKeys, ...fractionKeys, 'max_rate', 'applicator_capacity']

export interface SoilTestRow {
  sampledOn: string | null
  pPpm: number | null
  pMethod: SoilTestPMethod | null
  kPpm: number | null
  organicMatterPct?: number | null
  ph?: number | null
}

export interface FieldRow {
  line: number
  farmCode: string
  code: string
  acres: number
  season: number
  crop: CropCode
  yieldGoal: number
  previousCrop: PreviousCropCode | null
  /** null when the row gives no soil test values. */
  soilTest: SoilTestRow | null
  storageCode: string | null
  method: ApplicationMethod | null
  incorporatedWithinHours: number | null
  /** Only the override columns the file has: a number or string sets, null clears. */
  overrides: { [K in OverrideKey]?: FieldOverrides[K] | null }
  name?: string | null
  notes?: string | null
}

export const fieldCsvSpec: TableSpec = {
  columns: [
    { key: 'farm', aliases: ['farm_code'], required: true },
    { key: 'field', aliases: ['field_code', 'field_id'], required: true },
    { key: 'acres', aliases: ['area_acres', 'area'], required: true },
    { key: 'season', aliases: ['year', 'crop_year'], required: true },
    { key: 'crop', required: true },
    { key: 'yield_goal', aliases: ['expected_yield'], required: true },
    { key: 'previous_crop', required: true },
    { key: 'soil_test_p_ppm', aliases: ['soil_p_ppm', 'soil_test_p'], required: true },
    { key: 'soil_test_p_method', aliases: ['soil_p_method', 'p_method'], required: true },
    { key: 'soil_test_k_ppm', aliases: ['soil_k_ppm', 'soil_test_k'], required: true },
    { key: 'storage', aliases: ['storage_code', 'source'], required: true },
    { key: 'method', aliases: ['application_method'], required: true },
    { key: 'incorporated_within_hours', aliases: ['incorporation_hours'], required: true },
    ...overrideKeys.map((key) => ({ key })),
    { key: 'soil_test_date', aliases: ['soil_sampled_on'] },
    { key: 'soil_test_om_pct', aliases: ['soil_organic_matter_pct', 'om_pct'] },
    { key: 'soil_test_ph', aliases: ['soil_ph'] },
    { key: 'name', aliases: ['field_name'] },
    { key: 'notes' },
  ],
}

const cropAliases: Record<string, CropCode> = {
  corn: 'corn_grain',
  grain_corn: 'corn_grain',
  silage: 'corn_silage',
  soybeans: 'soybean',
  soy: 'soybean',
  winter_wheat: 'wheat',
  hay: 'grass_hay',
}
const previousCropAliases: Record<string, PreviousCropCode> = {
  corn_grain: 'corn',
  corn_silage: 'corn',
  grain_corn: 'corn',
  silage: 'corn',
  soybeans: 'soybean',
  soy: 'soybean',
  winter_wheat: 'wheat',
  hay: 'grass_hay',
  fallow: 'none',
  alfalfa_2nd_year: 'alfalfa_second_year',
}
const fraction = { min: 0, max: 1, hint: 'a fraction: write 0.75 for 75 %' }

/** Parses a fields file: one row per field and season. */
export function parseFieldCsv(text: string): ParsedRows<FieldRow> {
  const table = parseCsvTable(text, fieldCsvSpec)
  const problems = [...table.problems]
  if (hasErrors(problems)) return { rows: [], problems }
  const rows: FieldRow[] = []
  table.rows.forEach((cells, i) => {
    const r = makeRowReader(table, cells, table.lines[i]!, problems)
    const row = readFieldRow(r)
    if (!r.failed) rows.push(row)
  })
  const unique = checkUniqueKeys(
    rows,
    (f) => `${f.farmCode}\u0000${f.code}\u0000${f.season}`,
    (f) => `field ${f.code} of farm ${f.farmCode} for season ${f.season}`,
    'season',
    problems,
  )
  const kept = checkSameFieldEverySeason(unique, problems)
  return { rows: kept, problems: byLine(problems) }
}

function readFieldRow(r: RowReader): FieldRow {
  const farmCode = r.code('farm', { required: true }) ?? ''
  const code = r.code('field', { required: true }) ?? ''
  const acres = r.number('acres', { required: true, above: 0, max: 100_000 }) ?? 0
  const season = r.integer('season', { required: true, min: 1990, max: 2100 }) ?? 0
  const crop = r.choice('crop', cropCodes, { required: true, aliases: cropAliases })
  const yieldGoal = r.number('yield_goal', { required: true, above: 0 })
  if (crop && yieldGoal !== null) {
    const [low, high] = plausibleYieldGoal[crop]
    if (yieldGoal < low || yieldGoal > high) {
      r.warn('yield_goal', `${yieldGoal} ${yieldGoalUnits[crop]}/ac for ${crop} is outside ${low}–${high}; check the value and its unit`)
    }
  }
  const previousCrop = r.choice('previous_crop', previousCropCodes, { aliases: previousCropAliases })

  const pPpm = r.number('soil_test_p_ppm', { min: 0, max: 2000 })
  const pMethod = r.choice('soil_test_p_method', soilTestPMethods, {
    aliases: { bray: 'bray1', bray_1: 'bray1', bray_p1: 'bray1', m3: 'mehlich3', mehlich_3: 'mehlich3' },
  })
  const kPpm = r.number('soil_test_k_ppm', { min: 0, max: 5000 })
  if (pPpm !== null && pMethod === null && !r.failed) {
    r.error('soil_test_p_method', 'a soil-test P value needs its method: bray1, olsen or mehlich3', 'missing_value')
  }
  const sampledOn = optional(r, 'soil_test_date', () => r.date('soil_test_date')) ?? null
  const organicMatterPct = optional(r, 'soil_test_om_pct', () => r.number('soil_test_om_pct', { min: 0, max: 100 }))
  const ph = optional(r, 'soil_test_ph', () => r.number('soil_test_ph', { min: 2, max: 11 }))
  const anySoil = [pPpm, kPpm, organicMatterPct, ph].some((v) => v !== null && v !== undefined)
  const soilTest: SoilTestRow | null = anySoil
    ? { sampledOn, pPpm, pMethod, kPpm, ...(organicMatterPct !== undefined ? { organicMatterPct } : {}), ...(ph !== undefined ? { ph } : {}) }
    : null
  if (!anySoil && sampledOn) r.warn('soil_test_date', 'a soil-test date without soil-test values is ignored')

  const storageCode = r.code('storage')
  const method = r.choice('method', applicationMethods, {
    aliases: { injection: 'injected', inject: 'injected', surface: 'broadcast', incorporated: 'broadcast_incorporated', irrigation: 'irrigated' },
  })
  const incorporatedWithinHours = r.number('incorporated_within_hours', { min: 0, max: 24 * 30 })
  if (storageCode && !method) {
    r.error('method', `manure from storage ${storageCode} needs a method: ${applicationMethods.join(', ')}`, 'missing_value')
  }
  checkIncorporation(r, method, incorporatedWithinHours)

  const overrides: FieldRow['overrides'] = {}
  if (r.has('basis')) overrides.basis = r.choice('basis', planBases)
  for (const key of needKeys) if (r.has(key)) overrides[key] = r.number(key, { min: 0, max: 1000 })
  for (const key of fractionKeys) if (r.has(key)) overrides[key] = r.number(key, fraction)
  if (r.has('max_rate')) overrides.max_rate = r.number('max_rate', { above: 0 })
  if (r.has('applicator_capacity')) overrides.applicator_capacity = r.number('applicator_capacity', { above: 0 })

  return {
    line: r.line,
    farmCode,
    code,
    acres,
    season,
    crop: crop ?? 'corn_grain',
    yieldGoal: yieldGoal ?? 0,
    previousCrop,
    soilTest,
    storageCode,
    method,
    incorporatedWithinHours,
    overrides,
    name: optional(r, 'name', () => r.text('name', { maxLength: 200 })),
    notes: optional(r, 'notes', () => r.text('notes')),
  }
}

/** incorporated_within_hours belongs to broadcast_incorporated only, and that method needs it. */
export function checkIncorporation(r: RowReader, method: ApplicationMethod | null, hours: number | null): void {
  if (method === 'broadcast_incorporated' && hours === null) {
    r.error('incorporated_within_hours', 'broadcast_incorporated needs the hours from spreading to incorporation', 'missing_value')
  } else if (method !== 'broadcast_incorporated' && hours !== null) {
    r.error(
      'incorporated_within_hours',
      `is only for broadcast_incorporated, but the method is ${method ?? 'empty'} (leave it empty or change the method)`,
    )
  }
}

const sameEverySeason: { label: string; of: (f: FieldRow) => unknown }[] = [
  { label: 'acres', of: (f) => f.acres },
  { label: 'storage', of: (f) => f.storageCode },
  { label: 'method', of: (f) => f.method },
  { label: 'incorporated_within_hours', of: (f) => f.incorporatedWithinHours },
  { label: 'soil test', of: (f) => f.soilTest },
  { label: 'overrides', of: (f) => f.overrides },
  { label: 'name', of: (f) => f.name },
  { label: 'notes', of: (f) => f.notes },
]

/** A field's own columns must agree across the rows of its seasons; the later row is refused otherwise. */
function checkSameFieldEverySeason(rows: FieldRow[], problems: Problem[]): FieldRow[] {
  const first = new Map<string, FieldRow>()
  const kept: FieldRow[] = []
  for (const row of rows) {
    const key = `${row.farmCode}\u0000${row.code}`
    const earlier = first.get(key)
    if (!earlier) {
      first.set(key, row)
      kept.push(row)
      continue
    }
    const differs = sameEverySeason.find((c) => JSON.stringify(c.of(row)) !== JSON.stringify(c.of(earlier)))
    if (differs) {
      problems.push({
        code: 'field_rows_disagree',
        line: row.line,
        column: differs.label === 'soil test' ? 'soil_test_p_ppm' : differs.label,
        message: `field ${row.code} of farm ${row.farmCode}: ${differs.label} differs from the row on line ${earlier.line} (a field's acres, storage, method, soil test and overrides are the same in each of its season rows)`,
      })
      continue
    }
    kept.push(row)
  }
  return kept
}

/** The overrides to store: the stored ones, with the file's columns applied (null removes a key). */
export function mergeOverrides(stored: FieldOverrides, given: FieldRow['overrides']): FieldOverrides {
  const merged: Record<string, unknown> = { ...stored }
  for (const key of overrideKeys) {
    if (!(key in given)) continue
    const v = given[key]
    if (v === null || v === undefined) delete merged[key]
    else merged[key] = v
  }
  const ordered: Record<string, unknown> = {}
  for (const key of overrideKeys) if (key in merged) ordered[key] = merged[key]
  return ordered as FieldOverrides
}
