import { useEffect, useMemo, useState, type ReactNode } from 'react'
import { flushSync } from 'react-dom'
import type { PlanField, PlanStorage, PlanView } from '../../shared/api-types.ts'
import { computePlanSources } from '../../shared/plan-sources.ts'
import { Cautions } from './cautions.tsx'
import { BudgetBar, SupplyChart, useNarrow } from './charts.tsx'
import { amountUnit, date, dateTime, fmt, label, loadsOf, num, nutrients, rateDigits, warningText } from './format.ts'

export interface StorageGroup {
  code: string
  name: string | null
  kind: string | null
  species: string | null
  form: string | null
  stored: PlanStorage | undefined
  fields: PlanField[]
  rateUnit: string
  amountUnit: string
}

/** Fields grouped by the storage they draw from, in the plan's order; fields without a storage last. */
export function groupByStorage(plan: PlanView): StorageGroup[] {
  const fields = plan.result.fields ?? []
  const stored = plan.result.storages ?? []
  const codes = [...new Set([...stored.map((s) => s.storage), ...fields.map((f) => f.storage ?? '')])]
  return codes
    .map((code) => {
      const info = plan.storages.find((s) => s.code === code)
      const fs = fields.filter((f) => (f.storage ?? '') === code)
      const st = stored.find((s) => s.storage === code)
      const rateUnit = fs.find((f) => f.rate_unit)?.rate_unit ?? (info?.form === 'solid' ? 'ton/ac' : 'gal/ac')
      return {
        code,
        name: info?.name ?? null,
        kind: info?.kind ?? null,
        species: info?.species ?? null,
        form: info?.form ?? null,
        stored: st,
        fields: fs,
        rateUnit,
        amountUnit: st?.unit ?? amountUnit(rateUnit, 'gal'),
      }
    })
    .filter((g) => g.fields.length > 0 || g.stored)
}

/** Acres the manure in storage would cover at this plan's rates, and the acres that draw from it. */
export function landBudget(g: StorageGroup): { needed: number | null; available: number } {
  const available = g.fields.reduce((a, f) => a + (num(f.acres) ?? 0), 0)
  const own = num(g.stored?.acres_needed)
  if (own !== null) return { needed: own, available: num(g.stored?.acres_available) ?? available }
  const planned = num(g.stored?.planned) ?? g.fields.reduce((a, f) => a + (num(f.total_manure) ?? 0), 0)
  const inStorage = num(g.stored?.in_storage)
  if (inStorage === null || planned <= 0 || available <= 0) return { needed: null, available }
  return { needed: inStorage / (planned / available), available }
}

function storageTitle(g: StorageGroup): string {
  return g.code ? `${g.code}${g.name ? ` · ${g.name}` : ''}` : 'No storage named'
}

const escapes: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;' }
/** Text or an attribute value made safe for HTML. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"]/g, (c) => escapes[c]!)
}

/** An element's HTML with an optional class; the children are HTML already (text goes through escapeHtml). */
function el(tag: string, className: string | null, ...children: string[]): string {
  return `<${tag}${className ? ` class="${className}"` : ''}>${children.join('')}</${tag}>`
}

/** Supplied / need in one cell: bold supplied when it falls short of the need. */
function suppliedNeedCell(f: PlanField, k: (typeof nutrients)[number]): string {
  const supplied = num(f.supplied?.[k])
  const need = num(f.need?.[k])
  const short = supplied !== null && need !== null && supplied + 0.5 < need
  return el('td', short ? 'num font-semibold [&amp;&gt;span]:font-normal' : 'num', fmt(supplied), el('span', 'text-muted', ` / ${fmt(need)}`))
}

/**
 * A rate table's warnings: each text that two or more of its fields share is listed once above the
 * table, numbered, with the fields it concerns (or as for every field of the table); a text only one
 * field has stays in that field's row.
 */
export interface TableWarnings {
  shared: { text: string; fields: string[]; everyField: boolean }[]
  /** Per field: its own warnings, and the numbers (from 1) of the shared ones that concern it but not every field. */
  byField: Map<string, { own: string[]; notes: number[] }>
}

