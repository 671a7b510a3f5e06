import { z } from 'zod'
import { analysisUnits, normalizeAnalysis, type AnalysisInput } from './analysis.ts'
import type { Problem } from './errors.ts'
import {
  conditionsValues,
  cropNameValues,
  methodValues,
  previousCropValues,
  problemsFromZod,
  soilTestMethodValues,
  speciesValues,
  type ReferenceSet,
} from './reference-sets/reference-set.ts'
import { listReferenceSets } from './reference-sets/registry.ts'

/**
 * The calculator's input: one field, one manure, one application. This is the documented JSON
 * format of `pitside calc rate --input` (README, "Calculator") and the object the planner builds
 * per field. Keys are snake_case; unknown keys are refused.
 *
 * Amounts per area are lb/ac ("us") or kg/ha ("metric"); rates are gal/ac or ton/ac, L/ha or
 * t/ha; `acres` is hectares in metric; `applicator_capacity` is gal or ton (L or t in metric).
 */
const positive = z.number().positive()
const nonNegative = z.number().min(0)
const fraction = z.number().min(0).max(1)

const manureSchema = z.strictObject({
  form: z.enum(['liquid', 'solid']),
  species: z.enum(speciesValues),
  units: z.enum(analysisUnits),
  basis: z.enum(['as_is', 'dry']),
  dry_matter_pct: z.number().optional(),
  density_lb_per_gal: z.number().optional(),
  total_n: z.number(),
  ammonium_n: z.number(),
  p2o5: z.number().optional(),
  p: z.number().optional(),
  k2o: z.number().optional(),
  k: z.number().optional(),
})

const applicationSchema = z.strictObject({
  method: z.enum(methodValues),
  incorporated_within_hours: nonNegative.optional(),
  /** Inches one irrigation pass puts on (irrigated only); sets with depth classes assume the shallowest without it. */
  irrigation_depth_in: positive.optional(),
  /** Weather class for sets that have one (Alberta Table 4.3.4); default average. */
  conditions: z.enum(conditionsValues).optional(),
  ammonium_retention: fraction.optional(),
  organic_n_release: fraction.optional(),
  n_availability: fraction.optional(),
  p2o5_availability: fraction.optional(),
  k2o_availability: fraction.optional(),
})

const cropSchema = z.strictObject({
  name: z.enum(cropNameValues),
  /** bu/ac or ton/ac (us), t/ha (metric). */
  yield_goal: positive,
  previous_crop: z.enum(previousCropValues).optional(),
  soil_test_p_ppm: nonNegative.optional(),
  soil_test_p_method: z.enum(soilTestMethodValues).optional(),
  soil_test_k_ppm: nonNegative.optional(),
  soil_test_k_method: z.enum(soilTestMethodValues).optional(),
  /** N already supplied for this crop: residual manure N and other N (starter, irrigation water). */
  credits: z.strictObject({ manure_n: nonNegative.optional(), other_n: nonNegative.optional() }).optional(),
})

export const rateCaseSchema = z.strictObject({
  manure: manureSchema,
  application: applicationSchema,
  need: z.strictObject({ n: nonNegative.optional(), p2o5: nonNegative.optional(), k2o: nonNegative.optional() }).optional(),
  crop: cropSchema.optional(),
  /** The crops of the seasons after this one (up to 3) whose P2O5 removal one application may cover. */
  following_crops: z.array(z.strictObject({ name: z.enum(cropNameValues), yield_goal: positive })).max(3).optional(),
  basis: z.enum(['n', 'p2o5', 'k2o', 'lowest']),
  fixed_rate: nonNegative.optional(),
  max_rate: positive.optional(),
  units: z.enum(['us', 'metric']),
  reference_set: z.string().optional(),
  acres: positive.optional(),
  applicator_capacity: positive.optional(),
})

export type RateCase = z.infer<typeof rateCaseSchema>

/** The manure block as an analysis input for normalizeAnalysis. */
export function rateCaseAnalysisInput(m: RateCase['manure']): AnalysisInput {
  const input: AnalysisInput = {
    form: m.form,
    units: m.units,
    basis: m.basis,
    totalN: m.total_n,
    ammoniumN: m.ammonium_n,
  }
  if (m.dry_matter_pct !== undefined) input.dryMatterPct = m.dry_matter_pct
  if (m.density_lb_per_gal !== undefined) input.densityLbPerGal = m.density_lb_per_gal
  if (m.p2o5 !== undefined) input.p2o5 = m.p2o5
  if (m.p !== undefined) input.p = m.p
  if (m.k2o !== undefined) input.k2o = m.k2o
  if (m.k !== undefined) input.k = m.k
  return input
}

/**
 * Parses a calculator case from JSON text or a parsed value. Returns the case, or problems each
 * naming the JSON path and the reason (`manure.ammonium_n: 52 is larger than total_n 41 …`).
 * `referenceSets` are the sets a `reference_set` name may refer to besides the built-in ones.
 * Never throws.
 */
