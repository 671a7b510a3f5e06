import { z } from 'zod'
import type { Problem } from '../errors.ts'

/**
 * The reference-set format: versioned, cited tables that every computation reads its published
 * numbers from. Built-in sets are written in this format and validated by the same schema as an
 * advisor's own JSON file. Keys are snake_case because this is a file format. All amounts are in
 * US units (lb/ac, lb per bu or ton of yield, lb per 1000 gal or per ton of manure); the engine
 * converts to metric at its edges.
 */

// the value lists live in a module without zod, for code that needs them but not the schema
export * from './reference-values.ts'
import {
  conditionsValues,
  cropNameValues,
  methodValues,
  previousCropValues,
  soilTestMethodValues,
  speciesValues,
  storageKindValues,
  type Species,
} from './reference-values.ts'

const fraction = z.number().min(0).max(1)
const nonNegative = z.number().min(0)
const sourceId = z.string().min(1)
const speciesOrAny = z.enum([...speciesValues, 'any'])
const formOrAny = z.enum(['liquid', 'solid', 'any'])

const sourceSchema = z.strictObject({
  id: z.string().regex(/^[a-z0-9][a-z0-9_-]*$/, 'a short id of lowercase letters, digits, - and _'),
  title: z.string().min(1),
  publisher: z.string().min(1),
  year: z.number().int().nullable(),
  where: z.string().optional(),
  url: z.string().optional(),
  /** H read in the source, M read in a repost or excerpt, L from memory (see docs/decisions). */
  confidence: z.enum(['H', 'M', 'L']),
})

const pctRowSchema = z.strictObject({
  species: speciesOrAny,
  form: formOrAny,
  method: z.enum(methodValues),
  /** For broadcast_incorporated: the row applies when incorporated within this many hours. */
  within_hours: z.number().positive().optional(),
  /** For irrigated: the row applies when one pass puts on at most this many inches (omit for deeper passes). */
  up_to_depth_in: z.number().positive().optional(),
  /** Fraction of total N available in the year of application and the two following years. */
  year1: fraction,
  year2: fraction,
  year3: fraction,
  source: sourceId,
  note: z.string().optional(),
})

const retentionRowSchema = z.strictObject({
  method: z.enum(methodValues),
  within_hours: z.number().positive().optional(),
  /** For irrigated: the row applies when one pass puts on at most this many inches (omit for deeper passes). */
  up_to_depth_in: z.number().positive().optional(),
  conditions: z.enum(conditionsValues),
  /** Fraction of ammonium-N kept for the crop. */
  value: fraction,
  source: sourceId,
  note: z.string().optional(),
})

const releaseRowSchema = z.strictObject({
  species: speciesOrAny,
  form: formOrAny,
  /** Row applies when dry matter is below this % (omit for any dry matter). */
  dry_matter_below_pct: z.number().positive().max(100).optional(),
  /** Fraction of organic N released in the year of application and the two following years. */
  year1: fraction,
  year2: fraction,
  year3: fraction,
  source: sourceId,
  note: z.string().optional(),
})

const nitrogenSchema = z.discriminatedUnion('model', [
  z.strictObject({ model: z.literal('pct_of_total'), rows: z.array(pctRowSchema).min(1) }),
  z.strictObject({
    model: z.literal('retention_release'),
    ammonium_retention: z.array(retentionRowSchema).min(1),
    organic_release: z.array(releaseRowSchema).min(1),
  }),
])

const availabilityRowSchema = z.strictObject({
  species: speciesOrAny,
  form: formOrAny,
  value: fraction,
  source: sourceId,
  note: z.string().optional(),
})

const nGuidanceSchema = z.discriminatedUnion('kind', [
  z.strictObject({
    kind: z.literal('yield_goal'),
    /** lb N per unit of expected yield (bu or ton), before credits. */
    lb_n_per_yield_unit: nonNegative,
    source: sourceId,
  }),
  z.strictObject({
    kind: z.literal('fixed'),
    /** lb N/ac regardless of yield, before credits. */
    lb_n_per_acre: nonNegative,
    /** Rates that already include the previous crop's effect; no legume credit is then subtracted. */
    by_previous_crop: z.partialRecord(z.enum(previousCropValues), nonNegative).optional(),
    source: sourceId,
  }),
  z.strictObject({ kind: z.literal('legume'), source: sourceId }),
  z.strictObject({ kind: z.literal('none'), note: z.string() }),
])

