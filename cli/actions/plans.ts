import { findPlan, listPlans, type StoredPlan } from '../../shared/db/plans.ts'
import { AppError } from '../../shared/errors.ts'
import { computePlanDiff, type PlanDiff } from '../../shared/plan-diff.ts'
import type { ActionModule } from '../lazy.ts'
import { formatTable, printJson } from '../output.ts'
import { withAdvisorDb } from './advisor-db.ts'
import { cautions } from './calc-format.ts'
import { formatPlan } from './plan.ts'

/** Reads a plan id argument; AppError('usage') when it is not a positive whole number. */
export function planIdOf(raw: unknown): number {
  const id = Number(raw)
  if (!Number.isInteger(id) || id <= 0) throw new AppError('usage', `expected a plan id (a number, see \`pitside plans list\`), found "${String(raw)}"`)
  return id
}

/** The stored plan, or AppError('not_found'). */
export async function requirePlan(db: Parameters<typeof findPlan>[0], id: number): Promise<StoredPlan> {
  const plan = await findPlan(db, id)
  if (!plan) throw new AppError('not_found', `plan ${id} not found (see \`pitside plans list\`)`)
  return plan
}

export const runList: ActionModule['run'] = async ({ options, globals: g }) => {
  const season = options.season === undefined ? undefined : Number(options.season)
  if (season !== undefined && !Number.isInteger(season)) throw new AppError('usage', `--season: expected a year such as 2027, found "${options.season}"`)
  const plans = await withAdvisorDb(g.db, 'read', ({ db }) =>
    listPlans(db, { ...(options.farm ? { farm: options.farm } : {}), ...(season !== undefined ? { season } : {}), latestOnly: Boolean(options.latest) }),
  )
  if (g.json) {
    printJson({
      plans: plans.map((p) => ({
        id: p.id, farm: p.farm, season: p.season, version: p.version, reference_set: p.referenceSet, basis: p.basis,
        as_of: p.asOf, created_by: p.createdBy, created_at: p.createdAt, fields: p.fields, acres: p.acres,
      })),
    })
    return
  }
  process.stdout.write(
    formatTable(plans, [
      { header: 'plan', value: (p) => p.id, align: 'right' },
      { header: 'farm', value: (p) => p.farm },
      { header: 'season', value: (p) => p.season, align: 'right' },
      { header: 'version', value: (p) => p.version, align: 'right' },
      { header: 'as of', value: (p) => p.asOf },
      { header: 'reference set', value: (p) => p.referenceSet },
      { header: 'basis', value: (p) => p.basis },
      { header: 'fields', value: (p) => p.fields, align: 'right' },
      { header: 'acres', value: (p) => p.acres, align: 'right' },
      { header: 'made by', value: (p) => p.createdBy },
      { header: 'made at (UTC)', value: (p) => p.createdAt.replace('T', ' ').slice(0, 19) },
    ]) + '\n',
  )
}

export const runShow: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const id = planIdOf(args[0])
  const plan = await withAdvisorDb(g.db, 'read', ({ db }) => requirePlan(db, id))
  if (g.json) printJson(options.inputs ? { plan: plan.result, inputs: plan.inputs } : plan.result)
  else process.stdout.write(formatPlan(plan.result) + '\n\n' + cautions.join('\n') + '\n')
}

const show = (v: unknown) => (v === null || v === undefined ? '—' : typeof v === 'object' ? JSON.stringify(v) : String(v))

/** The readable form of a plan diff. */
export function formatPlanDiff(d: PlanDiff): string {
  const out: string[] = []
  const name = (p: PlanDiff['from']) => `plan ${p.id} (${p.farm} ${p.season} v${p.version})`
  out.push(`${name(d.from)} → ${name(d.to)}`)
  const rows: { what: string; key: string; from: string; to: string; delta: string }[] = []
  for (const c of d.plan) rows.push({ what: 'plan', key: c.key, from: show(c.from), to: show(c.to), delta: c.delta === null ? '' : show(c.delta) })
  for (const s of d.storages) {
    if (s.status === 'same') continue
    for (const c of s.changes) rows.push({ what: `storage ${s.storage}${s.status === 'changed' ? '' : ` (${s.status})`}`, key: c.key, from: show(c.from), to: show(c.to), delta: c.delta === null ? '' : show(c.delta) })
  }
  for (const f of d.fields) {
    if (f.status === 'same') continue
    for (const c of f.changes) rows.push({ what: `field ${f.field}${f.status === 'changed' ? '' : ` (${f.status})`}`, key: c.key, from: show(c.from), to: show(c.to), delta: c.delta === null ? '' : show(c.delta) })
  }
  if (rows.length === 0) out.push('no differences in the results')
  else {
    out.push(
      formatTable(rows, [
        { header: '', value: (r) => r.what },
        { header: 'what', value: (r) => r.key },
        { header: 'from', value: (r) => r.from, align: 'right' },
        { header: 'to', value: (r) => r.to, align: 'right' },
        { header: 'change', value: (r) => r.delta, align: 'right' },
      ]),
    )
  }
  if (d.inputs.length > 0) {
    out.push(`inputs that differ (${d.inputs.length}):`)
    out.push(
      formatTable(d.inputs.slice(0, 200), [
        { header: 'input', value: (c) => c.key },
        { header: 'from', value: (c) => show(c.from), align: 'right' },
        { header: 'to', value: (c) => show(c.to), align: 'right' },
      ]),
    )
    if (d.inputs.length > 200) out.push(`… and ${d.inputs.length - 200} more (see --json)`)
  } else out.push('the inputs are the same')
  return out.join('\n')
}

export const runDiff: ActionModule['run'] = async ({ args, globals: g }) => {
  const a = planIdOf(args[0])
  const b = planIdOf(args[1])
  const diff = await withAdvisorDb(g.db, 'read', async ({ db }) => {
    const [x, y] = [await requirePlan(db, a), await requirePlan(db, b)]
    return computePlanDiff({ plan: x.result, inputs: x.inputs }, { plan: y.result, inputs: y.inputs })
  })
  if (g.json) printJson(diff)
  else process.stdout.write(formatPlanDiff(diff) + '\n')
}
