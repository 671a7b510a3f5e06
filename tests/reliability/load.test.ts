// Load: 50 connections against the plan and farm endpoints of the real `pitside serve` on a
// seeded 200-farm database. No errors, timeouts or non-2xx answers; requests per second, p50, p99
// and memory growth are reported (tests/artifacts/load.json). Fast tier: a few seconds;
// `npm run test:stress`: 30 s. OWASP ASVS 5.0 V15.2 (availability under load) as the anchor.
import autocannon from 'autocannon'
import { mkdirSync, writeFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { seedPassword } from '../helpers/viewer-seed.ts'
import { makeLoadDatabase, type LoadDatabase } from './helpers/load-seed.ts'
import { serve, signInTo, type Served } from './helpers/serve-process.ts'
import { stressFactor } from './helpers/stress.ts'

const durationS = stressFactor > 1 ? 30 : 4
const connections = 50

let data: LoadDatabase
let server: Served
beforeAll(async () => {
  data = await makeLoadDatabase(200)
  server = await serve(data.file)
}, 120_000)
afterAll(async () => {
  await server?.stop()
  data?.tmp.cleanup()
})

describe('load', () => {
  it(`serves ${connections} connections for ${durationS} s on farm and plan routes with no errors, timeouts or non-2xx`, async () => {
    expect(data.farmCodes).toHaveLength(200)
    const cookie = await signInTo(server.url, 'maren@loamridge.example', seedPassword)
    const farms = (await (await fetch(`${server.url}/api/farms`, { headers: { cookie } })).json()) as { farms: unknown[] }
    expect(farms.farms).toHaveLength(200)

    const codes = data.farmCodes
    const paths = [
      ...codes.map((c) => `/api/farms/${c}`),
      ...codes.map((c) => `/api/plans/${data.planIds[c]}`),
      ...codes.slice(0, 40).map((c) => `/api/plans/${data.planIds[c]}/versions`),
      '/api/farms',
    ]
    let next = 0
    // warm-up, then measure memory from a settled process
    await autocannon({ url: server.url, connections: 10, duration: 1, headers: { cookie }, requests: [{ setupRequest: (r) => ({ ...r, path: paths[next++ % paths.length]! }) }] })
    const rssBefore = server.rssBytes()
    const result = await autocannon({
      url: server.url,
      connections,
      duration: durationS,
      timeout: 10,
      headers: { cookie },
      requests: [{ setupRequest: (r) => ({ ...r, path: paths[next++ % paths.length]! }) }],
    })
    const rssAfter = server.rssBytes()
    const report = {
      farms: codes.length,
      connections,
      duration_s: durationS,
      requests: result.requests.total,
      requests_per_s: result.requests.average,
      latency_ms: { p50: result.latency.p50, p90: result.latency.p90, p99: result.latency.p99, max: result.latency.max },
      errors: result.errors,
      timeouts: result.timeouts,
      non_2xx: result.non2xx,
      rss_mb: { before: +(rssBefore / 2 ** 20).toFixed(1), after: +(rssAfter / 2 ** 20).toFixed(1), growth: +((rssAfter - rssBefore) / 2 ** 20).toFixed(1) },
    }
    const dir = fileURLToPath(new URL('../artifacts/', import.meta.url))
    mkdirSync(dir, { recursive: true })
    writeFileSync(`${dir}load.json`, JSON.stringify(report, null, 2) + '\n')
    process.stdout.write(`load: ${JSON.stringify(report)}\n`)
    expect(result.requests.total).toBeGreaterThan(0)
    expect(result.errors).toBe(0)
    expect(result.timeouts).toBe(0)
    expect(result.non2xx).toBe(0)
    expect(server.stderr()).not.toMatch(/unexpected failure/)
  }, 120_000 + durationS * 1000)
})