const cropSchema = z.strictObject({
  name: z.enum(cropNameValues),
  title: z.string(),
  yield_unit: z.enum(['bu', 'ton']),
  /** lb per unit of yield: bushel weight, or 2000 for tons; converts metric yields (t/ha). */
  lb_per_yield_unit: z.number().positive(),
  lb_per_yield_unit_source: sourceId,
  removal: z.strictObject({
    n: nonNegative.nullable(),
    p2o5: nonNegative.nullable(),
    k2o: nonNegative.nullable(),
    source: sourceId,
    note: z.string().optional(),
  }),
  n_guidance: nGuidanceSchema,
  soil_test_group: z.string().min(1),
})

const creditSchema = z.strictObject({
  previous_crop: z.enum(previousCropValues),
  lb_n_per_acre: nonNegative,
  source: sourceId,
})

const soilClassRowSchema = z.strictObject({
  method: z.enum(soilTestMethodValues),
  soil_test_group: z.string().min(1),
  /** Below this soil-test level: crop removal plus build-up. */
  critical_ppm: nonNegative,
  /** Above this level: no agronomic need. Between: crop removal (maintenance). */
  maintenance_limit_ppm: nonNegative,
  build_years: z.number().int().positive(),
  /** Oxide (lb/ac) needed to raise the soil test by 1 ppm. */
  buildup_lb_per_ppm: nonNegative,
  source: sourceId,
  buildup_source: sourceId,
  /** Where the maintenance limit comes from, when another source than the critical level's. */
  maintenance_limit_source: sourceId.optional(),
  note: z.string().optional(),
})

const manurePLimitSchema = z.strictObject({
  method: z.enum(soilTestMethodValues),
  /** At or above this soil-test P the rate should not exceed crop P2O5 removal. */
  removal_only_from_ppm: nonNegative,
  /** At or above this soil-test P no manure is recommended. */
  no_manure_from_ppm: nonNegative,
  source: sourceId,
  note: z.string().optional(),
})

const rangeSchema = z.strictObject({ typical: nonNegative, low: nonNegative, high: nonNegative })

const bookValueSchema = z.strictObject({
  species: z.enum(speciesValues),
  form: z.enum(['liquid', 'solid']),
  storage: z.string(),
  /** lb per 1000 US gal (liquid) or per short ton (solid), as-is. */
  total_n: rangeSchema,
  ammonium_n: rangeSchema.nullable(),
  p2o5: rangeSchema,
  k2o: rangeSchema,
  dry_matter_pct: rangeSchema.nullable(),
  /** The storage kinds this row stands for (omit for any); a lagoon's liquid is far thinner than a pit's. */
  storage_kinds: z.array(z.enum(storageKindValues)).min(1).optional(),
  source: sourceId,
  note: z.string().optional(),
})

