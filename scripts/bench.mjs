// `npm run bench`: Pitside against the practical limit of each path, measured side by side in one
// run on the same invented data. Reports only; never part of `npm test`, never fails on timing.
//
//   npm run bench                      the table (stdout)
//   npm run bench -- --json            one JSON object on stdout, the table and progress on stderr
//   options: --only import,plan,api,startup,bundle,render   --runs N (measured pairs, default 3)
//            --warmup N (default 1)   --size tiny|full   --profile (CPU profiles of the pitside side)
//            --keep (keep the temporary folder)
//   environment: PITSIDE_BENCH_SIZE, PITSIDE_BENCH_RUNS, PITSIDE_BENCH_WARMUP
import { existsSync } from 'node:fs'
import { join } from 'node:path'
import { parseArgs } from 'node:util'
import { benchApi } from '../bench/cases/api.mjs'
import { benchBundle } from '../bench/cases/bundle.mjs'
import { benchImport } from '../bench/cases/import.mjs'
import { benchPlan } from '../bench/cases/plan.mjs'
import { benchRender } from '../bench/cases/render.mjs'
import { benchStartup } from '../bench/cases/startup.mjs'
import { binPath, ensureDir, makeWorkDir, repoRoot } from '../bench/lib/context.mjs'
import { formatTable } from '../bench/lib/table.mjs'
import { makeViewerDatabase } from '../bench/lib/viewer-db.mjs'

const sizes = {
  full: {
    importRows: 200_000,
    importFarms: 300,
    planFarms: 1000,
    planFieldsPerFarm: 20,
    apiFields: 50,
    apiConnections: 50,
    apiSeconds: 10,
    renderFields: 200,
    renderRuns: 5,
    startupRuns: 10,
  },
  tiny: {
    importRows: 500,
    importFarms: 5,
    planFarms: 4,
    planFieldsPerFarm: 3,
    apiFields: 5,
    apiConnections: 4,
    apiSeconds: 1,
    renderFields: 10,
    renderRuns: 1,
    startupRuns: 1,
  },
}

const allCases = { import: benchImport, plan: benchPlan, api: benchApi, startup: benchStartup, bundle: benchBundle, render: benchRender }

/** The keys `--json` always carries (the goals of the performance issue). */
const requiredKeys = [
  'import_ratio', 'import_peak_rss_mb', 'plan_ratio', 'plan_seconds', 'api_ratio', 'api_p99_ms', 'api_errors',
  'startup_ratio', 'bundle_gzip_kb', 'plan_render_ms',
]

const { values } = parseArgs({
  options: {
    json: { type: 'boolean', default: false },
    only: { type: 'string' },
    runs: { type: 'string' },
    warmup: { type: 'string' },
    size: { type: 'string' },
    profile: { type: 'boolean', default: false },
    keep: { type: 'boolean', default: false },
  },
})

const sizeName = values.size ?? process.env.PITSIDE_BENCH_SIZE ?? 'full'
const size = sizes[sizeName]
if (!size) fail(`--size: expected ${Object.keys(sizes).join(' or ')}, found "${sizeName}"`)
const tiny = sizeName === 'tiny'
const runs = intOption('runs', values.runs ?? process.env.PITSIDE_BENCH_RUNS, tiny ? 1 : 3, 1)
const warmup = intOption('warmup', values.warmup ?? process.env.PITSIDE_BENCH_WARMUP, tiny ? 0 : 1, 0)
const only = values.only ? values.only.split(',').map((s) => s.trim()).filter(Boolean) : Object.keys(allCases)
for (const name of only) if (!(name in allCases)) fail(`--only: unknown benchmark "${name}" (known: ${Object.keys(allCases).join(', ')})`)

if (!existsSync(join(repoRoot, 'dist', 'cli', 'main.js'))) fail('dist/ is missing: run `npm run build` first')

const work = makeWorkDir()
const profileRoot = values.profile ? ensureDir(join(repoRoot, 'bench-data', 'profiles', new Date().toISOString().replace(/[:.]/g, '-'))) : null
const log = (line) => process.stderr.write(line + '\n')
const ctx = {
  work,
  size,
  sizeName,
  runs,
  warmup,
  log,
  profileDir: profileRoot,
  profilePath: (name) => join(profileRoot, name),
  /** The viewer's database (farms with the api and render field counts, one plan each), made once. */
  viewerDb: once(() => makeViewerDatabase(work, { fieldCounts: [...new Set([size.apiFields, size.renderFields])] })),
}

log(`pitside bench: size ${sizeName}, ${runs} measured run(s) after ${warmup} warm-up, work folder ${work.dir}`)
const keys = {}
const rows = []
const profiles = []
const failures = []
const started = Date.now()
try {
  for (const name of only) {
    const t0 = Date.now()
    try {
      const result = await allCases[name](ctx)
      Object.assign(keys, result.keys)
      rows.push(...result.table)
      if (result.profile) profiles.push(result.profile)
      log(`${name}: done in ${((Date.now() - t0) / 1000).toFixed(0)} s`)
    } catch (error) {
      failures.push({ name, message: error instanceof Error ? error.message : String(error) })
      log(`${name}: could not be measured: ${error instanceof Error ? error.stack : error}`)
    }
  }
} finally {
  if (values.keep) log(`kept ${work.dir}`)
  else work.cleanup()
}

const context = {
  size: sizeName,
  runs,
  warmup,
  node: process.version,
  cpus: (await import('node:os')).cpus().length,
  loadavg: (await import('node:os')).loadavg().map((x) => Math.round(x * 100) / 100),
  seconds: Math.round((Date.now() - started) / 1000),
  bin: binPath,
}
const table = formatTable(rows)
if (values.json) {
  log(table)
  for (const p of profiles) log(p)
  const out = {}
  for (const k of requiredKeys) out[k] = keys[k] ?? null
  Object.assign(out, keys, { context, failures })
  process.stdout.write(JSON.stringify(out, null, 2) + '\n')
} else {
  process.stdout.write(table + '\n')
  for (const p of profiles) process.stdout.write(p + '\n')
  if (failures.length) process.stdout.write(`not measured: ${failures.map((f) => `${f.name} (${f.message.split('\n')[0]})`).join('; ')}\n`)
}
// a benchmark reports; it fails only when it could not measure
process.exitCode = failures.length > 0 ? 1 : 0

function once(make) {
  let made = null
  return () => (made ??= make())
}

function intOption(name, raw, fallback, min) {
  if (raw === undefined || raw === '') return fallback
  const n = Number(raw)
  if (!Number.isInteger(n) || n < min) fail(`--${name}: expected a whole number ≥ ${min}, found "${raw}"`)
  return n
}

function fail(message) {
  process.stderr.write(`bench: ${message}\n`)
  process.exit(64)
}