export function tableWarnings(fields: PlanField[]): TableWarnings {
  const fieldsOf = new Map<string, string[]>()
  const texts = fields.map((f) => [...new Set((f.warnings ?? []).map(warningText))])
  fields.forEach((f, i) => {
    for (const t of texts[i]!) {
      const list = fieldsOf.get(t)
      if (list) list.push(f.field)
      else fieldsOf.set(t, [f.field])
    }
  })
  const shared: TableWarnings['shared'] = []
  const number = new Map<string, number>()
  for (const [text, fs] of fieldsOf) {
    if (fs.length < 2) continue
    const everyField = fs.length === fields.length
    shared.push({ text, fields: fs, everyField })
    number.set(text, everyField ? 0 : shared.length)
  }
  const byField = new Map<string, { own: string[]; notes: number[] }>()
  fields.forEach((f, i) => {
    const own = texts[i]!.filter((t) => !number.has(t))
    const notes = texts[i]!.flatMap((t) => (number.get(t) ? [number.get(t)!] : []))
    byField.set(f.field, { own, notes })
  })
  return { shared, byField }
}

function noteId(tableId: string, n: number): string {
  return `${tableId}-note-${n}`
}

/** One field's row of a rate table, as HTML: the field with its name, its own warnings and the numbers of the shared ones, then its figures. */
function fieldRowHtml(f: PlanField, g: StorageGroup, fieldNames: Map<string, string | null>, warnings: TableWarnings, tableId: string): string {
  const head = [escapeHtml(f.field)]
  const name = fieldNames.get(f.field)
  if (name) head.push(el('span', 'block text-xs font-normal text-muted', escapeHtml(name)))
  const { own, notes } = warnings.byField.get(f.field) ?? { own: [], notes: [] }
  if (own.length > 0) head.push(el('ul', 'mt-1 max-w-[14rem] text-xs font-normal text-danger', ...own.map((w) => el('li', null, `⚠ ${escapeHtml(w)}`))))
  if (notes.length > 0) {
    const links = notes.map((n) => `<a class="underline" href="#${escapeHtml(noteId(tableId, n))}">${n}</a>`).join(', ')
    head.push(el('span', 'mt-1 block text-xs font-normal text-danger', `⚠ ${notes.length === 1 ? 'note' : 'notes'} `, links, ' above'))
  }
  return el(
    'tr',
    null,
    `<th class="sticky left-0 bg-surface text-left font-semibold" scope="row">${head.join('')}</th>`,
    el('td', 'num', fmt(f.acres, 1)),
    el('td', null, escapeHtml(label(f.crop))),
    el('td', null, escapeHtml(label(f.method))),
    el('td', 'num font-semibold', fmt(f.rate, rateDigits(g.rateUnit))),
    el('td', null, escapeHtml(label(f.limited_by))),
    ...nutrients.map((k) => suppliedNeedCell(f, k)),
    el('td', 'num', nutrients.map((k) => fmt(f.supplemental?.[k])).join('–')),
    el('td', 'num', fmt(f.total_manure)),
    el('td', 'num', fmt(loadsOf(f.loads))),
  )
}

/**
 * The rows of a rate table as one HTML string, the same on the server and in the browser: a
 * 200-field plan's rows hold some 8,000 elements and text nodes, and React's work for each cost
 * more than the browser's parser takes for the markup. Everything from the plan is escaped here.
 */
export function fieldRowsHtml(g: StorageGroup, fieldNames: Map<string, string | null>, warnings: TableWarnings, tableId: string): string {
  return g.fields.map((f) => fieldRowHtml(f, g, fieldNames, warnings, tableId)).join('')
}

/**
 * The body of a rate table, set as inner HTML rather than as React elements. React does not look
 * inside it when it hydrates a server-rendered page, and sets it again only when the string
 * changes, so the rows the server sent stay the same nodes.
 */
