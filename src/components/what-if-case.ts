import type { PlanField, PlanView } from '../../shared/api-types.ts'
import { computeRate, type RateResult } from '../../shared/rate.ts'
import type { RateCase } from '../../shared/rate-case.ts'
import { methodValues, speciesValues } from '../../shared/reference-sets/reference-set.ts'
import { listReferenceSets } from '../../shared/reference-sets/registry.ts'
import { num, nutrients } from './format.ts'

// The what-if panel's arithmetic, kept apart from React so that it can be tested on its own.

export type Method = (typeof methodValues)[number]
const factorOverrides = ['ammonium_retention', 'organic_n_release', 'p2o5_availability', 'k2o_availability'] as const

/**
 * The engine's case for one field of a stored plan, with another method and/or a fixed rate: the
 * case the plan was computed from when the plan stores it, else one rebuilt from the plan's
 * numbers. Returns null (with the reason) when the plan lacks what the engine needs.
 */
export function whatIfCase(plan: PlanView, field: PlanField, method: Method, rate: number | null): { value: RateCase | null; reason?: string } {
  const stored = plan.cases?.[field.field]
  if (stored && typeof stored === 'object') return { value: fromStoredCase(stored as RateCase, field, method, rate) }
  return rebuiltCase(plan, field, method, rate)
}

function fromStoredCase(stored: RateCase, field: PlanField, method: Method, rate: number | null): RateCase {
  const c: RateCase = structuredClone(stored)
  if (method !== stored.application.method) {
    // the advisor's own factors were set for the planned method; another method takes the set's own
    c.application = { method }
    const hours = num(field.incorporated_within_hours) ?? num(stored.application.incorporated_within_hours)
    if (method === 'broadcast_incorporated') c.application.incorporated_within_hours = hours ?? 24
  }
  if (rate === null) delete c.fixed_rate
  else c.fixed_rate = rate
  return c
}

function rebuiltCase(plan: PlanView, field: PlanField, method: Method, rate: number | null): { value: RateCase | null; reason?: string } {
  const stored = plan.result.storages?.find((s) => s.storage === field.storage)
  const info = plan.storages.find((s) => s.code === field.storage)
  const a = stored?.analysis
  const totalN = num(a?.total_n)
  const ammoniumN = num(a?.ammonium_n)
  if (!info || !a || totalN === null || ammoniumN === null) {
    return { value: null, reason: 'This plan does not carry the analysis of the storage this field draws from.' }
  }
  const species = (speciesValues as readonly string[]).includes(info.species) ? (info.species as RateCase['manure']['species']) : 'other'
  const manure: RateCase['manure'] = {
    form: info.form,
    species,
    units: info.form === 'liquid' ? 'lb_per_1000gal' : 'lb_per_ton',
    basis: 'as_is',
    total_n: totalN,
    ammonium_n: ammoniumN,
  }
  const p2o5 = num(a.p2o5)
  const k2o = num(a.k2o)
  const dm = num(a.dry_matter_pct)
  if (p2o5 !== null) manure.p2o5 = p2o5
  if (k2o !== null) manure.k2o = k2o
  if (dm !== null) manure.dry_matter_pct = dm

  const application: RateCase['application'] = { method }
  const hours = num(field.incorporated_within_hours)
  if (method === 'broadcast_incorporated' && hours !== null) application.incorporated_within_hours = hours
  // the advisor's own factors for this field hold for the method they were set for
  const overridden = Array.isArray(field.factors?.overridden) ? (field.factors!.overridden as string[]) : []
  if (method === field.method) {
    for (const k of factorOverrides) {
      const v = num(field.factors?.[k])
      if (overridden.includes(k) && v !== null) application[k] = v
    }
    const nFraction = num(field.factors?.n_first_year_fraction)
    if (overridden.includes('n_availability') && nFraction !== null) application.n_availability = nFraction
  }

  const need: NonNullable<RateCase['need']> = {}
  for (const k of nutrients) {
    const v = num(field.need?.[k])
    if (v !== null) need[k] = v
  }
  const basis = (['n', 'p2o5', 'k2o', 'lowest'] as const).find((b) => b === (field.basis ?? plan.basis)) ?? 'lowest'
  const c: RateCase = { manure, application, need, basis, units: 'us' }
  if (listReferenceSets().some((s) => s.name === plan.reference_set)) c.reference_set = plan.reference_set
  const acres = num(field.acres)
  if (acres !== null && acres > 0) c.acres = acres
  const loads = field.loads as { capacity?: unknown } | null | undefined
  const capacity = num(loads && typeof loads === 'object' ? loads.capacity : null)
  if (capacity !== null && capacity > 0) c.applicator_capacity = capacity
  if (rate !== null) c.fixed_rate = rate
  return { value: c }
}

export function tryCase(plan: PlanView, field: PlanField, method: Method, rate: number | null): { result: RateResult | null; error: string | null } {
  const c = whatIfCase(plan, field, method, rate)
  if (!c.value) return { result: null, error: c.reason ?? 'Cannot compute this field.' }
  if (c.value.reference_set && !listReferenceSets().some((s) => s.name === c.value!.reference_set)) {
    return { result: null, error: `This plan uses the advisor's own reference set ${c.value.reference_set}, which the browser does not have; ask your advisor to try other rates.` }
  }
  try {
    return { result: computeRate(c.value), error: null }
  } catch (error) {
    return { result: null, error: (error as Error).message }
  }
}

