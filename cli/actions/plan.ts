import type SQLite from 'better-sqlite3'
import type { Kysely } from 'kysely'
import { userInfo } from 'node:os'
import { writeCsv, type CsvValue } from '../../shared/csv-write.ts'
import { findPlanSnapshots, planWriter, type NewPlan } from '../../shared/db/plans.ts'
import type { Database } from '../../shared/db/schema.ts'
import { AppError, formatProblems } from '../../shared/errors.ts'
import { checkPlanOptions, computePlan, type PlanBasis, type PlanJson } from '../../shared/plan.ts'
import { defaultReferenceSetName, findReferenceSet } from '../../shared/reference-sets/registry.ts'
import type { ActionModule } from '../lazy.ts'
import { formatTable, note, printJson } from '../output.ts'
import { withAdvisorDb } from './advisor-db.ts'
import { cautions } from './calc-format.ts'

export interface PlanDeps {
  db: Kysely<Database>
  sqlite: SQLite.Database
}

export interface RunPlansOptions {
  /** farm codes to plan */
  farms?: readonly string[]
  /** every farm (of `organization` when given) */
  all?: boolean
  organization?: string
  season: number
  /** YYYY-MM-DD; default today (UTC) */
  asOf?: string
  /** reference set name; default the built-in default */
  referenceSet?: string
  /** default n; a field's basis override wins */
  basis?: PlanBasis
  /** who made the plan (stored in plans.created_by) */
  createdBy?: string
  /** called after each farm is written */
  onFarm?: (done: number, total: number, farm: string) => void
}

/**
 * The core of `pitside plan`, callable in-process (the demo and the benchmark use it): loads the
 * chosen farms with a few set-based queries, computes each farm's plan (shared/plan.ts) and writes
 * it as a new immutable version, all or nothing per farm (farmsPerTransaction farms per
 * transaction). Returns the plans as `--json` prints
 * them. Throws AppError('usage') without farms, ('not_found') for an unknown farm or reference set.
 */
export async function runPlans(deps: PlanDeps, options: RunPlansOptions): Promise<{ plans: PlanJson[] }> {
  const asOf = options.asOf ?? new Date().toISOString().slice(0, 10)
  const problems = checkPlanOptions({ season: options.season, asOf })
  if (problems.length > 0) throw new AppError('usage', formatProblems(problems))
  if (!options.all && !(options.farms && options.farms.length > 0)) throw new AppError('usage', 'give --farm <code> (one or more) or --all')
  const set = findReferenceSet(options.referenceSet ?? defaultReferenceSetName)
  const createdBy = options.createdBy ?? defaultAuthor()
  const loaded = findPlanSnapshots(deps.sqlite, { farms: options.all ? null : options.farms!, ...(options.organization ? { organization: options.organization } : {}) }, options.season, asOf)
  const writer = planWriter(deps.sqlite)
  const plans: PlanJson[] = []
  const computeOptions = { season: options.season, asOf, referenceSet: set, ...(options.basis ? { basis: options.basis } : {}) }
  for (let from = 0; from < loaded.length; from += farmsPerTransaction) {
    // a group of farms: their plans computed, then written in one transaction
    const group: NewPlan[] = []
    let failure: { error: unknown } | null = null
    for (let i = from; i < Math.min(loaded.length, from + farmsPerTransaction); i++) {
      const farm = loaded[i]!
      try {
        const { plan, inputs } = computePlan(farm.snapshot, computeOptions)
        group.push({ farm, body: plan, inputs, createdBy, createdAt: new Date().toISOString() })
      } catch (error) {
        failure = { error } // the farms before it are written, then its error is thrown
        break
      }
    }
    let written: PlanJson[]
    try {
      written = writer.writeAll(group)
    } catch {
      // nothing of the group is in: each farm alone, so that the farms before the one that fails
      // are kept and that farm's error is the one thrown
      written = []
      for (const p of group) written.push(writer.write(p))
    }
    written.forEach((p, k) => {
      plans.push(p)
      options.onFarm?.(from + k + 1, loaded.length, group[k]!.farm.snapshot.farm.code)
    })
    if (failure) throw failure.error
  }
  return { plans }
}

/**
 * Farms whose plans are written in one transaction. A commit per farm wrote the tables' last pages
 * again for every farm and checkpointed twice as often: for 1,000 farms 219 MB of WAL for 110 MB of
 * plans, and `plan --all` took 5–10 % longer (docs/performance.md). All or nothing per farm holds:
 * a group that fails is written again farm by farm.
 */