function FieldRows({ g, fieldNames, warnings, tableId }: { g: StorageGroup; fieldNames: Map<string, string | null>; warnings: TableWarnings; tableId: string }) {
  const html = useMemo(() => fieldRowsHtml(g, fieldNames, warnings, tableId), [g, fieldNames, warnings, tableId])
  return <tbody dangerouslySetInnerHTML={{ __html: html }} />
}

/** The same rows as cards, for a phone at the field edge. */
function FieldCards({ g, fieldNames }: { g: StorageGroup; fieldNames: Map<string, string | null> }) {
  const rd = rateDigits(g.rateUnit)
  return (
    <ul className="space-y-2">
      {g.fields.map((f) => (
        <li key={f.field} className="rounded-md border border-line bg-surface p-3">
          <div className="flex items-baseline justify-between gap-2">
            <span className="font-semibold">
              {f.field}
              {fieldNames.get(f.field) && <span className="font-normal text-muted"> · {fieldNames.get(f.field)}</span>}
            </span>
            <span className="num text-lg font-semibold">
              {fmt(f.rate, rd)} <span className="font-sans text-sm font-normal">{g.rateUnit}</span>
            </span>
          </div>
          <p className="text-sm text-muted">
            {fmt(f.acres, 1)} ac · {label(f.crop)} · {label(f.method)} · limited by {label(f.limited_by)}
          </p>
          <dl className="mt-2 grid grid-cols-3 gap-2 text-sm">
            {nutrients.map((k) => (
              <div key={k}>
                <dt className="text-muted">{label(k)} lb/ac</dt>
                <dd className="num text-left">
                  {fmt(f.supplied?.[k])} <span className="text-muted">/ {fmt(f.need?.[k])}</span>
                </dd>
              </div>
            ))}
          </dl>
          <p className="mt-2 text-sm">
            Total <span className="num">{fmt(f.total_manure)}</span> {g.amountUnit} · <span className="num">{fmt(loadsOf(f.loads))}</span> loads · fertilizer still needed{' '}
            <span className="num">{nutrients.map((k) => fmt(f.supplemental?.[k])).join('–')}</span> lb/ac
          </p>
          {(f.warnings ?? []).map((w) => (
            <p key={warningText(w)} className="mt-1 text-sm text-danger">⚠ {warningText(w)}</p>
          ))}
        </li>
      ))}
    </ul>
  )
}

/**
 * The warnings two or more fields of a table share, each once, numbered as the rows refer to them.
 * The table is described by the list's title only, so that a screen reader announces the list
 * without reading every note each time the table is entered.
 */
function SharedWarnings({ warnings, tableId, count }: { warnings: TableWarnings; tableId: string; count: number }) {
  return (
    <div className="mb-2 rounded-md border border-line bg-surface p-3 text-sm">
      <h4 id={`${tableId}-notes`} className="font-semibold text-danger">⚠ Warnings shared by fields of this table</h4>
      <ol className="mt-1 list-decimal space-y-1 pl-6">
        {warnings.shared.map((w, i) => (
          <li key={w.text} id={noteId(tableId, i + 1)}>
            {w.text}{' '}
            <span className="text-muted">
              {w.everyField ? `(every field of this table: ${count})` : `(${w.fields.length} fields: ${w.fields.join(', ')})`}
            </span>
          </li>
        ))}
      </ol>
    </div>
  )
}

