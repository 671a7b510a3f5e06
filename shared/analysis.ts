import type { Problem } from './errors.ts'
import {
  defaultLiquidDensityLbPerGal,
  kgPerM3PerLbPer1000Gal,
  kgPerTPerLbPerTon,
  k2oPerK,
  lbPer1000GalPerMgPerL,
  p2o5PerP,
  unitDefinitions,
} from './units.ts'

export type ManureForm = 'liquid' | 'solid'
export const analysisUnits = [
  'lb_per_1000gal',
  'lb_per_ton',
  'pct',
  'ppm',
  'mg_per_l',
  'g_per_l',
  'kg_per_m3',
  'kg_per_t',
] as const
export type AnalysisUnits = (typeof analysisUnits)[number]
export type AnalysisBasis = 'as_is' | 'dry'

/** A lab analysis as reported: any supported unit and basis, P as P or P2O5, K as K or K2O. */
export interface AnalysisInput {
  form: ManureForm
  units: AnalysisUnits
  basis: AnalysisBasis
  /** Dry matter, % of the as-is mass; required when basis is 'dry'. */
  dryMatterPct?: number
  /** Liquid density, lb per US gallon; defaults to 8.34 (liquids only). */
  densityLbPerGal?: number
  totalN: number
  ammoniumN?: number
  p2o5?: number
  /** Elemental P; give either p or p2o5. */
  p?: number
  k2o?: number
  /** Elemental K; give either k or k2o. */
  k?: number
  sulfur?: number
}

/**
 * An analysis on the as-is basis: lb per 1000 US gallons (liquid) or lb per short ton (solid).
 * P and K are always oxides (P2O5, K2O). `organicN` = totalN − ammoniumN (null without ammonium-N).
 */
export interface AsIsAnalysis {
  per: '1000gal' | 'ton'
  dryMatterPct: number | null
  totalN: number
  ammoniumN: number | null
  organicN: number | null
  p2o5: number | null
  k2o: number | null
  sulfur: number | null
}

/** The same analysis in metric: kg per m³ (liquid) or kg per tonne (solid), as-is. */
export interface MetricAnalysis {
  per: 'm3' | 't'
  dryMatterPct: number | null
  totalN: number
  ammoniumN: number | null
  organicN: number | null
  p2o5: number | null
  k2o: number | null
  sulfur: number | null
}

const massUnits = new Set<string>(['pct', 'ppm', 'lb_per_ton', 'kg_per_t'])
const unitSet = new Set<string>(analysisUnits)

/**
 * Factor from the reported unit to lb/1000 gal (liquid) or lb/ton (solid), as-is mass basis;
 * null where the unit cannot describe that form without a bulk density.
 * Sources: LPELC Common Manure Test Results Conversions (% × 20 → lb/ton; % × density × 10 →
 * lb/1000 gal); the rest is arithmetic on exact unit definitions (shared/units.ts).
 */
function unitFactor(form: ManureForm, units: AnalysisUnits, densityLbPerGal: number): number | null {
  if (form === 'liquid') {
    // mass fraction × weight of 1000 gal (density × 1000 lb)
    switch (units) {
      case 'lb_per_1000gal':
        return 1
      case 'mg_per_l':
        return lbPer1000GalPerMgPerL
      case 'g_per_l':
      case 'kg_per_m3':
        return 1 / kgPerM3PerLbPer1000Gal
      case 'pct':
        return densityLbPerGal * 10
      case 'ppm':
        return densityLbPerGal / 1000
      case 'lb_per_ton':
        return (densityLbPerGal * 1000) / unitDefinitions.lbPerShortTon.value
      case 'kg_per_t':
        return densityLbPerGal
    }
  }
  const lbPerTon = unitDefinitions.lbPerShortTon.value
  switch (units) {
    case 'lb_per_ton':
      return 1
    case 'pct':
      return lbPerTon / 100
    case 'ppm':
      return lbPerTon / 1e6
    case 'kg_per_t':
      return 1 / kgPerTPerLbPerTon
    default:
      return null
  }
}

function isNumber(x: unknown): x is number {
  return typeof x === 'number' && Number.isFinite(x)
}

function describe(x: unknown): string {
  return typeof x === 'number' ? String(x) : x === undefined ? 'nothing' : JSON.stringify(x)
}

