import { normalizeAnalysis, toMetricAnalysis, type AsIsAnalysis } from './analysis.ts'
import { computeAvailability, type AvailabilityFactors } from './availability.ts'
import { computeCropNeed, computeCropRemoval, findCrop } from './crop-need.ts'
import { AppError, formatProblems } from './errors.ts'
import { parseRateCase, rateCaseAnalysisInput, type RateCase } from './rate-case.ts'
import type { ReferenceSet, ReferenceSource } from './reference-sets/reference-set.ts'
import { findReferenceSet, defaultReferenceSetName } from './reference-sets/registry.ts'
import {
  acresToHa,
  galPerAcreToLPerHa,
  galToLitres,
  haToAcres,
  kgPerM3PerLbPer1000Gal,
  kgPerTPerLbPerTon,
  kgPerHaToLbPerAcre,
  kgToLb,
  lbPerAcreToKgPerHa,
  litresToGal,
  lPerHaToGalPerAcre,
  tonnesToTons,
  tonPerAcreToTPerHa,
  tonsToTonnes,
  tPerHaToTonPerAcre,
} from './units.ts'

export type Nutrient = 'n' | 'p2o5' | 'k2o'
type Triple<T> = { n: T; p2o5: T; k2o: T }

/** One warning in a result: a stable code for scripts and a sentence for people. */
export interface Warning {
  code: string
  message: string
}

/**
 * The calculator's result. `JSON.stringify(computeRate(c))` is exactly what
 * `pitside calc rate --json` prints. Rates per acre (us) or per hectare (metric); analysis and
 * available per 1000 gal or per ton (per m³ or per t in metric); nutrients per area in lb/ac or
 * kg/ha.
 */
export interface RateResult {
  units: 'us' | 'metric'
  reference_set: { name: string; version: string }
  analysis: {
    per: '1000gal' | 'ton' | 'm3' | 't'
    total_n: number
    ammonium_n: number
    organic_n: number
    p2o5: number
    k2o: number
  }
  available: Triple<number>
  need: Triple<number | null>
  rates: Triple<number | null>
  rate: number
  rate_unit: 'gal/ac' | 'ton/ac' | 'L/ha' | 'm3/ha' | 't/ha'
  limited_by: Nutrient | 'max_rate' | 'fixed_rate' | null
  applied: Triple<number>
  supplied: Triple<number>
  balance: Triple<number | null>
  supplemental: Triple<number | null>
  total_manure: number | null
  total_manure_unit: 'gal' | 'ton' | 'L' | 't'
  loads: { capacity: number; per_area: number; field: number | null } | null
  residual_n: { year2: number; year3: number }
  p_budget: {
    seasons: { crop: string; removal_p2o5: number }[]
    need_p2o5: number
    supplied_p2o5: number
    seasons_covered: number
    removal_ratio: number
  } | null
  factors: {
    n_model: AvailabilityFactors['nModel']
    n_first_year_fraction: number
    ammonium_retention: number | null
    organic_n_release: number | null
    n_year2: number
    n_year3: number
    residual_base: 'total_n' | 'organic_n'
    p2o5_availability: number
    k2o_availability: number
    overridden: string[]
    n_need: {
      gross: number | null
      legume_credit: number
      manure_credit: number
      other_credit: number
    } | null
    soil_test_p_class: string | null
    soil_test_k_class: string | null
  }
  sources: ReferenceSource[]
  warnings: Warning[]
}

const round = (x: number, digits = 2) => {
  const f = 10 ** digits
  return Math.round(x * f) / f
}
const roundOrNull = (x: number | null, digits = 2) => (x === null ? null : round(x, digits))

/**
 * Computes the agronomic application rate for one case: plant-available nutrients per unit of
 * manure, each nutrient's rate (need ÷ available per gal or ton), the chosen rate (by basis, or
 * the lowest among nutrients with a need; capped by max_rate; or fixed_rate evaluated as given),
 * nutrients applied (total) and supplied (available) per area, balance, supplemental fertilizer,
 * total manure and loads, residual N for the next two seasons and the P budget over up to four
 * seasons. Published factors come from the reference set (`options.referenceSet`, else the
 * case's `reference_set`, else the default set).
 *
 * Pure. Throws AppError('invalid_input') only for a case parseRateCase refuses (so a parsed case
 * never throws); everything questionable but computable is a warning in the result.
 */