function FieldTable({ g, fieldNames, tableId }: { g: StorageGroup; fieldNames: Map<string, string | null>; tableId: string }) {
  const warnings = useMemo(() => tableWarnings(g.fields), [g])
  return (
    <>
      {warnings.shared.length > 0 && <SharedWarnings warnings={warnings} tableId={tableId} count={g.fields.length} />}
      <div className="overflow-x-auto rounded-md border border-line bg-surface" tabIndex={0} role="region" aria-label={`Field rates from ${g.code}`}>
        <table className="data min-w-[56rem]" aria-describedby={warnings.shared.length > 0 ? `${tableId}-notes` : undefined}>
          <caption className="sr-only">Fields drawing from {storageTitle(g)}: rate, method and nutrients</caption>
          <thead>
            <tr>
              <th scope="col" className="sticky left-0 z-10">Field</th>
              <th scope="col" className="num">Area<span className="unit">ac</span></th>
              <th scope="col">Crop</th>
              <th scope="col">Method</th>
              <th scope="col" className="num">Rate<span className="unit">{g.rateUnit}</span></th>
              <th scope="col">Limited by</th>
              <th scope="col" className="num">N supplied / need<span className="unit">lb/ac</span></th>
              <th scope="col" className="num">P₂O₅ supplied / need<span className="unit">lb/ac</span></th>
              <th scope="col" className="num">K₂O supplied / need<span className="unit">lb/ac</span></th>
              <th scope="col" className="num">Fertilizer still needed N–P₂O₅–K₂O<span className="unit">lb/ac</span></th>
              <th scope="col" className="num">Total<span className="unit">{g.amountUnit}</span></th>
              <th scope="col" className="num">Loads<span className="unit">count</span></th>
            </tr>
          </thead>
          <FieldRows g={g} fieldNames={fieldNames} warnings={warnings} tableId={tableId} />
        </table>
      </div>
    </>
  )
}

function factorValue(v: unknown): string {
  if (typeof v === 'number') return Number.isInteger(v) ? String(v) : fmt(v, v < 1 ? 2 : 1)
  if (typeof v === 'string') return label(v)
  if (v === null || v === undefined) return '—'
  if (Array.isArray(v)) return v.length ? v.map(factorValue).join(', ') : 'none'
  if (v && typeof v === 'object') return Object.entries(v as Record<string, unknown>).map(([k, x]) => `${label(k)} ${factorValue(x)}`).join(', ')
  return '—'
}

function sourceText(s: unknown): string {
  if (typeof s === 'string') return s
  if (s && typeof s === 'object') {
    const o = s as Record<string, unknown>
    if (typeof o.title === 'string') {
      return [o.title, o.publisher, o.year, o.where].filter((x) => x !== undefined && x !== null && x !== '').join(', ')
    }
    const what = o.factor ?? o.for ?? o.key ?? o.name
    const where = o.source ?? o.citation ?? o.reference
    if (where) return `${what ? `${label(String(what))}: ` : ''}${typeof where === 'string' ? where : JSON.stringify(where)}${o.table ? `, ${o.table}` : ''}${o.page ? `, p. ${o.page}` : ''}`
  }
  return JSON.stringify(s)
}

/**
 * A closed <details> whose body is built only when it is first opened: a 200-field plan's factors
 * and sources are some 10,000 elements that nobody sees until they open a field.
 */
function ClosedUntilOpened({ summary, children }: { summary: string; children: ReactNode }) {
  const [opened, setOpened] = useState(false)
  return (
    <details className="rounded-md border border-line bg-surface p-3" onToggle={(e) => e.currentTarget.open && setOpened(true)}>
      <summary className="cursor-pointer font-semibold">{summary}</summary>
      {opened && children}
    </details>
  )
}

