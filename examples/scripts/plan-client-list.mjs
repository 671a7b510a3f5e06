#!/usr/bin/env node
// Plans a whole client list from a folder of files, without a database, through Pitside's Node API,
// and writes one JSON per farm.
//
//   npm run build:node        (once: the API is the compiled package)
//   node examples/scripts/plan-client-list.mjs <folder> --season 2027 [--as-of 2026-11-15]
//        [--reference <set>] [--basis n|p2o5|k2o|lowest] [--out <folder>]
//
// <folder> holds storages.csv and fields.csv (the formats of `pitside storages import` and
// `pitside fields import`), optionally applications*.csv (last seasons' spreading, for residual N)
// and a labs/ folder of lab files (the format of `pitside labs import`). examples/demo is such a
// folder:
//
//   node examples/scripts/plan-client-list.mjs examples/demo --season 2027 --as-of 2026-11-15 --out plans-2027
//
// Each <out>/<farm>.json is {"plan": …, "inputs": …}: the plan exactly as `pitside plan --json`
// prints one, and what it was computed from (each field's calculator case, which
// `pitside calc rate --input` reproduces). Problems in a file are printed as file:line: column:
// reason; the script then exits with 65 and writes nothing. Plans are advisory: they defer to
// local regulations and to certified nutrient-management practice.
import { existsSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { parseArgs } from 'node:util'
import {
  computeLabResults,
  computePlan,
  defaultReferenceSetName,
  findBookValues,
  findReferenceSet,
  formatProblems,
  parseApplicationCsv,
  parseFieldCsv,
  parseLabCsv,
  parseStorageCsv,
  planJson,
} from 'pitside'

const { values, positionals } = parseArgs({
  allowPositionals: true,
  options: {
    season: { type: 'string' },
    'as-of': { type: 'string' },
    reference: { type: 'string' },
    basis: { type: 'string' },
    out: { type: 'string' },
  },
})
const folder = positionals[0]
if (!folder || !values.season) {
  process.stderr.write('usage: node examples/scripts/plan-client-list.mjs <folder> --season <year> [--as-of YYYY-MM-DD] [--reference <set>] [--basis n|p2o5|k2o|lowest] [--out <folder>]\n')
  process.exit(64)
}
const season = Number(values.season)
const asOf = values['as-of'] ?? new Date().toISOString().slice(0, 10)
const out = values.out ?? `plans-${season}`
const referenceSet = findReferenceSet(values.reference ?? defaultReferenceSetName)

let failed = false
function read(file, parse) {
  const { rows, problems } = parse(readFileSync(file, 'utf8'))
  const errors = problems.filter((p) => p.severity !== 'warning')
  if (errors.length > 0) {
    process.stderr.write(formatProblems(errors, file) + '\n')
    failed = true
  }
  return rows
}

// storages and fields
const storages = read(join(folder, 'storages.csv'), parseStorageCsv)
const fieldRows = read(join(folder, 'fields.csv'), parseFieldCsv)
const applications = readdirSync(folder)
  .filter((f) => /^applications.*\.csv$/.test(f))
  .flatMap((f) => read(join(folder, f), (text) => parseApplicationCsv(text, { today: asOf })))

// lab results, resolved to the storages above (ids are positions in the storages file)
const byCode = new Map()
const farms = new Map()
storages.forEach((s, i) => {
  const storage = { id: i + 1, farmCode: s.farmCode, code: s.code, kind: s.kind, species: s.species, form: s.form }
  byCode.set(`${s.farmCode.toLowerCase()}\u0000${s.code.toLowerCase()}`, storage)
  const farm = farms.get(s.farmCode.toLowerCase()) ?? { code: s.farmCode, storages: [] }
  farm.storages.push(s.code)
  farms.set(s.farmCode.toLowerCase(), farm)
})
const context = {
  storages: byCode,
  farms,
  history: () => undefined,
  bookValues: (s) => findBookValues(s.species, s.form, referenceSet),
}
const results = new Map() // storage id → PlanLabResult[]
const labDir = join(folder, 'labs')
for (const name of existsSync(labDir) ? readdirSync(labDir).filter((f) => f.endsWith('.csv')).sort() : []) {
  const file = join(labDir, name)
  const parsed = parseLabCsv(readFileSync(file, 'utf8'), { file, today: asOf })
  const resolved = computeLabResults(parsed.rows, context)
  const errors = [...parsed.problems.filter((p) => p.severity !== 'warning'), ...resolved.problems]
  if (errors.length > 0) {
    process.stderr.write(formatProblems(errors, file) + '\n')
    failed = true
    continue
  }
  for (const r of resolved.results) {
    const list = results.get(r.storageId) ?? []
    list.push({ sampleCode: r.row.sampleId, reportNumber: r.row.reportId, sampledOn: r.row.sampledOn, dryMatterPct: r.dryMatterPct, totalN: r.totalN, ammoniumN: r.ammoniumN, p2o5: r.p2o5, k2o: r.k2o })
    results.set(r.storageId, list)
  }
}
if (failed) process.exit(65)

// one snapshot per farm: what `pitside plan` would load from its database
const snapshots = new Map()
const snapshotOf = (farmCode) => {
  let s = snapshots.get(farmCode)
  if (!s) snapshots.set(farmCode, (s = { farm: { code: farmCode, name: farmCode }, storages: [], fields: [] }))
  return s
}
for (const s of storages) {
  const id = byCode.get(`${s.farmCode.toLowerCase()}\u0000${s.code.toLowerCase()}`).id
  snapshotOf(s.farmCode).storages.push({
    code: s.code, name: s.name ?? null, kind: s.kind, species: s.species, form: s.form, shape: s.shape ?? null,
    lengthFt: s.lengthFt ?? null, widthFt: s.widthFt ?? null, diameterFt: s.diameterFt ?? null, depthFt: s.depthFt ?? null,
    sideSlope: s.sideSlope ?? null, freeboardFt: s.freeboardFt ?? null, capacity: s.capacity ?? null, capacityUnit: s.capacityUnit ?? null,
    currentAmount: s.currentAmount ?? null, currentAmountOn: s.currentAmountOn ?? null, currentDepthFt: s.currentDepthFt ?? null,
    results: (results.get(id) ?? []).filter((r) => r.sampledOn <= asOf).sort((a, b) => a.sampledOn.localeCompare(b.sampledOn)),
  })
}
const fields = new Map()
for (const row of fieldRows) {
  const key = `${row.farmCode}\u0000${row.code}`
  let f = fields.get(key)
  if (!f) {
    const overrides = Object.fromEntries(Object.entries(row.overrides).filter(([, v]) => v !== null && v !== undefined))
    f = {
      code: row.code, name: row.name ?? null, acres: row.acres, storage: row.storageCode, method: row.method,
      incorporatedWithinHours: row.incorporatedWithinHours, overrides, cropSeason: null, soilTest: row.soilTest, applications: [],
    }
    fields.set(key, f)
    snapshotOf(row.farmCode).fields.push(f)
  }
  if (row.season === season) f.cropSeason = { season, crop: row.crop, yieldGoal: row.yieldGoal, previousCrop: row.previousCrop }
}
for (const a of applications) {
  const f = fields.get(`${a.farmCode}\u0000${a.fieldCode}`)
  if (f && a.appliedOn <= asOf) {
    f.applications.push({ appliedOn: a.appliedOn, storage: a.storageCode, amount: a.amount, amountUnit: a.amountUnit, method: a.method, incorporatedWithinHours: a.incorporatedWithinHours })
  }
}

mkdirSync(out, { recursive: true })
const createdAt = new Date().toISOString()
for (const [code, snapshot] of [...snapshots].sort(([a], [b]) => a.localeCompare(b))) {
  snapshot.fields.sort((a, b) => a.code.localeCompare(b.code))
  snapshot.storages.sort((a, b) => a.code.localeCompare(b.code))
  const { plan, inputs } = computePlan(snapshot, { season, asOf, referenceSet, ...(values.basis ? { basis: values.basis } : {}) })
  const file = join(out, `${code}.json`)
  writeFileSync(file, JSON.stringify({ plan: planJson(plan, { version: 1, createdAt }), inputs }, null, 2) + '\n')
  const skipped = plan.skipped.length ? `, ${plan.skipped.length} skipped` : ''
  process.stdout.write(`${file}: ${plan.fields.length} fields, ${plan.totals.acres} ac, ${plan.totals.planned.gal} gal and ${plan.totals.planned.ton} ton planned${skipped}\n`)
}
