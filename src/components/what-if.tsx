import { useId, useMemo, useState } from 'react'
import type { PlanField, PlanView } from '../../shared/api-types.ts'
import { computeRate, type RateResult } from '../../shared/rate.ts'
import type { RateCase } from '../../shared/rate-case.ts'
import { methodValues, speciesValues } from '../../shared/reference-sets/reference-set.ts'
import { listReferenceSets } from '../../shared/reference-sets/registry.ts'
import { fmt, label, loadsOf, num, nutrients, rateDigits } from './format.ts'

type Method = (typeof methodValues)[number]
const factorOverrides = ['ammonium_retention', 'organic_n_release', 'p2o5_availability', 'k2o_availability'] as const

/**
 * The engine's case for one field of a stored plan, with another method and/or a fixed rate.
 * Returns null (with the reason) when the plan lacks what the engine needs.
 */
export function whatIfCase(plan: PlanView, field: PlanField, method: Method, rate: number | null): { value: RateCase | null; reason?: string } {
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
  const basis = (['n', 'p2o5', 'k2o', 'lowest'] as const).find((b) => b === plan.basis) ?? 'lowest'
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

function tryCase(plan: PlanView, field: PlanField, method: Method, rate: number | null): { result: RateResult | null; error: string | null } {
  const c = whatIfCase(plan, field, method, rate)
  if (!c.value) return { result: null, error: c.reason ?? 'Cannot compute this field.' }
  try {
    return { result: computeRate(c.value), error: null }
  } catch (error) {
    return { result: null, error: (error as Error).message }
  }
}

/** A sandbox on the plan page: another rate or method for one field, computed here by the same engine; nothing is saved. */
export default function WhatIf({ plan }: { plan: PlanView }) {
  const fields = plan.result.fields ?? []
  const ids = useId()
  const [fieldCode, setFieldCode] = useState(fields[0]?.field ?? '')
  const field = fields.find((f) => f.field === fieldCode) ?? fields[0]
  const plannedMethod = (methodValues as readonly string[]).includes(field?.method ?? '') ? (field!.method as Method) : 'broadcast'
  const [method, setMethod] = useState<Method | null>(null)
  const [rateText, setRateText] = useState('')
  const chosenMethod = method ?? plannedMethod
  const rate = rateText.trim() === '' ? null : Number(rateText.replace(/,/g, ''))
  const rateError = rate !== null && (!Number.isFinite(rate) || rate < 0) ? 'Enter a rate of 0 or more, or leave it empty.' : null
  const outcome = useMemo(
    () => (field && !rateError ? tryCase(plan, field, chosenMethod, rate) : { result: null, error: null }),
    [plan, field, chosenMethod, rate, rateError],
  )
  if (!field) return null
  const unit = field.rate_unit ?? (plan.storages.find((s) => s.code === field.storage)?.form === 'solid' ? 'ton/ac' : 'gal/ac')
  const r = outcome.result
  const rd = rateDigits(unit)
  return (
    <section aria-labelledby={`${ids}-title`} className="no-print rounded-md border border-accent bg-surface p-4">
      <h2 id={`${ids}-title`} className="text-xl font-semibold">Try another rate</h2>
      <p className="mt-1 text-sm text-muted">
        Pick a field and change the method or the rate to see what it would supply. Computed in this browser by the same engine as the
        plan; nothing is saved and the plan stays as your advisor made it.
      </p>
      <div className="mt-4 grid gap-4 sm:grid-cols-3">
        <div>
          <label htmlFor={`${ids}-field`} className="block font-semibold">Field</label>
          <select
            id={`${ids}-field`}
            value={field.field}
            onChange={(e) => {
              setFieldCode(e.target.value)
              setMethod(null)
              setRateText('')
            }}
            className="mt-1 w-full rounded-md border border-muted bg-surface px-3 py-2.5"
          >
            {fields.map((f) => (
              <option key={f.field} value={f.field}>
                {f.field} ({fmt(f.acres, 1)} ac, {label(f.crop)})
              </option>
            ))}
          </select>
        </div>
        <div>
          <label htmlFor={`${ids}-method`} className="block font-semibold">Method</label>
          <select
            id={`${ids}-method`}
            value={chosenMethod}
            onChange={(e) => setMethod(e.target.value as Method)}
            className="mt-1 w-full rounded-md border border-muted bg-surface px-3 py-2.5"
          >
            {methodValues.map((m) => (
              <option key={m} value={m}>
                {label(m)}
                {m === plannedMethod ? ' (planned)' : ''}
              </option>
            ))}
          </select>
        </div>
        <div>
          <label htmlFor={`${ids}-rate`} className="block font-semibold">Rate ({unit})</label>
          <input
            id={`${ids}-rate`}
            inputMode="decimal"
            value={rateText}
            placeholder={`planned ${fmt(field.rate, rd)}; empty: let the engine choose`}
            onChange={(e) => setRateText(e.target.value)}
            aria-invalid={rateError ? true : undefined}
            aria-describedby={`${ids}-rate-help`}
            className="mt-1 w-full rounded-md border border-muted bg-surface px-3 py-2.5 font-mono"
          />
          <p id={`${ids}-rate-help`} className={`mt-1 text-xs ${rateError ? 'text-danger' : 'text-muted'}`}>
            {rateError ?? 'Leave empty to see the rate the engine picks for this method.'}
          </p>
        </div>
      </div>
      <div aria-live="polite" className="mt-4">
        {outcome.error && <p role="alert" className="text-danger">{outcome.error}</p>}
        {r && (
          <>
            <p>
              At <span className="num font-semibold">{fmt(r.rate, rd)}</span> {r.rate_unit} ({label(chosenMethod).toLowerCase()}
              {r.limited_by && r.limited_by !== 'fixed_rate' ? `, limited by ${label(r.limited_by)}` : ''}) this field takes{' '}
              <span className="num font-semibold">{fmt(r.total_manure)}</span> {r.total_manure_unit}
              {r.loads?.field != null && (
                <>
                  {' '}in <span className="num font-semibold">{fmt(r.loads.field)}</span> loads
                </>
              )}
              .
            </p>
            <div className="mt-2 overflow-x-auto">
              <table className="data max-w-2xl">
                <caption className="sr-only">What the tried rate supplies against the need and the plan</caption>
                <thead>
                  <tr>
                    <th scope="col">Nutrient</th>
                    <th scope="col" className="num">Need<span className="unit">lb/ac</span></th>
                    <th scope="col" className="num">Planned supplies<span className="unit">lb/ac</span></th>
                    <th scope="col" className="num">This try supplies<span className="unit">lb/ac</span></th>
                    <th scope="col" className="num">Fertilizer still needed<span className="unit">lb/ac</span></th>
                  </tr>
                </thead>
                <tbody>
                  {nutrients.map((k) => (
                    <tr key={k}>
                      <th scope="row" className="text-left">{label(k)}</th>
                      <td className="num">{fmt(r.need[k])}</td>
                      <td className="num">{fmt(field.supplied?.[k])}</td>
                      <td className="num font-semibold">{fmt(r.supplied[k])}</td>
                      <td className="num">{fmt(r.supplemental[k])}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
            <p className="mt-2 text-sm text-muted">
              Planned: <span className="num">{fmt(field.rate, rd)}</span> {unit}, {label(field.method).toLowerCase()},{' '}
              <span className="num">{fmt(loadsOf(field.loads))}</span> loads.
            </p>
            {r.warnings.length > 0 && (
              <ul className="mt-2 list-disc pl-5 text-sm text-danger">
                {r.warnings.map((w) => (
                  <li key={w.code + w.message}>{w.message}</li>
                ))}
              </ul>
            )}
          </>
        )}
      </div>
    </section>
  )
}