function Factors({ plan, fields }: { plan: PlanView; fields: PlanField[] }) {
  const { sources, byField } = computePlanSources(plan.result)
  const withFactors = fields.filter((f) => (f.factors && Object.keys(f.factors).length) || byField.get(f.field)?.length)
  if (withFactors.length === 0 && sources.length === 0) return <p className="text-sm text-muted">This plan does not list the factors it used.</p>
  return (
    <div className="space-y-2">
      {sources.length > 0 && (
        <div className="rounded-md border border-line bg-surface p-3">
          <h3 className="text-sm font-semibold">Sources cited in this plan</h3>
          <ul className="mt-1 list-disc pl-5 text-sm">
            {sources.map((s, i) => (
              <li key={i}>{sourceText(s)}</li>
            ))}
          </ul>
        </div>
      )}
      {withFactors.map((f) => (
        <ClosedUntilOpened key={f.field} summary={`${f.field} · ${label(f.method)}`}>
          {f.factors && (
            <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
              {Object.entries(f.factors).map(([k, v]) => (
                <div key={k} className="contents">
                  <dt className="text-muted">{label(k)}</dt>
                  <dd className="font-mono">{factorValue(v)}</dd>
                </div>
              ))}
            </dl>
          )}
          {(num((f.credits as { manure_n?: unknown } | undefined)?.manure_n) ?? 0) > 0 && (
            <p className="mt-2 text-sm">
              Residual N from earlier applications credited: <span className="num">{fmt((f.credits as { manure_n: number }).manure_n, 1)}</span> lb/ac
            </p>
          )}
          {f.p_budget !== null && typeof f.p_budget === 'object' && (
            <p className="mt-2 text-sm">
              Phosphorus budget: this application covers <span className="num">{fmt((f.p_budget as { seasons_covered?: unknown }).seasons_covered)}</span> season(s) of crop removal.
            </p>
          )}
          {(byField.get(f.field)?.length ?? 0) > 0 && (
            <>
              <h4 className="mt-3 text-sm font-semibold">Sources</h4>
              <ul className="list-disc pl-5 text-sm">
                {byField.get(f.field)!.map((s, i) => (
                  <li key={i}>{sourceText(s)}</li>
                ))}
              </ul>
            </>
          )}
        </ClosedUntilOpened>
      ))}
    </div>
  )
}

function StorageBudget({ g }: { g: StorageGroup }) {
  const land = landBudget(g)
  const planned = num(g.stored?.planned) ?? g.fields.reduce((a, f) => a + (num(f.total_manure) ?? 0), 0)
  const analysis = g.stored?.analysis ?? null
  const per = typeof analysis?.per === 'string' ? (analysis.per === '1000gal' ? '1000 gal' : analysis.per) : g.form === 'solid' ? 'ton' : '1000 gal'
  return (
    <article className="rounded-md border border-line bg-surface p-4">
      <h3 className="font-semibold">{storageTitle(g)}</h3>
      <p className="text-sm text-muted">
        {[label(g.kind), g.species, g.form].filter((x) => x && x !== '—').join(' · ')}
        {g.stored?.analysis_source === 'book'
          ? ' · no lab result yet: book values stand in'
          : num(g.stored?.samples) !== null && ` · ${g.stored!.samples} ${num(g.stored?.samples) === 1 ? 'sample' : 'samples'} in the latest round`}
      </p>
      <div className="mt-3 space-y-3">
        <BudgetBar used={planned} available={num(g.stored?.in_storage)} usedLabel="planned" availableLabel="in storage" unit={g.amountUnit} overMessage="More is planned than there is in storage." />
        <BudgetBar used={land.needed} available={land.available} usedLabel="acres needed" availableLabel="acres available" unit="ac" overMessage="The manure in storage needs more land than these fields at these rates." />
      </div>
      {analysis && (
        <table className="data mt-3">
          <caption className="sr-only">Analysis used for {g.code}</caption>
          <thead>
            <tr>
              <th scope="col">Analysis used</th>
              <th scope="col" className="num">Total N<span className="unit">lb/{per}</span></th>
              <th scope="col" className="num">NH₄-N<span className="unit">lb/{per}</span></th>
              <th scope="col" className="num">P₂O₅<span className="unit">lb/{per}</span></th>
              <th scope="col" className="num">K₂O<span className="unit">lb/{per}</span></th>
            </tr>
          </thead>
          <tbody>
            <tr>
              <th scope="row" className="text-left font-normal">mean</th>
              {(['total_n', 'ammonium_n', 'p2o5', 'k2o'] as const).map((k) => (
                <td key={k} className="num">{fmt(analysis[k], 1)}</td>
              ))}
            </tr>
            {g.stored?.cv && (
              <tr>
                <th scope="row" className="text-left font-normal">spread (CV %)</th>
                {(['total_n', 'ammonium_n', 'p2o5', 'k2o'] as const).map((k) => (
                  <td key={k} className="num">{fmt(g.stored!.cv![k], 0)}</td>
                ))}
              </tr>
            )}
          </tbody>
        </table>
      )}
    </article>
  )
}

