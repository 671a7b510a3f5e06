import { useId, useMemo, useState } from 'react'
import type { PlanView } from '../../shared/api-types.ts'
import { methodValues } from '../../shared/reference-sets/reference-set.ts'
import { fmt, label, loadsOf, nutrients, rateDigits } from './format.ts'
import { tryCase, type Method } from './what-if-case.ts'

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
            placeholder={`planned ${fmt(field.rate, rd)}`}
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
