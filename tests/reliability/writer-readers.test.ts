// One writer and many readers at once: lab imports and plan runs while the viewer serves under
// load. SQLite's WAL mode lets readers and one writer run together, each reader on one committed
// snapshot (sqlite.org/wal.html §2.2 "Concurrency"); the WAL is checkpointed and reused as it
// grows (§2.3 "Checkpointing", §4 "Avoiding excessively large WAL files"). The viewer must answer
// without errors or 5xx, never show half an import, keep plan versions whole, and the WAL must stay bounded.
import autocannon from 'autocannon'
import { existsSync, mkdirSync, readdirSync, statSync, writeFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { FarmDetail, FarmsResponse, PlanVersionsResponse, PlanView } from '../../shared/api-types.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { checkFile } from './helpers/dump.ts'
import { makeFarmDatabase } from './helpers/lab-db.ts'
import { writeLabFile } from './helpers/lab-files.ts'
import { serve, signInTo, type Served } from './helpers/serve-process.ts'
import { scaledTimeout, stressFactor } from './helpers/stress.ts'

const root = fileURLToPath(new URL('../../', import.meta.url))
const durationS = stressFactor > 1 ? 30 : 8
const rowsPerImport = 10_000
const password = 'reader-writer-test-password'

let tmp: TempDir
let db: string
let server: Served
beforeAll(async () => {
  tmp = makeTempDir('pitside-writer-readers-')
  db = tmp.path('pitside.db')
  await makeFarmDatabase(db)
  const labs = readdirSync(`${root}examples/demo/labs`).map((f) => `${root}examples/demo/labs/${f}`)
  for (const args of [
    ['fields', 'import', `${root}examples/demo/fields.csv`],
    ['labs', 'import', ...labs],
    ['plan', '--all', '--season', '2027', '--as-of', '2026-11-15'],
  ]) {
    const r = await runCli(['--db', db, '-q', ...args])
    if (r.exitCode !== 0) throw new Error(`pitside ${args.join(' ')}: ${r.stderr}`)
  }
  const add = await runCli(['--db', db, '-q', 'users', 'add', '--email', 'maren@loamridge.example', '--name', 'Maren Castellano', '--role', 'advisor', '--password-stdin'], { input: password })
  if (add.exitCode !== 0) throw new Error(String(add.stderr))
  server = await serve(db)
}, 180_000)
afterAll(async () => {
  await server?.stop()
  tmp?.cleanup()
})

describe('writer and readers together', () => {
  it(`serve without errors, whole imports and whole plans while imports and plan runs go on (${durationS} s)`, async () => {
    const cookie = await signInTo(server.url, 'maren@loamridge.example', password)
    const get = async <T>(path: string): Promise<T> => {
      const r = await fetch(server.url + path, { headers: { cookie } })
      if (r.status !== 200) throw new Error(`${path} answered ${r.status}: ${await r.text()}`)
      return (await r.json()) as T
    }
    const startBytes = statSync(db).size + (existsSync(`${db}-wal`) ? statSync(`${db}-wal`).size : 0)
    const baseline = await get<FarmDetail>('/api/farms/QBF')
    const p1Before = baseline.storages.find((s) => s.code === 'P1')!.results
    const farms = (await get<FarmsResponse>('/api/farms')).farms
    expect(farms.length).toBeGreaterThan(3)
    const planIds = farms.map((f) => f.latest_plan!.id)

    let running = true
    const problems: string[] = []
    let imports = 0
    let planRuns = 0
    let walMax = 0
    let walSamples = 0
    // the writer: a lab file into QBF's pit P1 (half its rows) and P2, then a plan run for every farm
    const writer = (async () => {
      let i = 0
      while (running) {
        const file = tmp.path(`load-${i}.csv`)
        writeLabFile(file, `CRA-26-W${i}`, rowsPerImport, i + 7)
        const r = await runCli(['--db', db, '-q', 'labs', 'import', file])
        if (r.exitCode !== 0) problems.push(`import ${i}: ${r.stderr}`)
        else imports++
        const p = await runCli(['--db', db, '-q', 'plan', '--all', '--season', '2027', '--as-of', '2026-11-15'])
        if (p.exitCode !== 0) problems.push(`plan run ${i}: ${p.stderr}`)
        else planRuns++
        i++
      }
    })()
    const wal = setInterval(() => {
      if (existsSync(`${db}-wal`)) walMax = Math.max(walMax, statSync(`${db}-wal`).size)
      walSamples++
    }, 50)
    // a careful reader: every page must be one committed state
    let checks = 0
    const checker = (async () => {
      let lastResults = p1Before
      const lastVersion = new Map<string, number>()
      while (running) {
        const farm = await get<FarmDetail>('/api/farms/QBF')
        const p1 = farm.storages.find((s) => s.code === 'P1')!
        // an import adds rowsPerImport / 2 results to P1 at once, or none: never part of a file
        if ((p1.results - p1Before) % (rowsPerImport / 2) !== 0) problems.push(`P1 shows ${p1.results} results: part of an import`)
        if (p1.results < lastResults) problems.push(`P1 went back from ${lastResults} to ${p1.results} results`)
        lastResults = p1.results
        const bySeason = p1.seasons.reduce((a, s) => a + s.samples, 0)
        if (bySeason !== p1.results) problems.push(`P1 seasons add up to ${bySeason}, not ${p1.results}`)
        const list = (await get<FarmsResponse>('/api/farms')).farms
        for (const f of list.slice(0, 3)) {
          const plan = await get<PlanView>(`/api/plans/${f.latest_plan!.id}`)
          const versions = (await get<PlanVersionsResponse>(`/api/plans/${plan.id}/versions`)).versions.filter((v) => v.season === 2027)
          const numbers = versions.map((v) => v.version).sort((a, b) => a - b)
          if (numbers.some((v, k) => v !== k + 1)) problems.push(`${f.code}: versions ${numbers.join(',')} have a gap`)
          const own = versions.find((v) => v.id === plan.id)
          if (!own) problems.push(`${f.code}: plan ${plan.id} missing from its versions`)
          else if (own.fields !== (plan.result.fields ?? []).length) problems.push(`${f.code}: plan ${plan.id} lists ${own.fields} fields but holds ${(plan.result.fields ?? []).length}`)
          if ((lastVersion.get(f.code) ?? 0) > plan.version) problems.push(`${f.code}: latest plan went back to version ${plan.version}`)
          lastVersion.set(f.code, plan.version)
        }
        checks++
      }
    })()

    let next = 0
    const paths = [...planIds.map((id) => `/api/plans/${id}`), ...farms.map((f) => `/api/farms/${f.code}`), '/api/farms', ...planIds.map((id) => `/api/plans/${id}/versions`)]
    const load = await autocannon({
      url: server.url,
      connections: 20,
      duration: durationS,
      timeout: 10,
      headers: { cookie },
      requests: [{ setupRequest: (r) => ({ ...r, path: paths[next++ % paths.length]! }) }],
    })
    running = false
    await Promise.all([writer, checker])
    clearInterval(wal)

    const after = await get<FarmDetail>('/api/farms/QBF')
    const report = {
      duration_s: durationS,
      requests: load.requests.total,
      requests_per_s: load.requests.average,
      latency_ms: { p50: load.latency.p50, p99: load.latency.p99 },
      errors: load.errors,
      timeouts: load.timeouts,
      non_2xx: load.non2xx,
      imports,
      rows_imported: imports * rowsPerImport,
      plan_runs: planRuns,
      consistency_checks: checks,
      wal_max_mb: +(walMax / 2 ** 20).toFixed(1),
      written_mb: +((statSync(db).size + (existsSync(`${db}-wal`) ? statSync(`${db}-wal`).size : 0) - startBytes) / 2 ** 20).toFixed(1),
      wal_samples: walSamples,
    }
    const dir = `${root}tests/artifacts/`
    mkdirSync(dir, { recursive: true })
    writeFileSync(`${dir}writer-readers.json`, JSON.stringify(report, null, 2) + '\n')
    process.stdout.write(`writer-readers: ${JSON.stringify(report)}\n`)

    expect(problems).toEqual([])
    expect(imports).toBeGreaterThan(0)
    expect(planRuns).toBeGreaterThan(0)
    expect(checks).toBeGreaterThan(0)
    expect(load.errors).toBe(0)
    expect(load.timeouts).toBe(0)
    expect(load.non2xx).toBe(0)
    expect(after.storages.find((s) => s.code === 'P1')!.results).toBe(p1Before + (imports * rowsPerImport) / 2)
    // bounded: checkpoints keep reusing the WAL, so it stays near SQLite's 1000-page auto-checkpoint
    // plus the largest transaction instead of growing with everything written
    expect(walMax).toBeLessThan(32 * 2 ** 20)
    if (report.written_mb > 16) expect(report.wal_max_mb).toBeLessThan(report.written_mb * 0.75)
    expect(server.stderr()).not.toMatch(/unexpected failure/)
    expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
  }, scaledTimeout(180_000))
})