export const referenceSetSchema = z
  .strictObject({
    name: z.string().regex(/^[a-z0-9][a-z0-9-]*$/, 'lowercase letters, digits and -'),
    version: z.string().min(1),
    title: z.string().min(1),
    description: z.string().optional(),
    sources: z.array(sourceSchema).min(1),
    nitrogen: nitrogenSchema,
    p2o5_availability: z.array(availabilityRowSchema).min(1),
    k2o_availability: z.array(availabilityRowSchema).min(1),
    crops: z.array(cropSchema),
    legume_credits: z.array(creditSchema),
    soil_test_p: z.array(soilClassRowSchema),
    soil_test_k: z.array(soilClassRowSchema),
    manure_p_limits: z.array(manurePLimitSchema),
    book_values: z.array(bookValueSchema),
    /** Plausibility band around a typical book value where a row gives no range: typical × low .. × high. */
    book_value_spread: z.strictObject({ low: nonNegative, high: nonNegative, source: sourceId }),
  })
  .superRefine((set, ctx) => {
    const ids = new Set(set.sources.map((s) => s.id))
    const check = (id: string, path: (string | number)[]) => {
      if (!ids.has(id)) ctx.addIssue({ code: 'custom', path, message: `source "${id}" is not listed in sources` })
    }
    const walk = (value: unknown, path: (string | number)[]) => {
      if (Array.isArray(value)) value.forEach((v, i) => walk(v, [...path, i]))
      else if (value && typeof value === 'object') {
        for (const [k, v] of Object.entries(value)) {
          if ((k === 'source' || k.endsWith('_source')) && typeof v === 'string' && path[0] !== 'sources') check(v, [...path, k])
          else walk(v, [...path, k])
        }
      }
    }
    walk(set, [])
    set.crops.forEach((c, i) => {
      if (set.crops.findIndex((d) => d.name === c.name) !== i) {
        ctx.addIssue({ code: 'custom', path: ['crops', i, 'name'], message: `crop ${c.name} is listed twice` })
      }
    })
    for (const [key, rows] of [['soil_test_p', set.soil_test_p], ['soil_test_k', set.soil_test_k]] as const) {
      rows.forEach((r, i) => {
        if (r.maintenance_limit_ppm < r.critical_ppm) {
          ctx.addIssue({ code: 'custom', path: [key, i, 'maintenance_limit_ppm'], message: 'must not be below critical_ppm' })
        }
      })
    }
    const nRows = set.nitrogen.model === 'pct_of_total' ? set.nitrogen.rows : set.nitrogen.ammonium_retention
    const nKey = set.nitrogen.model === 'pct_of_total' ? 'rows' : 'ammonium_retention'
    nRows.forEach((r, i) => {
      if (r.up_to_depth_in !== undefined && r.method !== 'irrigated') {
        ctx.addIssue({ code: 'custom', path: ['nitrogen', nKey, i, 'up_to_depth_in'], message: `applies to irrigated rows only, not ${r.method}` })
      }
      if (r.within_hours !== undefined && r.method !== 'broadcast_incorporated') {
        ctx.addIssue({ code: 'custom', path: ['nitrogen', nKey, i, 'within_hours'], message: `applies to broadcast_incorporated rows only, not ${r.method}` })
      }
    })
    set.book_values.forEach((b, i) => {
      for (const key of ['total_n', 'ammonium_n', 'p2o5', 'k2o', 'dry_matter_pct'] as const) {
        const r = b[key]
        if (r && !(r.low <= r.typical && r.typical <= r.high)) {
          ctx.addIssue({ code: 'custom', path: ['book_values', i, key], message: 'expected low ≤ typical ≤ high' })
        }
      }
    })
  })

export type ReferenceSet = z.infer<typeof referenceSetSchema>
export type ReferenceSource = ReferenceSet['sources'][number]
export type CropRow = ReferenceSet['crops'][number]
export type BookValueRow = ReferenceSet['book_values'][number]
export type SoilClassRow = ReferenceSet['soil_test_p'][number]

/**
 * Converts zod issues to Problems with the JSON path and a reason. Shared by every JSON format
 * Pitside reads (reference sets, calculator cases).
 */
export function problemsFromZod(error: z.ZodError, prefix: (string | number)[] = []): Problem[] {
  return error.issues.map((issue) => {
    const path = [...prefix, ...issue.path.map((p) => (typeof p === 'symbol' ? String(p) : p))]
    return { code: issue.code, path, message: describeIssue(issue) }
  })
}

function describeIssue(issue: z.core.$ZodIssue): string {
  switch (issue.code) {
    case 'unrecognized_keys':
      return `unknown key${issue.keys.length > 1 ? 's' : ''} ${issue.keys.map((k) => `"${k}"`).join(', ')} (not part of the format)`
    case 'invalid_value':
      return `expected one of ${issue.values.map((v) => JSON.stringify(v)).join(', ')}`
    case 'invalid_union':
      return issue.message
    default:
      return issue.message
  }
}

/**
 * Parses a reference set from JSON text or an already-parsed value. Returns the set, or
 * problems with the JSON path (`nitrogen.rows.3.year1: Too big: expected number to be <=1`).
 * Never throws.
 */
export function parseReferenceSet(json: string | unknown): { value?: ReferenceSet; problems: Problem[] } {
  let data: unknown = json
  if (typeof json === 'string') {
    try {
      data = JSON.parse(json)
    } catch (error) {
      return { problems: [{ code: 'invalid_json', path: [], message: `not valid JSON: ${(error as Error).message}` }] }
    }
  }
  const result = referenceSetSchema.safeParse(data)
  if (!result.success) return { problems: problemsFromZod(result.error) }
  return { value: result.data, problems: [] }
}
