// The practical limit for planning every farm: the least a program can do to store the same plans.
// One query per table into plain arrays, the latest sampling round of each storage averaged in a
// loop, each field's case handed straight to the engine's own arithmetic (computeRate, no
// validation: the rows come from this database), the same plan and field rows serialized and
// written with prepared statements in a single transaction.
// Usage: node bench/baselines/plan-bare.mjs <db> <season> <as-of YYYY-MM-DD>
import Database from 'better-sqlite3'
import { computeRate } from '../../dist/shared/rate.js'
import { defaultReferenceSetName, findReferenceSet } from '../../dist/shared/reference-sets/registry.js'

const [file, seasonText, asOf] = process.argv.slice(2)
const season = Number(seasonText)
const set = findReferenceSet(defaultReferenceSetName)
const db = new Database(file)
db.pragma('journal_mode = WAL')
db.pragma('synchronous = NORMAL')
db.pragma('foreign_keys = ON')

const farms = db.prepare('select id, code from farms order by code').raw().all()
const storages = db
  .prepare('select id, farm_id, code, name, kind, species, form, current_amount, current_amount_on from storages order by farm_id, code')
  .raw()
  .all()
const results = db
  .prepare(
    `with latest as (select storage_id, max(sampled_on) as d from lab_results where superseded_by is null and sampled_on <= ? group by storage_id)
     select r.storage_id, r.sample_code, (select report_number from lab_reports p where p.id = r.lab_report_id), r.sampled_on, r.dry_matter_pct, r.total_n, r.ammonium_n, r.p2o5, r.k2o
     from lab_results r join latest l on l.storage_id = r.storage_id
     where r.superseded_by is null and r.sampled_on <= l.d and r.sampled_on >= date(l.d, '-45 days') order by r.storage_id, r.sampled_on`,
  )
  .raw()
  .all(asOf)
const fields = db
  .prepare(
    `select f.id, f.farm_id, f.code, f.name, f.acres, f.storage_id, f.method, f.incorporated_within_hours,
            c.crop, c.yield_goal, c.previous_crop, t.p_ppm, t.p_method, t.k_ppm
     from fields f join crop_seasons c on c.field_id = f.id and c.season = ?
     left join soil_tests t on t.id = (select max(id) from soil_tests where field_id = f.id)
     order by f.farm_id, f.code`,
  )
  .raw()
  .all(season)

// storage id → index; the latest round's mean analysis per storage
const storageIndex = new Map()
for (let i = 0; i < storages.length; i++) storageIndex.set(storages[i][0], i)
const n = storages.length
const sums = Array.from({ length: 5 }, () => new Float64Array(n))
const counts = Array.from({ length: 5 }, () => new Float64Array(n))
const used = Array.from({ length: n }, () => [])
for (const r of results) {
  const i = storageIndex.get(r[0])
  used[i].push({ sampleCode: r[1], reportNumber: r[2], sampledOn: r[3], dryMatterPct: r[4], totalN: r[5], ammoniumN: r[6], p2o5: r[7], k2o: r[8] })
  for (let k = 0; k < 5; k++) {
    const v = r[4 + k]
    if (v !== null) {
      sums[k][i] += v
      counts[k][i]++
    }
  }
}
const round3 = (x) => Math.round(x * 1000) / 1000
const analyses = new Array(n)
for (let i = 0; i < n; i++) {
  const mean = (k) => (counts[k][i] > 0 ? round3(sums[k][i] / counts[k][i]) : null)
  const totalN = mean(1)
  analyses[i] = totalN === null ? null : { dm: mean(0), totalN, ammoniumN: Math.min(mean(2) ?? totalN * 0.65, totalN), p2o5: mean(3), k2o: mean(4) }
}

const createdAt = new Date().toISOString()
const nextVersion = db.prepare('select farm_id, coalesce(max(version), 0) + 1 from plans where season = ? group by farm_id').raw().all(season)
const versions = new Map(nextVersion.map(([id, v]) => [id, v]))
const insertPlan = db.prepare(
  `insert into plans (farm_id, season, version, reference_set, reference_set_version, basis, as_of, inputs, result, created_by, created_at)
   values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
)
const insertField = db.prepare(
  `insert into plan_fields (plan_id, field_id, field_code, acres, crop, storage_id, method, rate, rate_unit, limited_by,
     need_n, need_p2o5, need_k2o, applied_n, applied_p2o5, applied_k2o, supplied_n, supplied_p2o5, supplied_k2o,
     supplemental_n, supplemental_p2o5, supplemental_k2o, total_manure, loads, detail, warnings)
   values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
)