/**
 * Normalizes one lab analysis to as-is lb per 1000 US gal (liquid) or lb per short ton (solid),
 * with P as P2O5 and K as K2O. Dry-basis values are multiplied by the dry-matter fraction.
 *
 * Returns `{ value, problems }`: `value` is absent when any problem was found. Problems name the
 * input field in snake_case in `column` (`ammonium_n`, `dry_matter_pct`, …). Never throws.
 * Written for bulk imports: no schema library, one small object per call.
 *
 * Refused: negative or non-numeric values, ammonium-N above total N, dry matter outside 0–100 %,
 * unknown unit, form or basis, dry basis without dry matter, both P and P2O5 (or K and K2O),
 * volume-based units for solid manure, dry basis with a volume-based unit, density ≤ 0.
 */
export function normalizeAnalysis(input: AnalysisInput): { value?: AsIsAnalysis; problems: Problem[] } {
  const problems: Problem[] = []
  const { form, units, basis } = input
  if (form !== 'liquid' && form !== 'solid') {
    problems.push({ code: 'unknown_form', column: 'form', message: `expected liquid or solid, found ${describe(form)}` })
  }
  if (!unitSet.has(units)) {
    problems.push({
      code: 'unknown_unit',
      column: 'units',
      message: `expected one of ${analysisUnits.join(', ')}, found ${describe(units)}`,
    })
  }
  if (basis !== 'as_is' && basis !== 'dry') {
    problems.push({ code: 'unknown_basis', column: 'basis', message: `expected as_is or dry, found ${describe(basis)}` })
  }

  let density = defaultLiquidDensityLbPerGal
  if (input.densityLbPerGal !== undefined) {
    if (!isNumber(input.densityLbPerGal) || input.densityLbPerGal <= 0) {
      problems.push({
        code: 'invalid_density',
        column: 'density_lb_per_gal',
        message: `expected a density above 0 lb/gal (water is 8.34), found ${describe(input.densityLbPerGal)}`,
      })
    } else density = input.densityLbPerGal
  }

  const dm = input.dryMatterPct
  let dryMatterPct: number | null = null
  if (dm !== undefined) {
    if (!isNumber(dm) || dm < 0 || dm > 100) {
      problems.push({
        code: 'dry_matter_range',
        column: 'dry_matter_pct',
        message: `expected dry matter between 0 and 100 %, found ${describe(dm)}`,
      })
    } else dryMatterPct = dm
  }
  if (basis === 'dry') {
    if (dm === undefined) {
      problems.push({
        code: 'missing_dry_matter',
        column: 'dry_matter_pct',
        message: 'a dry-basis analysis needs dry_matter_pct to convert to as-is',
      })
    } else if (dryMatterPct === 0) {
      problems.push({
        code: 'dry_matter_range',
        column: 'dry_matter_pct',
        message: 'a dry-basis analysis needs dry matter above 0 %, found 0',
      })
    }
    if (unitSet.has(units) && !massUnits.has(units)) {
      problems.push({
        code: 'dry_basis_volume_unit',
        column: 'basis',
        message: `a dry basis applies to mass units (pct, ppm, lb_per_ton, kg_per_t), not ${units}`,
      })
    }
  }

  let factor: number | null = 1
  if ((form === 'liquid' || form === 'solid') && unitSet.has(units)) {
    factor = unitFactor(form, units, density)
    if (factor === null) {
      problems.push({
        code: 'volume_unit_for_solid',
        column: 'units',
        message: `${units} is a volume unit; for solid manure use lb_per_ton, pct, ppm or kg_per_t`,
      })
    }
  }
  if (basis === 'dry' && dryMatterPct !== null && factor !== null) factor *= dryMatterPct / 100

  const totalN = checkAmount(input.totalN, 'total_n', true, problems)
  const ammoniumN = checkAmount(input.ammoniumN, 'ammonium_n', false, problems)
  let p2o5 = checkAmount(input.p2o5, 'p2o5', false, problems)
  const p = checkAmount(input.p, 'p', false, problems)
  let k2o = checkAmount(input.k2o, 'k2o', false, problems)
  const k = checkAmount(input.k, 'k', false, problems)
  const sulfur = checkAmount(input.sulfur, 'sulfur', false, problems)

  if (input.p !== undefined && input.p2o5 !== undefined) {
    problems.push({ code: 'conflicting_fields', column: 'p', message: 'give either p (elemental) or p2o5, not both' })
  } else if (p !== null) p2o5 = p * p2o5PerP
  if (input.k !== undefined && input.k2o !== undefined) {
    problems.push({ code: 'conflicting_fields', column: 'k', message: 'give either k (elemental) or k2o, not both' })
  } else if (k !== null) k2o = k * k2oPerK

  if (totalN !== null && ammoniumN !== null && ammoniumN > totalN) {
    problems.push({
      code: 'ammonium_above_total',
      column: 'ammonium_n',
      message: `${ammoniumN} is larger than total_n ${totalN} (ammonium-N is part of total N)`,
    })
  }

  if (problems.length > 0 || totalN === null || factor === null) return { problems }
  const f = factor
  return {
    value: {
      per: form === 'liquid' ? '1000gal' : 'ton',
      dryMatterPct,
      totalN: totalN * f,
      ammoniumN: ammoniumN === null ? null : ammoniumN * f,
      organicN: ammoniumN === null ? null : (totalN - ammoniumN) * f,
      p2o5: p2o5 === null ? null : p2o5 * f,
      k2o: k2o === null ? null : k2o * f,
      sulfur: sulfur === null ? null : sulfur * f,
    },
    problems,
  }
}

