/**
 * The published sources a stored plan cites. A plan lists each source once (`sources`, the reference
 * set's entries with their `id`) and each field names the ones its numbers used (`source_ids`).
 * Plans stored before that repeat the full entries in every field (`fields[].sources`); both shapes
 * are read here, so nothing else needs to know there were two.
 */

export interface PlanSources {
  /** every cited source once, in the plan's order (for older plans, in order of first citation) */
  sources: unknown[]
  /** the sources each field's numbers used, by field code */
  byField: Map<string, unknown[]>
}

function keyOf(source: unknown): string {
  if (source && typeof source === 'object' && typeof (source as { id?: unknown }).id === 'string') return `id:${(source as { id: string }).id}`
  return `json:${JSON.stringify(source)}`
}

/**
 * The sources of a stored plan JSON (`plans.result`, or the `result` of the viewer's plan), from
 * either shape: plan-level `sources` with per-field `source_ids`, or per-field `sources`. An id no
 * source is listed for stands as the bare id. Pure; never throws; missing or malformed parts give
 * empty lists.
 */
export function computePlanSources(result: { sources?: unknown; fields?: unknown } | null | undefined): PlanSources {
  const sources: unknown[] = []
  const byKey = new Map<string, unknown>()
  const add = (s: unknown) => {
    const key = keyOf(s)
    if (!byKey.has(key)) {
      byKey.set(key, s)
      sources.push(s)
    }
    return byKey.get(key)
  }
  if (Array.isArray(result?.sources)) for (const s of result.sources) add(s)
  const byField = new Map<string, unknown[]>()
  const fields = Array.isArray(result?.fields) ? (result.fields as unknown[]) : []
  for (const f of fields) {
    if (!f || typeof f !== 'object') continue
    const field = f as { field?: unknown; sources?: unknown; source_ids?: unknown }
    if (typeof field.field !== 'string') continue
    let used: unknown[] = []
    if (Array.isArray(field.sources)) used = field.sources.map(add)
    else if (Array.isArray(field.source_ids)) used = field.source_ids.map((id) => byKey.get(`id:${String(id)}`) ?? String(id))
    byField.set(field.field, used)
  }
  return { sources, byField }
}
