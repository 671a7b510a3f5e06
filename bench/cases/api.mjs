// api_ratio, api_p99_ms, api_errors: requests/s of `GET /api/plans/:id` (a 50-field plan, signed in)
// on `pitside serve` against a bare Express 5 route answering a small constant JSON, both loaded by
// autocannon in a separate process, interleaved. Servers and load generator sit on different CPUs
// when taskset is available.
import { join } from 'node:path'
import { autocannonBin, binPath, pitsideEnv, repoRoot } from '../lib/context.mjs'
import { availableCpus, canPin, runTimed, startProcess, waitForHttp } from '../lib/run.mjs'
import { interleave, round, summarize } from '../lib/stats.mjs'
import { signIn } from '../lib/viewer-db.mjs'

/** Starts `pitside serve` on a free port; resolves with its base URL and a stop(). */
export async function startViewer(db, { cpu = null, env = {} } = {}) {
  const proc = startProcess(process.execPath, [binPath, '--db', db, 'serve', '--port', '0', '--host', '127.0.0.1'], {
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
  return { url, stop: proc.stop, log: proc.log }
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
  return { url: `http://127.0.0.1:${port}/constant`, stop: proc.stop }
}

/** One autocannon run; returns requests/s (mean), p99 latency (ms) and the failed requests. */
async function load(url, { connections, seconds, cpu, headers = [] }) {
  const args = [autocannonBin, '-c', String(connections), '-d', String(seconds), '-j', '--renderStatusCodes']
  for (const h of headers) args.push('-H', h)
  args.push(url)
  const r = await runTimed(process.execPath, args, { cpu })
  const j = JSON.parse(r.stdout)
  const errors = (j.errors ?? 0) + (j.timeouts ?? 0) + (j.non2xx ?? 0)
  return { rps: j.requests.average, p99: j.latency.p99, errors, total: j.requests.total }
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
      a: (i) => load(planUrl, { ...opts(i), headers: [`Cookie=${cookie}`] }),
      b: (i) => load(bare.url, opts(i)),
      ratio: (p, b) => p.rps / b.rps,
      onPair: (pair, i) =>
        log(`  ${pair.warmup ? 'warm-up' : `run ${i - ctx.warmup + 1}`}: pitside ${pair.a.rps.toFixed(0)} req/s (p99 ${pair.a.p99} ms, ${pair.a.errors} errors), bare ${pair.b.rps.toFixed(0)} req/s → ${pair.ratio.toFixed(3)}`),
    })
    const ratio = summarize(ratios)
    const p99 = summarize(pairs.map((p) => p.a.p99))
    const rps = summarize(pairs.map((p) => p.a.rps))
    const bareRps = summarize(pairs.map((p) => p.b.rps))
    const errors = pairs.reduce((a, p) => a + p.a.errors, 0)
    return {
      keys: {
        api_ratio: round(ratio.median),
        api_p99_ms: round(p99.median, 1),
        api_errors: errors,
        api_requests_per_second: Math.round(rps.median),
        api_bare_requests_per_second: Math.round(bareRps.median),
        api_p99_ms_max: p99.max,
      },
      table: [
        { key: 'api_ratio', summary: ratio, goal: '≥ 0.5', met: ratio.median >= 0.5, note: `pitside ${rps.median.toFixed(0)} req/s, bare Express ${bareRps.median.toFixed(0)} req/s` },
        { key: 'api_p99_ms', summary: p99, goal: '< 50', met: p99.median < 50, note: `GET /api/plans/:id, ${size.apiConnections} connections` },
        { key: 'api_errors', summary: { median: errors, min: errors, max: errors, spread: 0, n: pairs.length }, goal: '0', met: errors === 0, note: 'errors + timeouts + non-2xx, all measured runs' },
      ],
    }
  } finally {
    await bare.stop()
    await pitsideServer.stop()
  }
}
