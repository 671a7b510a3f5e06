import type { AsIsAnalysis } from './analysis.ts'
import type {
  ApplicationMethod,
  Conditions,
  ReferenceSet,
  Species,
} from './reference-sets/reference-set.ts'

/** What the engine needs to know about an application to pick availability factors. */
export interface ApplicationInput {
  method: ApplicationMethod
  incorporatedWithinHours?: number
  /** Inches of liquid manure one irrigation pass puts on (irrigated only). */
  irrigationDepthIn?: number
  conditions?: Conditions
  ammoniumRetention?: number
  organicNRelease?: number
  nAvailability?: number
  p2o5Availability?: number
  k2oAvailability?: number
}

/** The factors chosen for one application, each with the id of its source. */
export interface AvailabilityFactors {
  nModel: 'pct_of_total' | 'retention_release' | 'override'
  /** Plant-available N in the first season as a fraction of total N. */
  nFirstYearFraction: number
  ammoniumRetention: number | null
  organicNRelease: number | null
  /** Residual N: fraction of total N (pct model) or of organic N (retention model) in years 2 and 3. */
  nYear2: number
  nYear3: number
  residualBase: 'total_n' | 'organic_n'
  p2o5Availability: number
  k2oAvailability: number
  overridden: string[]
  sourceIds: string[]
}

export interface AvailabilityResult {
  factors: AvailabilityFactors
  /** Available nutrients per unit of the analysis (per 1000 gal or per ton). */
  available: { n: number; p2o5: number; k2o: number }
  warnings: { code: string; message: string }[]
}

function matches(rowValue: string, value: string) {
  return rowValue === 'any' || rowValue === value
}

/**
 * Picks the rows for one application. broadcast_incorporated: the first (smallest) `within_hours`
 * bracket that contains the delay; beyond the largest bracket the manure counts as not
 * incorporated. irrigated: the first `up_to_depth_in` bracket that contains the depth of one pass
 * (a row without a bracket takes deeper passes); a set without irrigated rows falls back to
 * broadcast without incorporation. Every assumption is a warning.
 */
function pickRows<T extends { method: string; within_hours?: number; up_to_depth_in?: number }>(
  rows: T[],
  application: Pick<ApplicationInput, 'method' | 'incorporatedWithinHours' | 'irrigationDepthIn'>,
  warnings: AvailabilityResult['warnings'],
): { rows: T[]; method: ApplicationMethod } {
  const method = application.method
  if (method === 'irrigated') {
    const irrigated = rows.filter((r) => r.method === 'irrigated')
    if (irrigated.length === 0) {
      warnings.push({
        code: 'irrigation_as_broadcast',
        message: 'this reference set has no factor for irrigated manure; used broadcast without incorporation (give application.ammonium_retention or n_availability to override)',
      })
      return { rows: rows.filter((r) => r.method === 'broadcast'), method: 'broadcast' }
    }
    const brackets = [...new Set(irrigated.map((r) => r.up_to_depth_in ?? Infinity))].sort((a, b) => a - b)
    const depth = application.irrigationDepthIn
    if (brackets.length === 1 && brackets[0] === Infinity) {
      if (depth !== undefined) {
        warnings.push({ code: 'irrigation_depth_unused', message: 'this reference set has one factor for irrigated manure whatever the depth; application.irrigation_depth_in was not used' })
      }
      return { rows: irrigated, method }
    }
    let limit: number
    if (depth === undefined) {
      limit = brackets[0]!
      warnings.push({
        code: 'irrigation_depth_assumed',
        message: `irrigation_depth_in not given; assumed ${limit} in or less per pass, the depth this set credits least ammonium-N for (give application.irrigation_depth_in)`,
      })
    } else limit = brackets.find((b) => depth <= b) ?? brackets[brackets.length - 1]!
    return { rows: irrigated.filter((r) => (r.up_to_depth_in ?? Infinity) === limit), method }
  }
  if (method !== 'broadcast_incorporated') return { rows: rows.filter((r) => r.method === method), method }
  const hours = application.incorporatedWithinHours
  const brackets = [...new Set(rows.filter((r) => r.method === method).map((r) => r.within_hours ?? Infinity))].sort((a, b) => a - b)
  let limit: number | undefined
  if (hours === undefined) {
    limit = brackets[brackets.length - 1]
    warnings.push({
      code: 'incorporation_hours_assumed',
      message: `incorporated_within_hours not given; assumed the latest incorporation bracket of this set (within ${limit} h)`,
    })
  } else limit = brackets.find((b) => hours <= b)
  if (limit === undefined) return { rows: rows.filter((r) => r.method === 'broadcast'), method: 'broadcast' }
  return { rows: rows.filter((r) => r.method === method && (r.within_hours ?? Infinity) === limit), method }
}

