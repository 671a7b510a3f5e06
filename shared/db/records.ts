import type SQLite from 'better-sqlite3'
import { applicationWindow } from '../application-csv.ts'
import { findSamplingRound } from '../plan.ts'

/**
 * The records of one farm and season that a regulator or cost-share program asks for: the lab
 * analyses behind the season's manure, the applications actually made (with the nutrients they
 * carried, from the storage's sampling round when it was spread), and the plans. Set-based
 * queries, one per table.
 */

export interface AnalysisRecord {
  storage: string
  sample_id: string
  report_id: string
  lab: string | null
  sampled_on: string
  form: string
  species: string
  reported_basis: string
  reported_units: string
  /** per 1000 gal or per ton, as-is */
  per_unit: string
  dry_matter_pct: number | null
  total_n: number | null
  ammonium_n: number | null
  organic_n: number | null
  p2o5: number | null
  k2o: number | null
  qualifiers: string | null
  /** the result was replaced by a corrected one */
  superseded: boolean
  warnings: string | null
  source_file: string | null
}

export interface ApplicationRecord {
  field: string
  acres: number
  applied_on: string
  storage: string | null
  amount: number
  amount_unit: string
  /** amount ÷ acres, in gal/ac or ton/ac */
  rate: number | null
  method: string | null
  incorporated_within_hours: number | null
  loads: number | null
  applicator: string | null
  /** the sampling round the nutrients are estimated from (its latest date), or null */
  analysis_sampled_on: string | null
  /** total nutrients applied per acre, lb/ac, from that round's mean */
  total_n_lb_per_acre: number | null
  p2o5_lb_per_acre: number | null
  k2o_lb_per_acre: number | null
  notes: string | null
}

const round = (x: number, digits = 1) => Math.round(x * 10 ** digits) / 10 ** digits

/**
 * Lab results of the farm's storages from a year before the season's spreading window opened to
 * its end (the rounds the season's plans and applications stood on), superseded ones included and
 * marked, oldest first.
 */
export function findAnalysisRecords(sqlite: SQLite.Database, farmId: number, season: number): AnalysisRecord[] {
  const window = applicationWindow(season)
  const from = `${Number(window.from.slice(0, 4)) - 1}${window.from.slice(4)}`
  const rows = sqlite
    .prepare(
      `select s.code as storage, r.sample_code, p.report_number, p.lab, r.sampled_on, k.form, k.species, k.basis, k.units, k.per_unit,
         r.dry_matter_pct, r.total_n, r.ammonium_n, r.organic_n, r.p2o5, r.k2o, r.qualifiers, r.superseded_by, r.warnings, i.file_name as source_file
       from lab_results r join storages s on s.id = r.storage_id join lab_reports p on p.id = r.lab_report_id
         join lab_result_kinds k on k.id = r.kind_id
         left join import_runs i on i.id = p.import_run_id
       where s.farm_id = ? and r.sampled_on >= ? and r.sampled_on <= ?
       order by r.sampled_on, s.code, r.sample_code, r.id`,
    )
    .all(farmId, from, window.to) as Record<string, any>[]
  return rows.map((r) => ({
    storage: r.storage,
    sample_id: r.sample_code,
    report_id: r.report_number,
    lab: r.lab,
    sampled_on: r.sampled_on,
    form: r.form,
    species: r.species,
    reported_basis: r.basis,
    reported_units: r.units,
    per_unit: r.per_unit,
    dry_matter_pct: r.dry_matter_pct,
    total_n: r.total_n,
    ammonium_n: r.ammonium_n,
    organic_n: r.organic_n,
    p2o5: r.p2o5,
    k2o: r.k2o,
    qualifiers: r.qualifiers,
    superseded: r.superseded_by !== null,
    warnings: r.warnings,
    source_file: r.source_file,
  }))
}

/**
 * The applications of the season's spreading window (applicationWindow: July 1 of the year before
 * to June 30), each with the nutrients it carried per acre: rate × the mean of its storage's
 * sampling round on or before the day it was spread (none when the storage had no result yet).
 */
export function findApplicationRecords(sqlite: SQLite.Database, farmId: number, season: number): ApplicationRecord[] {
  const window = applicationWindow(season)
  const apps = sqlite
    .prepare(
      `select f.code as field, f.acres, a.applied_on, a.storage_id, coalesce(s.code, fs.code) as storage, coalesce(a.storage_id, f.storage_id) as from_storage,
         a.amount, a.amount_unit, a.method, a.incorporated_within_hours, a.loads, a.applicator, a.notes
       from applications a join fields f on f.id = a.field_id
       left join storages s on s.id = a.storage_id left join storages fs on fs.id = f.storage_id
       where f.farm_id = ? and a.applied_on >= ? and a.applied_on <= ?
       order by a.applied_on, f.code, a.id`,
    )
    .all(farmId, window.from, window.to) as Record<string, any>[]
  const results = new Map<number, { sampledOn: string; totalN: number | null; p2o5: number | null; k2o: number | null }[]>()
  for (const r of sqlite
    .prepare(
      `select r.storage_id, r.sampled_on, r.total_n, r.p2o5, r.k2o from lab_results r join storages s on s.id = r.storage_id
       where s.farm_id = ? and r.superseded_by is null and r.sampled_on <= ? order by r.sampled_on`,
    )
    .all(farmId, window.to) as Record<string, any>[]) {
    const list = results.get(r.storage_id) ?? []
    list.push({ sampledOn: r.sampled_on, totalN: r.total_n, p2o5: r.p2o5, k2o: r.k2o })
    results.set(r.storage_id, list)
  }
  return apps.map((a) => {
    const rate = a.acres > 0 ? a.amount / a.acres : null
    const roundOf = a.from_storage === null ? [] : findSamplingRound(results.get(a.from_storage) ?? [], a.applied_on)
    const mean = (k: 'totalN' | 'p2o5' | 'k2o') => {
      const v = roundOf.map((r) => r[k]).filter((x): x is number => x !== null)
      return v.length ? v.reduce((s, x) => s + x, 0) / v.length : null
    }
    // analyses are per 1000 gal (liquid) or per ton (solid)
    const perRate = a.amount_unit === 'gal' ? 1 / 1000 : 1
    const lb = (k: 'totalN' | 'p2o5' | 'k2o') => {
      const m = mean(k)
      return m === null || rate === null ? null : round(m * rate * perRate)
    }
    return {
      field: a.field,
      acres: a.acres,
      applied_on: a.applied_on,
      storage: a.storage,
      amount: a.amount,
      amount_unit: a.amount_unit,
      rate: rate === null ? null : round(rate, a.amount_unit === 'gal' ? 0 : 2),
      method: a.method,
      incorporated_within_hours: a.incorporated_within_hours,
      loads: a.loads,
      applicator: a.applicator,
      analysis_sampled_on: roundOf.length ? roundOf[roundOf.length - 1]!.sampledOn : null,
      total_n_lb_per_acre: lb('totalN'),
      p2o5_lb_per_acre: lb('p2o5'),
      k2o_lb_per_acre: lb('k2o'),
      notes: a.notes,
    }
  })
}