export function computeRate(c: RateCase, options: { referenceSet?: ReferenceSet } = {}): RateResult {
  const parsed = parseRateCase(c, options.referenceSet ? { referenceSets: [options.referenceSet] } : {})
  if (parsed.problems.length > 0) throw new AppError('invalid_input', formatProblems(parsed.problems))
  const set = options.referenceSet ?? findReferenceSet(c.reference_set ?? defaultReferenceSetName)
  const metric = c.units === 'metric'
  const liquid = c.manure.form === 'liquid'
  const warnings: Warning[] = []
  const sourceIds: string[] = []

  // Everything below is computed in US units (lb/ac, gal/ac or ton/ac) and converted at the end.
  const analysis = normalizeAnalysis(rateCaseAnalysisInput(c.manure)).value as AsIsAnalysis
  const perUnit = liquid ? 1 / 1000 : 1 // analysis is per 1000 gal or per ton
  const areaIn = (x: number) => (metric ? kgPerHaToLbPerAcre(x) : x)
  const rateIn = (x: number) => (metric ? (liquid ? lPerHaToGalPerAcre(x) : tPerHaToTonPerAcre(x)) : x)
  const areaOut = (x: number) => (metric ? lbPerAcreToKgPerHa(x) : x)
  const rateOut = (x: number) => (metric ? (liquid ? galPerAcreToLPerHa(x) : tonPerAcreToTPerHa(x)) : x)
  const amountOut = (x: number) => (metric ? (liquid ? galToLitres(x) : tonsToTonnes(x)) : x)
  const amountIn = (x: number) => (metric ? (liquid ? litresToGal(x) : tonnesToTons(x)) : x)
  const acres = c.acres === undefined ? null : metric ? haToAcres(c.acres) : c.acres

  const a = c.application
  const availability = computeAvailability(
    analysis,
    { species: c.manure.species, form: c.manure.form },
    {
      method: a.method,
      ...(a.incorporated_within_hours !== undefined && { incorporatedWithinHours: a.incorporated_within_hours }),
      ...(a.irrigation_depth_in !== undefined && { irrigationDepthIn: a.irrigation_depth_in }),
      ...(a.conditions !== undefined && { conditions: a.conditions }),
      ...(a.ammonium_retention !== undefined && { ammoniumRetention: a.ammonium_retention }),
      ...(a.organic_n_release !== undefined && { organicNRelease: a.organic_n_release }),
      ...(a.n_availability !== undefined && { nAvailability: a.n_availability }),
      ...(a.p2o5_availability !== undefined && { p2o5Availability: a.p2o5_availability }),
      ...(a.k2o_availability !== undefined && { k2oAvailability: a.k2o_availability }),
    },
    set,
  )
  warnings.push(...availability.warnings)
  sourceIds.push(...availability.factors.sourceIds)
  const available = availability.available

  // Need: given values win per nutrient; the rest from the crop.
  const need: Triple<number | null> = { n: null, p2o5: null, k2o: null }
  let cropNeed: ReturnType<typeof computeCropNeed> | null = null
  const yieldIn = (name: Parameters<typeof findCrop>[1], y: number) => {
    if (!metric) return y
    const row = findCrop(set, name)!
    return kgToLb(y * 1000) / row.lb_per_yield_unit / haToAcres(1) // t/ha → units per acre
  }
  if (c.crop) {
    const cr = c.crop
    cropNeed = computeCropNeed(
      {
        name: cr.name,
        yieldGoal: yieldIn(cr.name, cr.yield_goal),
        ...(cr.previous_crop !== undefined && { previousCrop: cr.previous_crop }),
        ...(cr.soil_test_p_ppm !== undefined && { soilTestPPpm: cr.soil_test_p_ppm }),
        ...(cr.soil_test_p_method !== undefined && { soilTestPMethod: cr.soil_test_p_method }),
        ...(cr.soil_test_k_ppm !== undefined && { soilTestKPpm: cr.soil_test_k_ppm }),
        ...(cr.soil_test_k_method !== undefined && { soilTestKMethod: cr.soil_test_k_method }),
        ...(cr.credits?.manure_n !== undefined && { manureNCredit: areaIn(cr.credits.manure_n) }),
        ...(cr.credits?.other_n !== undefined && { otherNCredit: areaIn(cr.credits.other_n) }),
      },
      set,
    )
    const nOnly = new Set(cropNeed.nSourceIds)
    sourceIds.push(...cropNeed.sourceIds.filter((id) => c.need?.n === undefined || !nOnly.has(id)))
    need.n = cropNeed.n
    need.p2o5 = cropNeed.p2o5
    need.k2o = cropNeed.k2o
  }
  const given = c.need ?? {}
  for (const k of ['n', 'p2o5', 'k2o'] as const) {
    const v = given[k]
    if (v !== undefined) need[k] = areaIn(v)
  }
  if (cropNeed) {
    for (const w of cropNeed.warnings) {
      if (w.nutrient === undefined || given[w.nutrient] === undefined) warnings.push({ code: w.code, message: w.message })
    }
  }

  // P budget: one application may carry P2O5 for up to four seasons of removal.
  let pSeasons: { crop: string; removal_p2o5: number }[] | null = null
  if (c.crop && cropNeed && cropNeed.p2o5Removal !== null) {
    pSeasons = [{ crop: c.crop.name, removal_p2o5: cropNeed.p2o5Removal }]
    for (const f of c.following_crops ?? []) {
      const row = findCrop(set, f.name)!
      const r = computeCropRemoval(row, yieldIn(f.name, f.yield_goal)).p2o5
      sourceIds.push(row.removal.source)
      if (r === null) {
        warnings.push({ code: 'no_removal', message: `${set.name} lists no P2O5 removal for ${f.name}; left out of the P budget` })
        continue
      }
      pSeasons.push({ crop: f.name, removal_p2o5: r })
    }
    if (pSeasons.length > 1 && need.p2o5 !== null && given.p2o5 === undefined && cropNeed.pClass !== 'no_need') {
      need.p2o5 = need.p2o5 + pSeasons.slice(1).reduce((s, x) => s + x.removal_p2o5, 0)
    }
  }

  const unitAvailable: Triple<number> = { n: available.n * perUnit, p2o5: available.p2o5 * perUnit, k2o: available.k2o * perUnit }
  const rates: Triple<number | null> = { n: null, p2o5: null, k2o: null }
  for (const k of ['n', 'p2o5', 'k2o'] as const) {
    const nd = need[k]
    if (nd === null || nd <= 0) continue
    if (unitAvailable[k] <= 0) {
      warnings.push({ code: 'nutrient_absent', message: `the manure supplies no available ${label(k)}; the ${label(k)} need must come from fertilizer` })
      continue
    }
    rates[k] = nd / unitAvailable[k]
  }

  let rate: number
  let limitedBy: RateResult['limited_by']
  if (c.fixed_rate !== undefined) {
    rate = rateIn(c.fixed_rate)
    limitedBy = 'fixed_rate'
  } else {
    if (c.basis === 'lowest') {
      const candidates = (['n', 'p2o5', 'k2o'] as const).filter((k) => rates[k] !== null)
      const best = candidates.sort((x, y) => rates[x]! - rates[y]!)[0]
      rate = best ? rates[best]! : 0
      limitedBy = best ?? null
    } else {
      const r = rates[c.basis]
      rate = r ?? 0
      limitedBy = r === null ? null : c.basis
    }
    if (limitedBy === null) {
      warnings.push({
        code: 'no_need',
        message: c.basis === 'lowest' ? 'no nutrient has a need that this manure can supply; rate is 0' : `no ${label(c.basis as Nutrient)} need that this manure can supply; rate is 0`,
      })
    }
    // A P application for several seasons may not exceed this season's N-based rate (NRCS
    // Practice Standard 590, multi-year P applications; see docs/decisions).
    if (limitedBy === 'p2o5' && pSeasons && pSeasons.length > 1 && rates.n !== null && rate > rates.n) {
      rate = rates.n
      limitedBy = 'n'
      warnings.push({
        code: 'p_budget_capped_by_n',
        message: `the P2O5 for ${pSeasons.length} seasons would oversupply N; the rate is held to this season's N-based rate`,
      })
    }
    if (c.max_rate !== undefined && rate > rateIn(c.max_rate)) {
      rate = rateIn(c.max_rate)
      limitedBy = 'max_rate'
    }
  }

  const factorOf = rate * perUnit
  const applied: Triple<number> = {
    n: analysis.totalN * factorOf,
    p2o5: (analysis.p2o5 ?? 0) * factorOf,
    k2o: (analysis.k2o ?? 0) * factorOf,
  }
  const supplied: Triple<number> = { n: available.n * factorOf, p2o5: available.p2o5 * factorOf, k2o: available.k2o * factorOf }
  const balance: Triple<number | null> = { n: null, p2o5: null, k2o: null }
  const supplemental: Triple<number | null> = { n: null, p2o5: null, k2o: null }
  for (const k of ['n', 'p2o5', 'k2o'] as const) {
    const nd = need[k]
    if (nd === null) continue
    balance[k] = supplied[k] - nd
    supplemental[k] = Math.max(0, nd - supplied[k])
  }
  if (need.n !== null && supplied.n > need.n * 1.0001 && limitedBy !== 'n') {
    warnings.push({
      code: 'n_oversupply',
      message: `the rate supplies ${round(areaOut(supplied.n), 0)} ${metric ? 'kg' : 'lb'} available N against a need of ${round(areaOut(need.n), 0)}; excess N can leach to groundwater`,
    })
  }

  const organicApplied = (analysis.organicN ?? 0) * factorOf
  const residualBase = availability.factors.residualBase === 'organic_n' ? organicApplied : applied.n
  const residual = { year2: residualBase * availability.factors.nYear2, year3: residualBase * availability.factors.nYear3 }

  // Manure P limits (soil-test thresholds for manure) and the P budget.
  const stp = c.crop?.soil_test_p_ppm
  const limit = c.crop?.soil_test_p_method === undefined ? undefined : set.manure_p_limits.find((l) => l.method === c.crop!.soil_test_p_method)
  if (stp !== undefined && limit) {
    sourceIds.push(limit.source)
    if (stp >= limit.no_manure_from_ppm) {
      warnings.push({ code: 'soil_p_no_manure', message: `soil-test P ${stp} ppm is at or above ${limit.no_manure_from_ppm} ppm: no further manure is recommended on this field` })
    } else if (stp >= limit.removal_only_from_ppm && cropNeed?.p2o5Removal != null && supplied.p2o5 > cropNeed.p2o5Removal * 1.0001) {
      warnings.push({ code: 'soil_p_removal_only', message: `soil-test P ${stp} ppm is at or above ${limit.removal_only_from_ppm} ppm: the rate should not supply more P2O5 than crop removal (${round(areaOut(cropNeed.p2o5Removal), 0)})` })
    }
  }
  let pBudget: RateResult['p_budget'] = null
  if (pSeasons) {
    let cum = 0
    let covered = 0
    for (const s of pSeasons) {
      cum += s.removal_p2o5
      if (supplied.p2o5 + 1e-9 >= cum) covered++
      else break
    }
    const first = pSeasons[0]!.removal_p2o5
    const ratio = first > 0 ? supplied.p2o5 / first : 0
    if (ratio > 4.0001) {
      warnings.push({ code: 'p_beyond_four_seasons', message: `the rate supplies ${round(ratio, 1)} seasons of P2O5 removal, more than the four seasons one application may cover` })
    }
    pBudget = {
      seasons: pSeasons.map((s) => ({ crop: s.crop, removal_p2o5: round(areaOut(s.removal_p2o5)) })),
      need_p2o5: round(areaOut(need.p2o5 ?? 0)),
      supplied_p2o5: round(areaOut(supplied.p2o5)),
      seasons_covered: covered,
      removal_ratio: round(ratio),
    }
  }

  const totalManure = acres === null ? null : rate * acres
  const capacity = c.applicator_capacity === undefined ? null : amountIn(c.applicator_capacity)
  const loads =
    capacity === null
      ? null
      : {
          capacity: c.applicator_capacity!,
          per_area: round(rateOut(rate) / c.applicator_capacity!),
          field: totalManure === null ? null : Math.ceil(totalManure / capacity - 1e-9),
        }

  const shownAnalysis = metric ? toMetricAnalysis(analysis) : analysis
  const perUnitOut = metric ? (liquid ? kgPerM3PerLbPer1000Gal : kgPerTPerLbPerTon) : 1
  const metricAvailable = (x: number) => x * perUnitOut
  const usedIds = new Set(sourceIds)
  const t = (x: Triple<number>, f: (v: number) => number): Triple<number> => ({ n: round(f(x.n)), p2o5: round(f(x.p2o5)), k2o: round(f(x.k2o)) })
  const tn = (x: Triple<number | null>, f: (v: number) => number): Triple<number | null> => ({
    n: x.n === null ? null : round(f(x.n)),
    p2o5: x.p2o5 === null ? null : round(f(x.p2o5)),
    k2o: x.k2o === null ? null : round(f(x.k2o)),
  })
  const f = availability.factors

  return {
    units: c.units,
    reference_set: { name: set.name, version: set.version },
    analysis: {
      per: shownAnalysis.per,
      total_n: round(shownAnalysis.totalN, 3),
      ammonium_n: round(shownAnalysis.ammoniumN ?? 0, 3),
      organic_n: round(shownAnalysis.organicN ?? 0, 3),
      p2o5: round(shownAnalysis.p2o5 ?? 0, 3),
      k2o: round(shownAnalysis.k2o ?? 0, 3),
    },
    available: { n: round(metricAvailable(available.n), 3), p2o5: round(metricAvailable(available.p2o5), 3), k2o: round(metricAvailable(available.k2o), 3) },
    need: tn(need, areaOut),
    rates: tn(rates, rateOut),
    rate: round(rateOut(rate)),
    rate_unit: liquid ? (metric ? 'L/ha' : 'gal/ac') : metric ? 't/ha' : 'ton/ac',
    limited_by: limitedBy,
    applied: t(applied, areaOut),
    supplied: t(supplied, areaOut),
    balance: tn(balance, areaOut),
    supplemental: tn(supplemental, areaOut),
    total_manure: totalManure === null ? null : round(amountOut(totalManure)),
    total_manure_unit: liquid ? (metric ? 'L' : 'gal') : metric ? 't' : 'ton',
    loads,
    residual_n: { year2: round(areaOut(residual.year2)), year3: round(areaOut(residual.year3)) },
    p_budget: pBudget,
    factors: {
      n_model: f.nModel,
      n_first_year_fraction: round(f.nFirstYearFraction, 4),
      ammonium_retention: f.ammoniumRetention,
      organic_n_release: f.organicNRelease,
      n_year2: f.nYear2,
      n_year3: f.nYear3,
      residual_base: f.residualBase,
      p2o5_availability: f.p2o5Availability,
      k2o_availability: f.k2oAvailability,
      overridden: f.overridden,
      n_need: cropNeed && given.n === undefined
        ? {
            gross: roundOrNull(cropNeed.nGross === null ? null : areaOut(cropNeed.nGross)),
            legume_credit: round(areaOut(cropNeed.nCredits.legume)),
            manure_credit: round(areaOut(cropNeed.nCredits.manure)),
            other_credit: round(areaOut(cropNeed.nCredits.other)),
          }
        : null,
      soil_test_p_class: cropNeed?.pClass ?? null,
      soil_test_k_class: cropNeed?.kClass ?? null,
    },
    sources: set.sources.filter((s) => usedIds.has(s.id)),
    warnings,
  }
}

function label(k: Nutrient): string {
  return k === 'n' ? 'N' : k === 'p2o5' ? 'P2O5' : 'K2O'
}
