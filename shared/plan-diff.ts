import type { PlanInputs, PlanJson } from './plan.ts'

/**
 * What changed between two stored plans (usually two versions of one farm and season): per field
 * the rate, what limits it, the needs and the fertilizer still needed; per storage the analysis;
 * and every input that differs (as-of date, basis, reference set, each field's calculator case).
 * Pure; never throws.
 */

export interface ValueChange {
  key: string
  from: unknown
  to: unknown
  /** to − from, for two numbers */
  delta: number | null
}

export interface FieldDiff {
  field: string
  status: 'added' | 'removed' | 'changed' | 'same'
  changes: ValueChange[]
}

export interface PlanDiff {
  from: { id: number | null; farm: string; season: number; version: number }
  to: { id: number | null; farm: string; season: number; version: number }
  plan: ValueChange[]
  fields: FieldDiff[]
  storages: { storage: string; status: FieldDiff['status']; changes: ValueChange[] }[]
  /** inputs that differ, by JSON path (`fields.F02.case.crop.credits.manure_n`) */
  inputs: ValueChange[]
}

const fieldKeys = [
  'crop', 'acres', 'storage', 'method', 'basis', 'rate', 'rate_unit', 'limited_by',
  'need.n', 'need.p2o5', 'need.k2o', 'supplied.n', 'supplied.p2o5', 'supplied.k2o',
  'supplemental.n', 'supplemental.p2o5', 'supplemental.k2o', 'total_manure', 'loads.field', 'credits.manure_n',
] as const
const storageKeys = [
  'analysis_source', 'samples', 'analysis.total_n', 'analysis.ammonium_n', 'analysis.p2o5', 'analysis.k2o', 'analysis.dry_matter_pct',
  'in_storage', 'planned', 'surplus', 'acres_needed',
] as const
const planKeys = ['as_of', 'basis', 'reference_set', 'reference_set_version', 'totals.fields', 'totals.acres', 'totals.planned.gal', 'totals.planned.ton', 'totals.supplemental_lb.n', 'totals.supplemental_lb.p2o5', 'totals.supplemental_lb.k2o'] as const

function at(value: unknown, path: string): unknown {
  let v = value
  for (const part of path.split('.')) {
    if (v === null || v === undefined || typeof v !== 'object') return undefined
    v = (v as Record<string, unknown>)[part]
  }
  return v
}

function same(a: unknown, b: unknown): boolean {
  return JSON.stringify(a) === JSON.stringify(b)
}

function change(key: string, from: unknown, to: unknown): ValueChange {
  return { key, from: from ?? null, to: to ?? null, delta: typeof from === 'number' && typeof to === 'number' ? Math.round((to - from) * 1000) / 1000 : null }
}

function compare(a: unknown, b: unknown, keys: readonly string[]): ValueChange[] {
  const out: ValueChange[] = []
  for (const k of keys) {
    const x = at(a, k)
    const y = at(b, k)
    if (!same(x, y)) out.push(change(k, x, y))
  }
  return out
}

/** Every leaf of a JSON value by its dotted path; arrays of objects with a code/field/storage key are keyed by it. */
function flatten(value: unknown, prefix: string, out: Map<string, unknown>): Map<string, unknown> {
  if (Array.isArray(value)) {
    const keyed = value.every((v) => v && typeof v === 'object' && ('code' in v || 'field' in v || 'storage' in v))
    value.forEach((v, i) => {
      const name = keyed ? String((v as Record<string, unknown>).code ?? (v as Record<string, unknown>).field ?? (v as Record<string, unknown>).storage) : String(i)
      flatten(v, prefix ? `${prefix}.${name}` : name, out)
    })
    if (value.length === 0) out.set(prefix, [])
  } else if (value && typeof value === 'object') {
    for (const [k, v] of Object.entries(value)) flatten(v, prefix ? `${prefix}.${k}` : k, out)
  } else out.set(prefix, value)
  return out
}

function byKey<T>(rows: readonly T[], key: (t: T) => string): Map<string, T> {
  return new Map(rows.map((r) => [key(r), r]))
}

export function computePlanDiff(a: { plan: PlanJson; inputs?: PlanInputs | null }, b: { plan: PlanJson; inputs?: PlanInputs | null }): PlanDiff {
  const head = (p: PlanJson) => ({ id: p.id ?? null, farm: p.farm, season: p.season, version: p.version })
  const fieldsA = byKey(a.plan.fields, (f) => f.field)
  const fieldsB = byKey(b.plan.fields, (f) => f.field)
  const fields: FieldDiff[] = []
  for (const code of [...new Set([...fieldsA.keys(), ...fieldsB.keys()])].sort()) {
    const x = fieldsA.get(code)
    const y = fieldsB.get(code)
    if (!x) fields.push({ field: code, status: 'added', changes: compare({}, y, fieldKeys) })
    else if (!y) fields.push({ field: code, status: 'removed', changes: compare(x, {}, fieldKeys) })
    else {
      const changes = compare(x, y, fieldKeys)
      fields.push({ field: code, status: changes.length > 0 ? 'changed' : 'same', changes })
    }
  }
  const storagesA = byKey(a.plan.storages, (s) => s.storage)
  const storagesB = byKey(b.plan.storages, (s) => s.storage)
  const storages: PlanDiff['storages'] = []
  for (const code of [...new Set([...storagesA.keys(), ...storagesB.keys()])].sort()) {
    const x = storagesA.get(code)
    const y = storagesB.get(code)
    if (!x) storages.push({ storage: code, status: 'added', changes: compare({}, y, storageKeys) })
    else if (!y) storages.push({ storage: code, status: 'removed', changes: compare(x, {}, storageKeys) })
    else {
      const changes = compare(x, y, storageKeys)
      storages.push({ storage: code, status: changes.length > 0 ? 'changed' : 'same', changes })
    }
  }
  const inputs: ValueChange[] = []
  if (a.inputs && b.inputs) {
    const slim = (i: PlanInputs) => ({
      as_of: i.as_of,
      basis: i.basis,
      reference_set: i.reference_set,
      storages: i.storages.map((s) => ({ code: s.code, current_amount: s.currentAmount, current_depth_ft: s.currentDepthFt, samples: s.results_used.map((r) => r.sampleCode) })),
      fields: i.fields.map((f) => ({ code: f.code, case: f.case })),
    })
    const x = flatten(slim(a.inputs), '', new Map())
    const y = flatten(slim(b.inputs), '', new Map())
    for (const k of [...new Set([...x.keys(), ...y.keys()])].sort()) {
      if (!same(x.get(k), y.get(k))) inputs.push(change(k, x.get(k), y.get(k)))
    }
  }
  return { from: head(a.plan), to: head(b.plan), plan: compare(a.plan, b.plan, planKeys), fields, storages, inputs }
}