function checkAmount(x: number | undefined, column: string, required: boolean, problems: Problem[]): number | null {
  if (x === undefined || x === null) {
    if (required) problems.push({ code: 'missing', column, message: 'expected a number ≥ 0, found nothing' })
    return null
  }
  if (!isNumber(x)) {
    problems.push({ code: 'not_a_number', column, message: `expected a number ≥ 0, found ${describe(x)}` })
    return null
  }
  if (x < 0) {
    problems.push({ code: 'negative', column, message: `expected a number ≥ 0, found ${x} (a lab value cannot be negative)` })
    return null
  }
  return x
}

function scale(a: AsIsAnalysis | MetricAnalysis, f: number) {
  return {
    dryMatterPct: a.dryMatterPct,
    totalN: a.totalN * f,
    ammoniumN: a.ammoniumN === null ? null : a.ammoniumN * f,
    organicN: a.organicN === null ? null : a.organicN * f,
    p2o5: a.p2o5 === null ? null : a.p2o5 * f,
    k2o: a.k2o === null ? null : a.k2o * f,
    sulfur: a.sulfur === null ? null : a.sulfur * f,
  }
}

/**
 * Converts an as-is analysis to metric: lb/1000 gal → kg/m³ (× 0.119826), lb/ton → kg/t (× 0.5).
 * Pure arithmetic on exact unit definitions (shared/units.ts). Never throws.
 */
export function toMetricAnalysis(a: AsIsAnalysis): MetricAnalysis {
  return a.per === '1000gal'
    ? { per: 'm3', ...scale(a, kgPerM3PerLbPer1000Gal) }
    : { per: 't', ...scale(a, kgPerTPerLbPerTon) }
}

/** The inverse of toMetricAnalysis: kg/m³ → lb/1000 gal, kg/t → lb/ton. Never throws. */
export function fromMetricAnalysis(a: MetricAnalysis): AsIsAnalysis {
  return a.per === 'm3'
    ? { per: '1000gal', ...scale(a, 1 / kgPerM3PerLbPer1000Gal) }
    : { per: 'ton', ...scale(a, 1 / kgPerTPerLbPerTon) }
}

/**
 * The inverse of normalizeAnalysis for one amount: an as-is value in lb/1000 gal (liquid) or
 * lb/ton (solid) expressed in a lab unit and basis. Returns null where the unit cannot describe
 * the form (volume unit for a solid) or a dry basis lacks dry matter above 0 %. Never throws.
 */
export function toReportedUnits(
  asIs: number,
  to: { form: ManureForm; units: AnalysisUnits; basis: AnalysisBasis; dryMatterPct?: number; densityLbPerGal?: number },
): number | null {
  let factor = unitFactor(to.form, to.units, to.densityLbPerGal ?? defaultLiquidDensityLbPerGal)
  if (factor === null) return null
  if (to.basis === 'dry') {
    if (!massUnits.has(to.units) || to.dryMatterPct === undefined || !(to.dryMatterPct > 0)) return null
    factor *= to.dryMatterPct / 100
  }
  return asIs / factor
}