function Totals({ plan }: { plan: PlanView }) {
  const t = plan.result.totals as Record<string, unknown> | undefined
  if (!t || typeof t !== 'object') return null
  const planned = (t.planned ?? {}) as Record<string, unknown>
  const sup = (t.supplemental_lb ?? {}) as Record<string, unknown>
  const items: [string, string][] = [
    ['Fields planned', `${fmt(t.fields)}${num(t.skipped) ? ` (${fmt(t.skipped)} not planned)` : ''}`],
    ['Area', `${fmt(t.acres, 1)} ac`],
  ]
  if (num(planned.gal)) items.push(['Liquid manure', `${fmt(planned.gal)} gal`])
  if (num(planned.ton)) items.push(['Solid manure', `${fmt(planned.ton)} ton`])
  // the three figures and their units are too long for half a phone's width: this one takes a whole row there
  const wide = 'Fertilizer still needed, whole farm'
  // each figure named: three whole-farm totals joined by dashes would read as a range
  if (Object.keys(sup).length) items.push([wide, `N ${fmt(sup.n)} · P₂O₅ ${fmt(sup.p2o5)} · K₂O ${fmt(sup.k2o)} lb`])
  return (
    <dl className="grid grid-cols-2 gap-x-6 gap-y-2 rounded-md border border-line bg-surface p-4 text-sm sm:grid-cols-4">
      {items.map(([k, v]) => (
        <div key={k} className={k === wide ? 'col-span-2 min-w-0' : 'min-w-0'}>
          <dt className="text-muted">{k}</dt>
          <dd className="num text-left text-base font-semibold break-words">{v}</dd>
        </div>
      ))}
    </dl>
  )
}

/** Plan-level and storage warnings, and the fields the plan could not plan, with the reason. */
function Notes({ plan }: { plan: PlanView }) {
  const skipped = Array.isArray(plan.result.skipped) ? (plan.result.skipped as { field?: unknown; reason?: unknown }[]) : []
  const planWarnings = (Array.isArray(plan.result.warnings) ? plan.result.warnings : [])
    .filter((w) => !(w && typeof w === 'object' && (w as { code?: unknown }).code === 'fields_skipped' && skipped.length))
    .map(warningText)
  const storageWarnings = (plan.result.storages ?? []).flatMap((st) => (Array.isArray(st.warnings) ? st.warnings.map(warningText) : []))
  if (!skipped.length && !planWarnings.length && !storageWarnings.length) return null
  return (
    <section aria-labelledby="notes-title" className="no-print">
      <h2 id="notes-title" className="mb-3 text-xl font-semibold">Notes on this plan</h2>
      <div className="space-y-3 rounded-md border border-line bg-surface p-4 text-sm">
        {[...planWarnings, ...storageWarnings].length > 0 && (
          <ul className="list-disc space-y-1 pl-5">
            {[...planWarnings, ...storageWarnings].map((w) => (
              <li key={w}>{w}</li>
            ))}
          </ul>
        )}
        {skipped.length > 0 && (
          <>
            <h3 className="font-semibold">Not planned ({skipped.length} fields)</h3>
            <ul className="list-disc space-y-1 pl-5">
              {skipped.map((f) => (
                <li key={String(f.field)}>
                  <span className="font-semibold">{String(f.field)}</span>: {String(f.reason ?? 'no reason given')}
                </li>
              ))}
            </ul>
          </>
        )}
      </div>
    </section>
  )
}

function capacityOf(g: StorageGroup): number | null {
  for (const f of g.fields) {
    const c = f.loads && typeof f.loads === 'object' ? num((f.loads as { capacity?: unknown }).capacity) : null
    if (c !== null) return c
  }
  return null
}