db.transaction(() => {
  let s = 0
  let f = 0
  for (const [farmId, farmCode] of farms) {
    const farmStorages = []
    while (s < storages.length && storages[s][1] === farmId) farmStorages.push(s++)
    const planned = []
    const cited = new Set()
    const inputFields = []
    const rows = []
    const totals = { fields: 0, acres: 0, planned: { gal: 0, ton: 0 }, applied_lb: { n: 0, p2o5: 0, k2o: 0 }, supplied_lb: { n: 0, p2o5: 0, k2o: 0 }, supplemental_lb: { n: 0, p2o5: 0, k2o: 0 }, skipped: 0 }
    for (; f < fields.length && fields[f][1] === farmId; f++) {
      const [fieldId, , code, name, acres, storageId, method, hours, crop, yieldGoal, previousCrop, pPpm, pMethod, kPpm] = fields[f]
      const si = storageIndex.get(storageId)
      const a = analyses[si]
      const st = storages[si]
      const liquid = st[6] === 'liquid'
      const c = {
        manure: { form: st[6], species: st[5], units: liquid ? 'lb_per_1000gal' : 'lb_per_ton', basis: 'as_is', total_n: a.totalN, ammonium_n: a.ammoniumN, p2o5: a.p2o5, k2o: a.k2o, ...(a.dm !== null ? { dry_matter_pct: a.dm } : {}) },
        application: method === 'broadcast_incorporated' ? { method, incorporated_within_hours: hours } : { method },
        crop: { name: crop, yield_goal: yieldGoal, previous_crop: previousCrop, soil_test_p_ppm: pPpm, soil_test_p_method: pMethod, soil_test_k_ppm: kPpm, soil_test_k_method: pMethod },
        basis: 'n',
        units: 'us',
        reference_set: set.name,
        acres,
      }
      const { warnings, sources, ...numbers } = computeRate(c, { referenceSet: set })
      // as a stored plan has them: each field names its sources by id, the plan lists them once
      for (const s of sources) cited.add(s.id)
      const result = { field: code, name, acres, crop, yield_goal: yieldGoal, storage: st[2], method, incorporated_within_hours: method === 'broadcast_incorporated' ? hours : null, basis: 'n', credits: { manure_n: 0, applications: 0 }, ...numbers, source_ids: sources.map((s) => s.id), warnings }
      rows.push([fieldId, storageId, result])
      inputFields.push({ code, name, acres, storage: st[2], method, incorporatedWithinHours: hours, case: c })
      planned.push(result)
      totals.fields++
      totals.acres += acres
      if (result.total_manure !== null) totals.planned[result.total_manure_unit === 'gal' ? 'gal' : 'ton'] += result.total_manure
      for (const k of ['n', 'p2o5', 'k2o']) {
        totals.applied_lb[k] += result.applied[k] * acres
        totals.supplied_lb[k] += result.supplied[k] * acres
        totals.supplemental_lb[k] += (result.supplemental[k] ?? 0) * acres
      }
    }
    const storageResults = farmStorages.map((i) => ({
      storage: storages[i][2],
      name: storages[i][3],
      kind: storages[i][4],
      species: storages[i][5],
      form: storages[i][6],
      in_storage: storages[i][7],
      in_storage_on: storages[i][8],
      planned: planned.filter((p) => p.storage === storages[i][2]).reduce((x, p) => x + p.acres * p.rate, 0),
      samples: used[i].length,
      analysis: analyses[i],
    }))
    const version = versions.get(farmId) ?? 1
    const body = { farm: farmCode, season, version, reference_set: set.name, created_at: createdAt, as_of: asOf, basis: 'n', reference_set_version: set.version, storages: storageResults, fields: planned, skipped: [], totals, warnings: [], sources: set.sources.filter((s) => cited.has(s.id)) }
    const inputs = { farm: farmCode, season, as_of: asOf, basis: 'n', reference_set: { name: set.name, version: set.version }, storages: farmStorages.map((i) => ({ code: storages[i][2], results_used: used[i] })), fields: inputFields }
    const planId = insertPlan.run(farmId, season, version, set.name, set.version, 'n', asOf, JSON.stringify(inputs), JSON.stringify(body), 'bench', createdAt).lastInsertRowid
    for (const [fieldId, storageId, r] of rows) {
      insertField.run(planId, fieldId, r.field, r.acres, r.crop, storageId, r.method, r.rate, r.rate_unit, r.limited_by, r.need.n, r.need.p2o5, r.need.k2o,
        r.applied.n, r.applied.p2o5, r.applied.k2o, r.supplied.n, r.supplied.p2o5, r.supplied.k2o, r.supplemental.n, r.supplemental.p2o5, r.supplemental.k2o,
        r.total_manure, r.loads?.field ?? null, JSON.stringify(r), r.warnings.length > 0 ? JSON.stringify(r.warnings) : null)
    }
  }
}).immediate()
db.close()
