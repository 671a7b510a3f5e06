// startup_ratio: wall time of `pitside --version` ÷ `node -e 0`, interleaved.
import { binPath, ensureDir, pitsideEnv } from '../lib/context.mjs'
import { formatProfile, newestProfile, summarizeCpuProfile } from '../lib/profile.mjs'
import { runTimed } from '../lib/run.mjs'
import { interleave, round, summarize } from '../lib/stats.mjs'

export async function benchStartup(ctx) {
  const { size, log } = ctx
  const env = pitsideEnv()
  const runs = Math.max(ctx.runs, size.startupRuns)
  log(`startup: ${runs} measured pairs after ${ctx.warmup + 2} warm-up`)
  const { pairs, ratios } = await interleave({
    runs,
    warmup: ctx.warmup + 2,
    a: async () => {
      const r = await runTimed(process.execPath, [binPath, '--version'], { env })
      if (!/^\d+\.\d+\.\d+/.test(r.stdout.trim())) throw new Error(`pitside --version printed "${r.stdout.trim()}"`)
      return r
    },
    b: () => runTimed(process.execPath, ['-e', '0'], { env }),
    ratio: (p, n) => p.ms / n.ms,
  })
  const ratio = summarize(ratios)
  const pitsideMs = summarize(pairs.map((p) => p.a.ms))
  const nodeMs = summarize(pairs.map((p) => p.b.ms))
  log(`  pitside --version ${pitsideMs.median.toFixed(0)} ms, node -e 0 ${nodeMs.median.toFixed(0)} ms → ${ratio.median.toFixed(2)}`)
  const out = {
    keys: { startup_ratio: round(ratio.median), startup_pitside_ms: round(pitsideMs.median, 1), startup_node_ms: round(nodeMs.median, 1) },
    table: [{ key: 'startup_ratio', summary: ratio, goal: '≤ 2.5', met: ratio.median <= 2.5, note: `pitside --version ${pitsideMs.median.toFixed(0)} ms, node -e 0 ${nodeMs.median.toFixed(0)} ms` }],
  }
  if (ctx.profileDir) {
    const dir = ensureDir(ctx.profilePath('startup'))
    await runTimed(process.execPath, ['--cpu-prof', '--cpu-prof-dir', dir, binPath, '--version'], { env })
    const file = newestProfile(dir)
    if (file) out.profile = formatProfile(`pitside --version (${file})`, summarizeCpuProfile(file))
  }
  return out
}