export const farmsPerTransaction = 25

function defaultAuthor(): string {
  try {
    return process.env.PITSIDE_USER ?? userInfo().username
  } catch {
    return 'pitside'
  }
}

const fmt = (x: number | null | undefined, digits = 0) =>
  x === null || x === undefined ? '' : x.toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits })

const rateDigits = (unit: string) => (unit.startsWith('gal') ? 0 : 1)

/** The readable form of one plan: its fields, its storages, its cautions. */
export function formatPlan(p: PlanJson): string {
  const out: string[] = []
  out.push(`${p.farm} season ${p.season}, version ${p.version}${'id' in p ? ` (plan ${(p as { id: number }).id})` : ''}: reference set ${p.reference_set}, basis ${p.basis}, as of ${p.as_of}`)
  if (p.fields.length > 0) {
    out.push(
      formatTable(p.fields, [
        { header: 'field', value: (f) => f.field },
        { header: 'crop', value: (f) => f.crop },
        { header: 'acres', value: (f) => fmt(f.acres, 1), align: 'right' },
        { header: 'storage', value: (f) => f.storage },
        { header: 'method', value: (f) => f.method },
        { header: 'rate', value: (f) => `${fmt(f.rate, rateDigits(f.rate_unit))} ${f.rate_unit}`, align: 'right' },
        { header: 'limited by', value: (f) => f.limited_by ?? 'no need' },
        { header: 'total', value: (f) => (f.total_manure === null ? '' : `${fmt(f.total_manure, 0)} ${f.total_manure_unit}`), align: 'right' },
        { header: 'loads', value: (f) => f.loads?.field ?? '', align: 'right' },
        { header: 'still needed N-P2O5-K2O lb/ac', value: (f) => `${fmt(f.supplemental.n)}-${fmt(f.supplemental.p2o5)}-${fmt(f.supplemental.k2o)}`, align: 'right' },
        { header: 'warnings', value: (f) => f.warnings.length || '', align: 'right' },
      ]),
    )
  }
  out.push(
    formatTable(p.storages, [
      { header: 'storage', value: (s) => s.storage },
      { header: 'analysis', value: (s) => (s.analysis_source === 'lab' ? `${s.samples} sample${s.samples === 1 ? '' : 's'} ${s.round!.from === s.round!.to ? s.round!.to : `${s.round!.from}…${s.round!.to}`}` : 'book values') },
      {
        header: 'N / NH4-N / P2O5 / K2O',
        value: (s) => (s.analysis ? `${fmt(s.analysis.total_n, 1)} / ${fmt(s.analysis.ammonium_n, 1)} / ${fmt(s.analysis.p2o5, 1)} / ${fmt(s.analysis.k2o, 1)} lb/${s.form === 'liquid' ? '1000 gal' : 'ton'}` : ''),
      },
      { header: 'in storage', value: (s) => (s.in_storage === null ? '' : `${fmt(s.in_storage)} ${s.unit}`), align: 'right' },
      { header: 'planned', value: (s) => `${fmt(s.planned)} ${s.unit}`, align: 'right' },
      { header: 'left over', value: (s) => (s.surplus === null ? '' : `${fmt(s.surplus)} ${s.unit}`), align: 'right' },
      { header: 'acres needed / planned', value: (s) => (s.acres_needed === null ? '' : `${fmt(s.acres_needed, 1)} / ${fmt(s.acres_available, 1)}`), align: 'right' },
    ]),
  )
  const warnings = [...p.warnings, ...p.storages.flatMap((s) => s.warnings), ...p.fields.flatMap((f) => f.warnings.map((w) => ({ ...w, message: `${f.field}: ${w.message}` })))]
  const distinct = [...new Set(warnings.map((w) => w.message))]
  if (distinct.length > 0) out.push(distinct.map((m) => `warning: ${m}`).join('\n'))
  return out.join('\n')
}

