import { AppError } from './errors.ts'
import { computeStorageVolume, type StorageInput } from './storage.ts'

/**
 * One storage: its amount now (gal or ton; L or t in metric) as recorded, or its geometry with the
 * measured manure depth (the usable volume without a depth; solids need a bulk density).
 */
export type FarmStorage = { name: string; amount: number } | { name: string; geometry: StorageInput }

/** One planned application: area (ac or ha) and rate (gal/ac or ton/ac; L/ha or t/ha). */
export interface FarmPlannedField {
  name: string
  area: number
  rate: number
}

export interface FarmBalanceInput {
  form: 'liquid' | 'solid'
  units: 'us' | 'metric'
  storages: FarmStorage[]
  planned: FarmPlannedField[]
  /** Area available for manure (ac or ha). */
  areaAvailable: number
  /** The rate used for "area needed"; default the area-weighted mean planned rate. */
  typicalRate?: number
  /**
   * Available nutrients per unit of manure (lb per 1000 gal or per ton; kg per m³ or per t) and
   * fertilizer prices (per lb or per kg of N, P2O5, K2O) for the nutrient value.
   */
  availablePerUnit?: { n: number; p2o5: number; k2o: number }
  prices?: { n: number; p2o5: number; k2o: number }
}

export interface FarmBalance {
  stored: number
  planned: number
  /** stored − planned: > 0 manure left without a field, < 0 plans exceed storage. */
  surplus: number
  typicalRate: number | null
  /** Area the stored manure needs at the typical rate. */
  areaNeeded: number | null
  areaAvailable: number
  /** areaNeeded − areaAvailable when positive, else 0. */
  areaShort: number | null
  /** Value of the available nutrients: per unit (1000 gal, ton, m³, t) and for everything stored. */
  value: { perUnit: { n: number; p2o5: number; k2o: number; total: number }; stored: number } | null
  warnings: string[]
}

/**
 * Farm-level balance: manure in storage against manure planned, area needed at the typical
 * rate against area available, and the value of the manure's available nutrients at fertilizer
 * prices (available nutrient × price; value of available rather than total nutrients is common
 * practice). Pure arithmetic; units as given (us or metric). Storages given by geometry are
 * measured with computeStorageVolume. Throws AppError('invalid_input') for negative amounts,
 * areas or rates, impossible geometry, or a solid storage by geometry without a bulk density.
 */
export function computeFarmBalance(input: FarmBalanceInput): FarmBalance {
  const check = (name: string, v: number) => {
    if (!(Number.isFinite(v) && v >= 0)) throw new AppError('invalid_input', `${name}: expected a number of 0 or more, found ${v}`)
  }
  const amounts = input.storages.map((s, i) => {
    if ('amount' in s) {
      check(`storages.${i}.amount`, s.amount)
      return s.amount
    }
    const v = computeStorageVolume(s.geometry)
    const a = v.contents ?? v.usable
    if (input.form === 'solid') {
      if (a.mass === null) throw new AppError('invalid_input', `storages.${i}: a solid storage measured by geometry needs bulk_density`)
      return a.mass
    }
    return s.geometry.units === 'metric' ? a.litres : a.gal
  })
  input.planned.forEach((p, i) => {
    check(`planned.${i}.area`, p.area)
    check(`planned.${i}.rate`, p.rate)
  })
  check('area_available', input.areaAvailable)
  const liquid = input.form === 'liquid'
  const perUnitSize = liquid ? 1000 : 1 // nutrients are per 1000 gal (per m³ = 1000 L) or per ton (t)
  const stored = amounts.reduce((s, x) => s + x, 0)
  const plannedAmount = input.planned.reduce((s, p) => s + p.area * p.rate, 0)
  const plannedArea = input.planned.reduce((s, p) => s + p.area, 0)
  const typicalRate = input.typicalRate ?? (plannedArea > 0 ? plannedAmount / plannedArea : null)
  const areaNeeded = typicalRate && typicalRate > 0 ? stored / typicalRate : null
  const warnings: string[] = []
  if (plannedAmount > stored * 1.0001) warnings.push('the plans use more manure than is in storage')
  if (stored > plannedAmount * 1.0001) warnings.push('more manure is in storage than the plans use: plan more fields or carry it over')
  if (areaNeeded !== null && areaNeeded > input.areaAvailable) warnings.push('not enough area is available for the stored manure at the typical rate')
  let value: FarmBalance['value'] = null
  if (input.availablePerUnit && input.prices) {
    const a = input.availablePerUnit
    const p = input.prices
    const perUnit = { n: a.n * p.n, p2o5: a.p2o5 * p.p2o5, k2o: a.k2o * p.k2o, total: 0 }
    perUnit.total = perUnit.n + perUnit.p2o5 + perUnit.k2o
    value = { perUnit, stored: (perUnit.total * stored) / perUnitSize }
  }
  return {
    stored,
    planned: plannedAmount,
    surplus: stored - plannedAmount,
    typicalRate,
    areaNeeded,
    areaAvailable: input.areaAvailable,
    areaShort: areaNeeded === null ? null : Math.max(0, areaNeeded - input.areaAvailable),
    value,
    warnings,
  }
}
