// plan_ratio and plan_seconds: `pitside plan --all` for many farms against a bare baseline on the
// same database (bench/baselines/plan-bare.mjs: the same arithmetic on plain arrays and one prepared
// insert of the same rows), interleaved, each on a fresh copy of the same database.
import { join } from 'node:path'
import { binPath, copyDatabase, ensureDir, pitsideEnv, repoRoot } from '../lib/context.mjs'
import { formatProfile, newestProfile, summarizeCpuProfile } from '../lib/profile.mjs'
import { makeRandom } from '../lib/prng.mjs'
import { runTimed } from '../lib/run.mjs'
import { interleave, round, summarize } from '../lib/stats.mjs'
import { addFieldsLabsAndPlans, planSeason } from '../lib/viewer-db.mjs'
import { makeFarms } from '../generate/farms.mjs'
import { makeFarmDatabase } from './import.mjs'
import { sqliteBinary } from '../baselines/sqlite-import.mjs'
import { spawnSync } from 'node:child_process'

export const planAsOf = '2026-11-15'
const bareScript = join(repoRoot, 'bench', 'baselines', 'plan-bare.mjs')

function count(db, sql) {
  return Number(spawnSync(sqliteBinary, [db, sql], { encoding: 'utf8' }).stdout.trim())
}

export function planArgs(db) {
  return [binPath, '--db', db, '-q', 'plan', '--all', '--season', String(planSeason), '--as-of', planAsOf]
}

export async function benchPlan(ctx) {
  const { work, size, log } = ctx
  const random = makeRandom(1000)
  const farms = makeFarms(random, size.planFarms)
  const base = work.path('plan-base.db')
  await makeFarmDatabase(work, base, farms)
  await addFieldsLabsAndPlans(work, base, random, farms, size.planFieldsPerFarm, 'plan')
  const fieldCount = count(base, 'select count(*) from fields')
  log(`plan: ${farms.length} farms × ${size.planFieldsPerFarm} fields (${fieldCount} fields); ${ctx.runs} measured pairs after ${ctx.warmup} warm-up`)

  const runDb = work.path('plan-run.db')
  const bareDb = work.path('plan-bare-run.db')
  const env = pitsideEnv()
  const { pairs, ratios } = await interleave({
    runs: ctx.runs,
    warmup: ctx.warmup,
    a: async () => {
      copyDatabase(base, runDb)
      const r = await runTimed(process.execPath, planArgs(runDb), { env })
      const planFields = count(runDb, 'select count(*) from plan_fields')
      if (planFields !== fieldCount) throw new Error(`pitside plan --all stored ${planFields} plan fields of ${fieldCount}:\n${r.stderr.slice(-2000)}`)
      return r
    },
    b: async () => {
      copyDatabase(base, bareDb)
      const r = await runTimed(process.execPath, [bareScript, bareDb, String(planSeason), planAsOf], { env })
      const planFields = count(bareDb, 'select count(*) from plan_fields')
      if (planFields !== fieldCount) throw new Error(`the bare plan baseline stored ${planFields} plan fields of ${fieldCount}:\n${r.stderr.slice(-2000)}`)
      return r
    },
    ratio: (p, b) => b.ms / p.ms,
    onPair: (pair, i) =>
      log(`  ${pair.warmup ? 'warm-up' : `run ${i - ctx.warmup + 1}`}: pitside ${(pair.a.ms / 1000).toFixed(2)} s, bare ${(pair.b.ms / 1000).toFixed(2)} s → ${pair.ratio.toFixed(3)}`),
  })
  const ratio = summarize(ratios)
  const seconds = summarize(pairs.map((p) => p.a.ms / 1000))
  const bareSeconds = summarize(pairs.map((p) => p.b.ms / 1000))
  const out = {
    keys: {
      plan_ratio: round(ratio.median),
      plan_seconds: round(seconds.median),
      plan_bare_seconds: round(bareSeconds.median),
      plan_farms: farms.length,
      plan_fields: fieldCount,
    },
    table: [
      { key: 'plan_ratio', summary: ratio, goal: '≥ 0.5', met: ratio.median >= 0.5, note: `time bare ÷ time pitside; bare baseline ${bareSeconds.median.toFixed(2)} s` },
      { key: 'plan_seconds', summary: seconds, goal: '< 10', met: seconds.median < 10, note: `pitside plan --all, ${farms.length} farms, ${fieldCount} fields` },
    ],
  }
  if (ctx.profileDir) {
    const dir = ensureDir(ctx.profilePath('plan'))
    copyDatabase(base, runDb)
    await runTimed(process.execPath, ['--cpu-prof', '--cpu-prof-dir', dir, ...planArgs(runDb)], { env })
    const file = newestProfile(dir)
    if (file) out.profile = formatProfile(`pitside plan --all (${file})`, summarizeCpuProfile(file))
  }
  return out
}
