// api_ratio, api_p99_ms, api_errors: requests/s of `GET /api/plans/:id` (a 50-field plan, signed in)
// on `pitside serve` against a bare Express 5 route answering a small constant JSON, both loaded by
// autocannon in a separate process, interleaved. Servers and load generator sit on different CPUs
// when taskset is available.
import { spawnSync } from 'node:child_process'
import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { autocannonBin, binPath, ensureDir, pitsideEnv, repoRoot } from '../lib/context.mjs'
import { formatProfile, newestProfile, summarizeCpuProfile } from '../lib/profile.mjs'
import { availableCpus, canPin, runTimed, startProcess, waitForHttp } from '../lib/run.mjs'
import { interleave, round, summarize } from '../lib/stats.mjs'
import { signIn } from '../lib/viewer-db.mjs'

/** Starts `pitside serve` on a free port; resolves with its base URL and a stop(). */
export async function startViewer(db, { cpu = null, env = {}, nodeArgs = [] } = {}) {
  const proc = startProcess(process.execPath, [...nodeArgs, binPath, '--db', db, 'serve', '--port', '0', '--host', '127.0.0.1'], {
    cpu,
    env: pitsideEnv({ PITSIDE_SECRET: 'bench-secret-0123456789abcdef0123456789abcdef', ...env }),
  })
  const url = await new Promise((resolve, reject) => {
    let seen = ''
    const timer = setTimeout(() => reject(new Error(`pitside serve printed no URL: ${proc.log().slice(-2000)}`)), 20_000)
    proc.child.stdout.on('data', (d) => {
      seen += d
      const m = /(http:\/\/\S+)/.exec(seen)
      if (m) {
        clearTimeout(timer)
        resolve(m[1])
      }
    })
    proc.child.on('close', () => reject(new Error(`pitside serve ended: ${proc.log().slice(-2000)}`)))
  })
  await waitForHttp(url, 20_000, proc)
  return { url, pid: proc.child.pid, stop: proc.stop, log: proc.log }
}

async function startBare(cpu) {
  const proc = startProcess(process.execPath, [join(repoRoot, 'bench', 'baselines', 'bare-express.mjs'), '0'], { cpu })
  const port = await new Promise((resolve, reject) => {
    let seen = ''
    const timer = setTimeout(() => reject(new Error(`bare server did not start: ${proc.log()}`)), 10_000)
    proc.child.stdout.on('data', (d) => {
      seen += d
      const m = /listening on (\d+)/.exec(seen)
      if (m) {
        clearTimeout(timer)
        resolve(Number(m[1]))
      }
    })
  })
  return { url: `http://127.0.0.1:${port}/constant`, pid: proc.child.pid, stop: proc.stop }
}

// both sides are asked as a browser asks: with Accept-Encoding: gzip (the bare route ignores it)
const acceptGzip = ['accept-encoding=gzip']

/** CPU time (user + system) a process has used so far, in milliseconds (Linux /proc). */
function cpuMs(pid) {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8')
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ')
    return ((Number(fields[11]) + Number(fields[12])) * 1000) / ticksPerSecond
  } catch {
    return NaN
  }
}
const ticksPerSecond = Number(spawnSync('getconf', ['CLK_TCK'], { encoding: 'utf8' }).stdout.trim()) || 100

/**
 * One autocannon run; returns requests/s (mean), p99 latency (ms), the failed requests and the
 * server's CPU time per request in microseconds (what the server itself spends, whoever waits).
 */
async function load(url, { connections, seconds, cpu, headers = [], serverPid = null }) {
  const cpuBefore = serverPid ? cpuMs(serverPid) : NaN
  const args = [autocannonBin, '-c', String(connections), '-d', String(seconds), '-j', '--renderStatusCodes']
  for (const h of headers) args.push('-H', h)
  args.push(url)
  const r = await runTimed(process.execPath, args, { cpu })
  const j = JSON.parse(r.stdout)
  const errors = (j.errors ?? 0) + (j.timeouts ?? 0) + (j.non2xx ?? 0)
  const cpuUsPerRequest = serverPid ? ((cpuMs(serverPid) - cpuBefore) * 1000) / Math.max(1, j.requests.total) : NaN
  return { rps: j.requests.average, p99: j.latency.p99, errors, total: j.requests.total, cpuUsPerRequest }
}