/** The applicator's sheet: only on paper. */
function PrintSheet({ plan, groups, fieldNames }: { plan: PlanView; groups: StorageGroup[]; fieldNames: Map<string, string | null> }) {
  return (
    <div className="only-print">
      <h1 className="text-lg font-semibold">
        {plan.farm.name} ({plan.farm.code}) · application sheet · season {plan.season}, version {plan.version}
      </h1>
      <p className="text-xs">
        Plan {plan.id}, computed {dateTime(plan.created_at)} by {plan.created_by}; analyses as of {date(plan.as_of)}. Printed {new Date().toISOString().slice(0, 10)}.
      </p>
      {groups.map((g) => (
        <section key={g.code} className="mt-3">
          <h2 className="font-semibold">
            From {storageTitle(g)}
            {capacityOf(g) !== null && <span className="font-normal"> · loads of {fmt(capacityOf(g))} {g.amountUnit}</span>}
          </h2>
          <table className="data sheet">
            <thead>
              <tr>
                <th scope="col">Field</th>
                <th scope="col" className="num">Area<span className="unit">ac</span></th>
                <th scope="col">Method</th>
                <th scope="col" className="num">Rate<span className="unit">{g.rateUnit}</span></th>
                <th scope="col" className="num">Total<span className="unit">{g.amountUnit}</span></th>
                <th scope="col" className="num">Loads<span className="unit">count</span></th>
                <th scope="col">Date spread<span className="unit">yyyy-mm-dd</span></th>
                <th scope="col">Loads hauled<span className="unit">count</span></th>
                <th scope="col">Initials<span className="unit">&nbsp;</span></th>
              </tr>
            </thead>
            <tbody>
              {g.fields.map((f) => (
                <tr key={f.field}>
                  <th scope="row" className="text-left">
                    {f.field}
                    {fieldNames.get(f.field) && <span className="font-normal"> {fieldNames.get(f.field)}</span>}
                  </th>
                  <td className="num">{fmt(f.acres, 1)}</td>
                  <td>{label(f.method)}</td>
                  <td className="num font-semibold">{fmt(f.rate, rateDigits(g.rateUnit))}</td>
                  <td className="num">{fmt(f.total_manure)}</td>
                  <td className="num">{fmt(loadsOf(f.loads))}</td>
                  <td />
                  <td />
                  <td />
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      ))}
    </div>
  )
}

/**
 * Whether to build the applicator sheet (some 2,200 hidden elements for a 200-field plan): not for
 * the first paint, but once the page is idle after it, so that every way of printing finds it
 * (printing to PDF does not announce itself). A print before that builds it at once: `beforeprint`
 * comes before the print layout and the sheet is rendered synchronously inside it; a print media
 * query that starts to match (print emulation, some previews) builds it too, and so does one that
 * already matches when the page starts (after hydration: the server never renders the sheet).
 */
function usePrintSheet(painted: boolean): boolean {
  const [wanted, setWanted] = useState(false)
  useEffect(() => {
    if (wanted) return
    const print = window.matchMedia('print')
    if (print.matches) {
      setWanted(true)
      return
    }
    const now = () => flushSync(() => setWanted(true))
    const onChange = (e: MediaQueryListEvent) => e.matches && now()
    window.addEventListener('beforeprint', now)
    print.addEventListener('change', onChange)
    let idle: number | undefined
    let timer: ReturnType<typeof setTimeout> | undefined
    if (painted) {
      if (typeof window.requestIdleCallback === 'function') idle = window.requestIdleCallback(() => setWanted(true), { timeout: 2000 })
      else timer = setTimeout(() => setWanted(true), 300)
    }
    return () => {
      window.removeEventListener('beforeprint', now)
      print.removeEventListener('change', onChange)
      if (idle !== undefined) window.cancelIdleCallback(idle)
      clearTimeout(timer)
    }
  }, [wanted, painted])
  return wanted
}

/**
 * False for a plan's first render, true from the frame after it has been painted: the totals, the
 * cautions and the field rates show first, the chart, notes, sandbox and factors a frame later.
 */
function useAfterFirstPaint(): boolean {
  const [painted, setPainted] = useState(false)
  useEffect(() => {
    let timer: ReturnType<typeof setTimeout> | undefined
    const frame = requestAnimationFrame(() => {
      timer = setTimeout(() => setPainted(true))
    })
    return () => {
      cancelAnimationFrame(frame)
      clearTimeout(timer)
    }
  }, [])
  return painted
}

export const rateTablesEndId = 'rate-tables-end'

/** Everything a plan shows, for the plan page and the shared-plan page. */
export function PlanBody({ plan, whatIf, versions }: { plan: PlanView; whatIf?: ReactNode; versions?: ReactNode }) {
  const narrow = useNarrow()
  const painted = useAfterFirstPaint()
  const printing = usePrintSheet(painted)
  // the same objects across the page's renders, so that the rate rows are built once per plan
  const groups = useMemo(() => groupByStorage(plan), [plan])
  const fields = plan.result.fields ?? []
  const fieldNames = useMemo(() => {
    const names = new Map(plan.fields.map((f) => [f.code, f.name]))
    for (const f of plan.result.fields ?? []) if (typeof f.name === 'string' && f.name) names.set(f.field, f.name)
    return names
  }, [plan])
  return (
    <div className="space-y-8">
      {printing && <PrintSheet plan={plan} groups={groups} fieldNames={fieldNames} />}
      <dl className="no-print grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-4">
        <div><dt className="text-muted">Computed</dt><dd>{dateTime(plan.created_at)}</dd></div>
        <div><dt className="text-muted">By</dt><dd className="break-all">{plan.created_by}</dd></div>
        <div><dt className="text-muted">Analyses as of</dt><dd>{date(plan.as_of)}</dd></div>
        <div><dt className="text-muted">Method</dt><dd>{plan.reference_set} {plan.reference_set_version && `v${plan.reference_set_version}`} · basis {label(plan.basis)}</dd></div>
      </dl>

      <div className="no-print">
        <Totals plan={plan} />
      </div>

      <div className="no-print">
        <Cautions id="cautions-top" />
      </div>

      <section aria-labelledby="budget-title" className="no-print">
        <h2 id="budget-title" className="mb-3 text-xl font-semibold">Manure and land</h2>
        <div className="grid gap-4 md:grid-cols-2">
          {groups.filter((g) => g.code).map((g) => (
            <StorageBudget key={g.code} g={g} />
          ))}
        </div>
      </section>

      <section aria-labelledby="rates-title" className="no-print">
        <h2 id="rates-title" className="mb-3 text-xl font-semibold">Field rates</h2>
        <div className="space-y-5">
          {groups.map((g, i) => (
            <div key={g.code}>
              <h3 className="mb-2 font-semibold">From {storageTitle(g)}</h3>
              {narrow ? <FieldCards g={g} fieldNames={fieldNames} /> : <FieldTable g={g} fieldNames={fieldNames} tableId={`rates-${i + 1}`} />}
            </div>
          ))}
        </div>
        {/* the end of the rate tables: a server-rendered page is first painted once it is parsed (src/entry-server.tsx) */}
        <p id={rateTablesEndId} className="mt-2 text-sm text-muted">Supplied is what the crop can use this season; a bold figure falls short of the need.</p>
      </section>

      {painted && fields.length > 0 && (
        <section aria-labelledby="chart-title" className="no-print">
          <h2 id="chart-title" className="mb-3 text-xl font-semibold">Supply against need</h2>
          <div className="rounded-md border border-line bg-surface p-3">
            <SupplyChart fields={fields} caption={`Nutrients supplied against need for ${fields.length} fields, in pounds per acre`} />
          </div>
        </section>
      )}

      {painted && (
        <>
          <Notes plan={plan} />

          {whatIf}

          <section aria-labelledby="factors-title" className="no-print">
            <h2 id="factors-title" className="mb-3 text-xl font-semibold">Factors and sources</h2>
            <Factors plan={plan} fields={fields} />
          </section>
        </>
      )}

      {versions}

      <Cautions id="cautions" />
    </div>
  )
}