/**
 * Chooses N, P2O5 and K2O availability factors for one manure and application from a reference
 * set, applies per-field overrides, and returns the available nutrients per unit of manure
 * (same unit as the analysis: lb per 1000 gal or per ton).
 *
 * N, "% of total" sets: available = total N × year-1 fraction (e.g. UMN Table 1).
 * N, retention sets: available = ammonium-N × retention + organic N × year-1 release (Alberta
 * NMP Guide, Table 4.3.4 and p. 214). `nAvailability` replaces both; `ammoniumRetention` and
 * `organicNRelease` together replace a "% of total" row. Irrigated manure takes the set's
 * irrigated row for the depth of one pass (`irrigationDepthIn`; e.g. 80 % of ammonium-N above
 * 0.4 in, 40 % at or below, Univ. of Nebraska–Lincoln 2022). P2O5 and K2O: amount × availability.
 * Never throws; where a set has no row the nearest sensible row is used and a warning says so.
 */
export function computeAvailability(
  analysis: AsIsAnalysis,
  manure: { species: Species; form: 'liquid' | 'solid' },
  application: ApplicationInput,
  set: ReferenceSet,
): AvailabilityResult {
  const warnings: AvailabilityResult['warnings'] = []
  const overridden: string[] = []
  const sourceIds: string[] = []
  const totalN = analysis.totalN
  const ammoniumN = analysis.ammoniumN ?? 0
  const organicN = analysis.organicN ?? totalN - ammoniumN

  let nModel: AvailabilityFactors['nModel']
  let ammoniumRetention: number | null = null
  let organicNRelease: number | null = null
  let nYear2 = 0
  let nYear3 = 0
  let residualBase: AvailabilityFactors['residualBase'] = 'total_n'
  let availableN: number

  const model = set.nitrogen
  if (model.model === 'pct_of_total') {
    const picked = pickRows(model.rows, application, warnings)
    let row = picked.rows.find((r) => matches(r.species, manure.species) && matches(r.form, manure.form))
    if (!row) {
      const candidates = picked.rows.filter((r) => matches(r.form, manure.form))
      row = candidates.sort((a, b) => a.year1 - b.year1)[0]
      if (row) {
        warnings.push({
          code: 'n_row_missing',
          message: `${set.name} has no N availability for ${manure.species} manure ${picked.method.replace('_', ' ')}; used the lowest value for that method (${row.species}, ${row.year1 * 100} %)`,
        })
      } else {
        row = [...model.rows].sort((a, b) => a.year1 - b.year1)[0]!
        warnings.push({
          code: 'n_row_missing',
          message: `${set.name} has no N availability for ${picked.method.replace('_', ' ')}; used its lowest value (${row.species} ${row.method}, ${row.year1 * 100} %); give application.n_availability`,
        })
      }
    }
    nModel = 'pct_of_total'
    availableN = totalN * row.year1
    nYear2 = row.year2
    nYear3 = row.year3
    sourceIds.push(row.source)
    if (application.conditions !== undefined) {
      warnings.push({ code: 'conditions_unused', message: `${set.name} has no weather classes; application.conditions was not used` })
    }
    const r = application.ammoniumRetention
    const o = application.organicNRelease
    if (r !== undefined && o !== undefined) {
      nModel = 'override'
      ammoniumRetention = r
      organicNRelease = o
      availableN = ammoniumN * r + organicN * o
      overridden.push('ammonium_retention', 'organic_n_release')
    } else if (r !== undefined || o !== undefined) {
      warnings.push({
        code: 'override_incomplete',
        message: `${set.name} gives N as a share of total N; ammonium_retention and organic_n_release override it only together, so the one given was not used`,
      })
    }
  } else {
    const picked = pickRows(model.ammonium_retention, application, warnings)
    const conditions = application.conditions ?? 'average'
    let ret = picked.rows.find((r) => r.conditions === conditions)
    if (!ret) {
      ret = picked.rows.find((r) => r.conditions === 'average') ?? picked.rows[0]!
      if (application.conditions !== undefined) {
        warnings.push({ code: 'conditions_unused', message: `${set.name} has no ${conditions.replace('_', '-')} factor for ${picked.method.replace('_', ' ')} manure; used the ${ret.conditions.replace('_', '-')} one` })
      }
    }
    const dm = analysis.dryMatterPct
    const rel =
      model.organic_release.find(
        (r) =>
          matches(r.species, manure.species) &&
          matches(r.form, manure.form) &&
          (r.dry_matter_below_pct === undefined || (dm !== null && dm < r.dry_matter_below_pct)),
      ) ?? model.organic_release[model.organic_release.length - 1]!
    nModel = 'retention_release'
    ammoniumRetention = ret.value
    organicNRelease = rel.year1
    if (application.ammoniumRetention !== undefined) {
      ammoniumRetention = application.ammoniumRetention
      overridden.push('ammonium_retention')
    } else if (application.nAvailability === undefined) sourceIds.push(ret.source)
    if (application.organicNRelease !== undefined) {
      organicNRelease = application.organicNRelease
      overridden.push('organic_n_release')
    } else if (application.nAvailability === undefined) sourceIds.push(rel.source)
    // the later-year release still comes from the set (residual N)
    if (rel.year2 > 0 || rel.year3 > 0) sourceIds.push(rel.source)
    availableN = ammoniumN * ammoniumRetention + organicN * organicNRelease
    nYear2 = rel.year2
    nYear3 = rel.year3
    residualBase = 'organic_n'
  }
  if (application.nAvailability !== undefined) {
    nModel = 'override'
    availableN = totalN * application.nAvailability
    overridden.push('n_availability')
  }

  const pick = (rows: ReferenceSet['p2o5_availability']) =>
    rows.find((r) => matches(r.species, manure.species) && matches(r.form, manure.form)) ?? rows[0]!
  const pRow = pick(set.p2o5_availability)
  const kRow = pick(set.k2o_availability)
  let p2o5Availability = pRow.value
  let k2oAvailability = kRow.value
  if (application.p2o5Availability !== undefined) {
    p2o5Availability = application.p2o5Availability
    overridden.push('p2o5_availability')
  } else sourceIds.push(pRow.source)
  if (application.k2oAvailability !== undefined) {
    k2oAvailability = application.k2oAvailability
    overridden.push('k2o_availability')
  } else sourceIds.push(kRow.source)

  return {
    factors: {
      nModel,
      nFirstYearFraction: totalN > 0 ? availableN / totalN : 0,
      ammoniumRetention,
      organicNRelease,
      nYear2,
      nYear3,
      residualBase,
      p2o5Availability,
      k2oAvailability,
      overridden,
      sourceIds: [...new Set(sourceIds)],
    },
    available: {
      n: availableN,
      p2o5: (analysis.p2o5 ?? 0) * p2o5Availability,
      k2o: (analysis.k2o ?? 0) * k2oAvailability,
    },
    warnings,
  }
}
