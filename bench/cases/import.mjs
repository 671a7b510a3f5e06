// import_ratio and import_peak_rss_mb: `pitside labs import` of one large lab file against the
// sqlite3 tool's `.import --csv` of the same file, interleaved, each into a fresh copy of its database.
import { spawnSync } from 'node:child_process'
import { writeFileSync } from 'node:fs'
import { countRows, createSqliteBaselineDb, haveSqlite3, sqliteBinary, sqliteImportArgs } from '../baselines/sqlite-import.mjs'
import { binPath, benchPassword, copyDatabase, ensureDir, pitside, pitsideEnv } from '../lib/context.mjs'
import { formatProfile, newestProfile, summarizeCpuProfile } from '../lib/profile.mjs'
import { makeRandom } from '../lib/prng.mjs'
import { runTimed } from '../lib/run.mjs'
import { interleave, round, summarize } from '../lib/stats.mjs'
import { farmsCsv, makeFarms, storagesCsv } from '../generate/farms.mjs'
import { writeLabFile } from '../generate/labs.mjs'

/** Makes a database with an organization, the farms and their storages, ready for lab imports. */
export async function makeFarmDatabase(work, db, farms) {
  writeFileSync(work.path('farms.csv'), farmsCsv(farms))
  writeFileSync(work.path('storages.csv'), storagesCsv(farms))
  await pitside(db, ['-q', 'init'])
  await pitside(db, ['-q', 'users', 'add', '--org', 'bench', '--org-name', 'Bench Nutrient Advisors', '--email', 'advisor@bench.example', '--name', 'Bench Advisor', '--role', 'advisor', '--password-stdin'], { input: benchPassword })
  await pitside(db, ['-q', 'farms', 'import', '--org', 'bench', work.path('farms.csv')])
  await pitside(db, ['-q', 'storages', 'import', work.path('storages.csv')])
}

function countLabResults(db) {
  const r = spawnSync(sqliteBinary, [db, 'select count(*) from lab_results'], { encoding: 'utf8' })
  return Number(r.stdout.trim())
}

export async function benchImport(ctx) {
  const { work, size, log } = ctx
  if (!haveSqlite3()) throw new Error('the sqlite3 command-line tool is missing (Debian: apt-get install sqlite3)')
  const random = makeRandom(20261201)
  const farms = makeFarms(random, size.importFarms)
  const csv = work.path('labs.csv')
  const { rows } = await writeLabFile(csv, { random, farms, rows: size.importRows })
  const base = work.path('import-base.db')
  await makeFarmDatabase(work, base, farms)
  const sqliteBase = work.path('import-sqlite-base.db')
  createSqliteBaselineDb(sqliteBase)
  log(`import: ${rows} rows, ${farms.length} farms; ${ctx.runs} measured pairs after ${ctx.warmup} warm-up`)

  const runDb = work.path('import-run.db')
  const runSqlite = work.path('import-sqlite-run.db')
  const { pairs, ratios } = await interleave({
    runs: ctx.runs,
    warmup: ctx.warmup,
    a: async () => {
      copyDatabase(base, runDb)
      const r = await runTimed(process.execPath, [binPath, '--db', runDb, '-q', 'labs', 'import', csv], { rss: true, env: pitsideEnv() })
      const stored = countLabResults(runDb)
      if (stored !== rows) throw new Error(`pitside labs import stored ${stored} of ${rows} rows:\n${r.stderr.slice(-2000)}`)
      return r
    },
    b: async () => {
      copyDatabase(sqliteBase, runSqlite)
      const r = await runTimed(sqliteBinary, sqliteImportArgs(runSqlite, csv), { rss: true })
      const stored = countRows(runSqlite, 'lab_rows')
      if (stored !== rows) throw new Error(`sqlite3 .import stored ${stored} of ${rows} rows:\n${r.stderr.slice(-2000)}`)
      return r
    },
    ratio: (p, s) => s.ms / p.ms, // (rows / p) ÷ (rows / s)
    onPair: (pair, i) =>
      log(`  ${pair.warmup ? 'warm-up' : `run ${i - ctx.warmup + 1}`}: pitside ${(pair.a.ms / 1000).toFixed(2)} s (${pair.a.rssMb?.toFixed(0)} MB), sqlite3 ${(pair.b.ms / 1000).toFixed(2)} s → ${pair.ratio.toFixed(3)}`),
  })

  const ratio = summarize(ratios)
  const pitsideS = summarize(pairs.map((p) => p.a.ms / 1000))
  const sqliteS = summarize(pairs.map((p) => p.b.ms / 1000))
  const rss = summarize(pairs.map((p) => p.a.rssMb ?? NaN))
  const out = {
    keys: {
      import_ratio: round(ratio.median),
      import_peak_rss_mb: round(rss.max, 1),
      import_rows: rows,
      import_seconds: round(pitsideS.median),
      import_sqlite3_seconds: round(sqliteS.median),
      import_rows_per_second: Math.round(rows / pitsideS.median),
    },
    table: [
      { key: 'import_ratio', summary: ratio, goal: '≥ 0.6', met: ratio.median >= 0.6, note: `${rows} rows: pitside ${pitsideS.median.toFixed(2)} s, sqlite3 .import ${sqliteS.median.toFixed(2)} s` },
      { key: 'import_peak_rss_mb', summary: rss, value: rss.max, goal: '≤ 250', met: rss.max <= 250, note: 'highest of the measured runs' },
    ],
  }

  if (ctx.profileDir) {
    const dir = ensureDir(ctx.profilePath('import'))
    copyDatabase(base, runDb)
    await runTimed(process.execPath, ['--cpu-prof', '--cpu-prof-dir', dir, binPath, '--db', runDb, '-q', 'labs', 'import', csv], { env: pitsideEnv() })
    const file = newestProfile(dir)
    if (file) out.profile = formatProfile(`pitside labs import (${file})`, summarizeCpuProfile(file))
  }
  return out
}