export function parseRateCase(
  json: string | unknown,
  options: { referenceSets?: readonly ReferenceSet[] } = {},
): { value?: RateCase; problems: Problem[] } {
  let data: unknown = json
  if (typeof json === 'string') {
    try {
      data = JSON.parse(json)
    } catch (error) {
      return { problems: [{ code: 'invalid_json', path: [], message: `not valid JSON: ${(error as Error).message}` }] }
    }
  }
  const result = rateCaseSchema.safeParse(data)
  if (!result.success) {
    const problems = problemsFromZod(result.error)
    // Report impossible analyses too, so one run shows every problem in the manure block.
    const m = (data as { manure?: unknown } | null)?.manure
    if (m && typeof m === 'object') {
      const reported = new Set(problems.map((p) => (p.path ?? []).join('.')))
      for (const p of normalizeAnalysis(rateCaseAnalysisInput(m as RateCase['manure'])).problems) {
        const path = ['manure', p.column ?? '']
        if (!reported.has(path.join('.')) && p.code !== 'missing' && p.code !== 'not_a_number') problems.push({ code: p.code, path, message: p.message })
      }
    }
    return { problems }
  }
  const c = result.data
  const problems: Problem[] = []
  const add = (path: (string | number)[], code: string, message: string) => problems.push({ code, path, message })

  for (const p of normalizeAnalysis(rateCaseAnalysisInput(c.manure)).problems) {
    add(['manure', p.column ?? ''], p.code, p.message)
  }
  if (c.manure.p2o5 === undefined && c.manure.p === undefined) add(['manure', 'p2o5'], 'missing', 'give p2o5 (or p as elemental P)')
  if (c.manure.k2o === undefined && c.manure.k === undefined) add(['manure', 'k2o'], 'missing', 'give k2o (or k as elemental K)')
  if (c.manure.form === 'solid' && c.manure.density_lb_per_gal !== undefined) {
    add(['manure', 'density_lb_per_gal'], 'not_for_solid', 'a liquid density does not apply to solid manure')
  }

  const a = c.application
  if (a.incorporated_within_hours !== undefined && a.method !== 'broadcast_incorporated') {
    add(['application', 'incorporated_within_hours'], 'not_for_method', `applies to broadcast_incorporated only, not ${a.method}`)
  }
  if (a.irrigation_depth_in !== undefined && a.method !== 'irrigated') {
    add(['application', 'irrigation_depth_in'], 'not_for_method', `applies to irrigated only, not ${a.method}`)
  }
  if (a.n_availability !== undefined && (a.ammonium_retention !== undefined || a.organic_n_release !== undefined)) {
    add(['application', 'n_availability'], 'conflicting_fields', 'n_availability replaces ammonium_retention and organic_n_release; give one or the other')
  }

  if (!c.need && !c.crop) add(['need'], 'missing', 'give need (what the manure must supply) or crop (to compute it)')
  if (c.crop) {
    if (c.crop.soil_test_p_ppm !== undefined && c.crop.soil_test_p_method === undefined) {
      add(['crop', 'soil_test_p_method'], 'missing', `give the soil-test P method (${soilTestMethodValues.join(', ')})`)
    }
    if (c.crop.soil_test_k_ppm !== undefined && c.crop.soil_test_k_method === undefined) {
      add(['crop', 'soil_test_k_method'], 'missing', `give the soil-test K method (${soilTestMethodValues.join(', ')})`)
    }
  }
  if (c.following_crops && !c.crop) add(['following_crops'], 'needs_crop', 'following_crops needs crop (the season this application is for)')
  if (c.fixed_rate !== undefined && c.max_rate !== undefined && c.fixed_rate > c.max_rate) {
    add(['fixed_rate'], 'above_max_rate', `${c.fixed_rate} is above max_rate ${c.max_rate}`)
  }

  const sets = [...(options.referenceSets ?? []), ...listReferenceSets()]
  if (c.reference_set !== undefined && !sets.some((s) => s.name === c.reference_set)) {
    add(['reference_set'], 'unknown_reference_set', `"${c.reference_set}" is not a known reference set (known: ${sets.map((s) => s.name).join(', ')})`)
  }
  const set = sets.find((s) => s.name === c.reference_set) ?? listReferenceSets()[0]!
  const cropNames = [c.crop?.name, ...(c.following_crops ?? []).map((f) => f.name)]
  cropNames.forEach((name, i) => {
    if (name !== undefined && !set.crops.some((r) => r.name === name)) {
      add(i === 0 ? ['crop', 'name'] : ['following_crops', i - 1, 'name'], 'unknown_crop', `reference set ${set.name} has no crop ${name}`)
    }
  })

  return problems.length > 0 ? { problems } : { value: c, problems }
}