/** The plans as CSV, one row per field (RFC 4180, safe to open in a spreadsheet). */
export function plansCsv(plans: readonly PlanJson[]): string {
  const header = [
    'plan_id', 'farm', 'season', 'version', 'reference_set', 'basis', 'as_of', 'field', 'field_name', 'acres', 'crop', 'storage', 'method',
    'rate', 'rate_unit', 'limited_by', 'need_n', 'need_p2o5', 'need_k2o', 'applied_n', 'applied_p2o5', 'applied_k2o',
    'supplied_n', 'supplied_p2o5', 'supplied_k2o', 'supplemental_n', 'supplemental_p2o5', 'supplemental_k2o',
    'total_manure', 'total_manure_unit', 'loads', 'residual_n_credit', 'warnings',
  ]
  const rows: CsvValue[][] = [header]
  for (const p of plans) {
    for (const f of p.fields) {
      rows.push([
        'id' in p ? (p as { id: number }).id : null, p.farm, p.season, p.version, p.reference_set, f.basis, p.as_of, f.field, f.name, f.acres, f.crop, f.storage, f.method,
        f.rate, f.rate_unit, f.limited_by, f.need.n, f.need.p2o5, f.need.k2o, f.applied.n, f.applied.p2o5, f.applied.k2o,
        f.supplied.n, f.supplied.p2o5, f.supplied.k2o, f.supplemental.n, f.supplemental.p2o5, f.supplemental.k2o,
        f.total_manure, f.total_manure_unit, f.loads?.field ?? null, f.credits.manure_n, f.warnings.map((w) => w.message).join('; '),
      ])
    }
  }
  return writeCsv(rows)
}

export const run: ActionModule['run'] = async ({ options, globals: g }) => {
  const season = Number(options.season)
  if (!Number.isInteger(season)) throw new AppError('usage', `--season: expected a year such as 2027, found "${options.season}"`)
  if (options.all && options.farm?.length) throw new AppError('usage', 'give --farm or --all, not both')
  if (g.json && options.csv) throw new AppError('usage', 'give --json or --csv, not both')
  const result = await withAdvisorDb(g.db, 'write', (deps) =>
    runPlans(deps, {
      ...(options.all ? { all: true } : { farms: options.farm as string[] }),
      ...(options.org ? { organization: options.org } : {}),
      season,
      ...(options.asOf ? { asOf: options.asOf } : {}),
      ...(options.reference ? { referenceSet: options.reference } : {}),
      ...(options.basis ? { basis: options.basis } : {}),
      ...(options.by ? { createdBy: options.by } : {}),
    }),
  )
  if (result.plans.length === 0) note(g, 'no farms to plan')
  if (g.json) printJson(result)
  else if (options.csv) process.stdout.write(plansCsv(result.plans))
  else if (result.plans.length <= 3) {
    process.stdout.write(result.plans.map(formatPlan).join('\n\n') + '\n\n' + cautions.join('\n') + '\n')
  } else if (result.plans.length > 100) {
    const t = { fields: 0, acres: 0, skipped: 0 }
    for (const p of result.plans) {
      t.fields += p.totals.fields
      t.acres += p.totals.acres
      t.skipped += p.totals.skipped
    }
    process.stdout.write(
      `${result.plans.length} plans (plan ${result.plans[0]!.id} to ${result.plans[result.plans.length - 1]!.id}): ${t.fields} fields, ${fmt(t.acres)} acres` +
        `${t.skipped ? `, ${t.skipped} fields skipped` : ''}; \`pitside plans list --latest --season ${season}\` lists them, --csv gives every field\n` +
        cautions.join('\n') +
        '\n',
    )
  } else {
    process.stdout.write(
      formatTable(result.plans, [
        { header: 'plan', value: (p) => ('id' in p ? (p as { id: number }).id : ''), align: 'right' },
        { header: 'farm', value: (p) => p.farm },
        { header: 'version', value: (p) => p.version, align: 'right' },
        { header: 'fields', value: (p) => p.totals.fields, align: 'right' },
        { header: 'acres', value: (p) => fmt(p.totals.acres, 1), align: 'right' },
        { header: 'planned gal', value: (p) => fmt(p.totals.planned.gal), align: 'right' },
        { header: 'planned ton', value: (p) => fmt(p.totals.planned.ton, 1), align: 'right' },
        { header: 'still needed N-P2O5-K2O lb', value: (p) => `${fmt(p.totals.supplemental_lb.n)}-${fmt(p.totals.supplemental_lb.p2o5)}-${fmt(p.totals.supplemental_lb.k2o)}`, align: 'right' },
        { header: 'skipped', value: (p) => p.totals.skipped || '', align: 'right' },
      ]) +
        '\n' +
        cautions.join('\n') +
        '\n',
    )
    note(g, `${result.plans.length} plans written; \`pitside plans show <plan>\` for one of them`)
  }
}