export async function benchApi(ctx) {
  const { size, log } = ctx
  const viewer = await ctx.viewerDb()
  const planId = viewer.planIds[size.apiFields]
  const cpus = availableCpus()
  const pinned = canPin && cpus.length >= 2
  const serverCpu = pinned ? cpus[0] : null
  const loadCpu = pinned ? cpus[1] : null
  const pitsideServer = await startViewer(viewer.db, { cpu: serverCpu })
  const bare = await startBare(serverCpu)
  try {
    const cookie = await signIn(pitsideServer.url, viewer.email, viewer.password)
    const planUrl = new URL(`/api/plans/${planId}`, pitsideServer.url).href
    const check = await fetch(planUrl, { headers: { cookie } })
    const body = await check.json()
    if (!check.ok || (body.fields ?? body.plan?.fields)?.length !== size.apiFields) {
      throw new Error(`GET ${planUrl} answered ${check.status} with ${JSON.stringify(body).slice(0, 300)}`)
    }
    log(`api: plan ${planId} (${size.apiFields} fields, ${JSON.stringify(body).length} bytes), ${size.apiConnections} connections × ${size.apiSeconds} s, ${pinned ? `servers on CPU ${serverCpu}, autocannon on CPU ${loadCpu}` : 'not pinned'}`)
    const opts = (i) => ({ connections: size.apiConnections, seconds: i < ctx.warmup ? Math.min(3, size.apiSeconds) : size.apiSeconds, cpu: loadCpu })
    const { pairs, ratios } = await interleave({
      runs: ctx.runs,
      warmup: ctx.warmup,
      a: (i) => load(planUrl, { ...opts(i), headers: [`Cookie=${cookie}`, ...acceptGzip], serverPid: pitsideServer.pid }),
      b: (i) => load(bare.url, { ...opts(i), headers: acceptGzip, serverPid: bare.pid }),
      ratio: (p, b) => p.rps / b.rps,
      onPair: (pair, i) =>
        log(`  ${pair.warmup ? 'warm-up' : `run ${i - ctx.warmup + 1}`}: pitside ${pair.a.rps.toFixed(0)} req/s (p99 ${pair.a.p99} ms, ${pair.a.errors} errors, ${pair.a.cpuUsPerRequest.toFixed(0)} µs CPU/request), bare ${pair.b.rps.toFixed(0)} req/s (${pair.b.cpuUsPerRequest.toFixed(0)} µs) → ${pair.ratio.toFixed(3)}`),
    })
    const ratio = summarize(ratios)
    const p99 = summarize(pairs.map((p) => p.a.p99))
    const rps = summarize(pairs.map((p) => p.a.rps))
    const bareRps = summarize(pairs.map((p) => p.b.rps))
    const errors = pairs.reduce((a, p) => a + p.a.errors, 0)
    const cpuPerRequest = summarize(pairs.map((p) => p.a.cpuUsPerRequest))
    const bareCpuPerRequest = summarize(pairs.map((p) => p.b.cpuUsPerRequest))
    let profile = null
    if (ctx.profileDir) {
      const dir = ensureDir(ctx.profilePath('api'))
      const profiled = await startViewer(viewer.db, { cpu: serverCpu, nodeArgs: ['--cpu-prof', '--cpu-prof-dir', dir] })
      try {
        const c = await signIn(profiled.url, viewer.email, viewer.password)
        await load(new URL(`/api/plans/${planId}`, profiled.url).href, { ...opts(ctx.warmup), headers: [`Cookie=${c}`, ...acceptGzip] })
      } finally {
        await profiled.stop()
      }
      const file = newestProfile(dir)
      if (file) profile = formatProfile(`pitside serve under load (${file})`, summarizeCpuProfile(file))
    }
    return {
      ...(profile ? { profile } : {}),
      keys: {
        api_ratio: round(ratio.median),
        api_p99_ms: round(p99.median, 1),
        api_errors: errors,
        api_requests_per_second: Math.round(rps.median),
        api_bare_requests_per_second: Math.round(bareRps.median),
        api_p99_ms_max: p99.max,
        api_bare_p99_ms: summarize(pairs.map((p) => p.b.p99)).median,
        api_server_cpu_us_per_request: Math.round(cpuPerRequest.median),
        api_bare_cpu_us_per_request: Math.round(bareCpuPerRequest.median),
      },
      table: [
        { key: 'api_ratio', summary: ratio, goal: '≥ 0.5', met: ratio.median >= 0.5, note: `pitside ${rps.median.toFixed(0)} req/s, bare Express ${bareRps.median.toFixed(0)} req/s; server CPU ${cpuPerRequest.median.toFixed(0)} vs ${bareCpuPerRequest.median.toFixed(0)} µs/request` },
        { key: 'api_p99_ms', summary: p99, goal: '< 50', met: p99.median < 50, note: `GET /api/plans/:id, ${size.apiConnections} connections; bare route p99 ${summarize(pairs.map((p) => p.b.p99)).median} ms` },
        { key: 'api_errors', summary: { median: errors, min: errors, max: errors, spread: 0, n: pairs.length }, goal: '0', met: errors === 0, note: 'errors + timeouts + non-2xx, all measured runs' },
      ],
    }
  } finally {
    await bare.stop()
    await pitsideServer.stop()
  }
}
