// Crash during import: lab imports killed with SIGKILL at random moments, just before and just after
// their commit. Afterwards the database passes PRAGMA integrity_check and foreign_key_check, and each
// import is wholly present (its rows, report and import-run record) or wholly absent; every import
// that reported success is present. Anchored in SQLite's own crash testing (sqlite.org/testing.html
// §3.3 "Crash testing", sqlite.org/atomiccommit.html) — here with real process kills.
import SQLite from 'better-sqlite3'
import { spawn } from 'node:child_process'
import { copyFileSync, existsSync, mkdirSync, rmSync, statSync, writeFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { binPath, runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { checkFile } from './helpers/dump.ts'
import { makeFarmDatabase } from './helpers/lab-db.ts'
import { writeLabFile } from './helpers/lab-files.ts'
import { scaled, scaledTimeout } from './helpers/stress.ts'

const rowsPerFile = 2000
const runs = scaled(50)
const lanes = 2

type Moment = 'random' | 'before-commit' | 'after-commit'
interface Outcome {
  moment: Moment
  killAfterMs: number | null
  exitedByItself: number | null
  state: 'present' | 'absent' | 'partial'
  integrity: string
  foreignKeys: number
}

let tmp: TempDir
beforeAll(() => {
  tmp = makeTempDir('pitside-crash-')
})
afterAll(() => tmp?.cleanup())

/** Runs one import and SIGKILLs it at the chosen moment; resolves when the process is gone. */
function runAndKill(db: string, file: string, moment: Moment, killAfterMs: number, reportId: string): Promise<{ exited: number | null; killed: boolean; ms: number }> {
  const started = performance.now()
  return new Promise((resolve, reject) => {
    const child = spawn('node', [binPath, '--db', db, '-q', '--json', 'labs', 'import', file], { stdio: ['ignore', 'ignore', 'pipe'], env: { ...process.env, NO_COLOR: '1' } })
    let stderr = ''
    child.stderr.on('data', (d) => (stderr += d))
    let killed = false
    const kill = () => {
      if (!killed && child.exitCode === null) {
        killed = true
        child.kill('SIGKILL')
      }
    }
    let timer: NodeJS.Timeout | undefined
    let poll: NodeJS.Timeout | undefined
    let reader: SQLite.Database | undefined
    if (moment === 'random') timer = setTimeout(kill, killAfterMs)
    else if (moment === 'before-commit') {
      // the ballast trigger makes the last statement before COMMIT spill ~25 MB of uncommitted pages
      // into the WAL and then count for a while; a WAL past 8 MB means the process is inside that
      // statement, before its commit (the counting leaves time even when this event loop is busy)
      poll = setInterval(() => {
        if (existsSync(`${db}-wal`) && statSync(`${db}-wal`).size > 8 * 2 ** 20) kill()
      }, 2)
    } else {
      // kill the moment the import's run record is visible to another connection: just after COMMIT
      reader = new SQLite(db, { readonly: true })
      const seen = reader.prepare('select count(*) as n from lab_reports where report_number = ?').pluck()
      poll = setInterval(() => {
        try {
          if ((seen.get(reportId) as number) > 0) kill()
        } catch {
          // the writer holds a lock for a moment; look again at the next tick
        }
      }, 1)
    }
    child.on('error', reject)
    child.on('exit', (code) => {
      clearTimeout(timer)
      clearInterval(poll)
      reader?.close()
      if (!killed && code !== 0) return reject(new Error(`import exited with ${code}: ${stderr}`))
      resolve({ exited: killed ? null : code, killed, ms: performance.now() - started })
    })
  })
}

function installBallast(db: string) {
  const s = new SQLite(db)
  s.exec(`create table if not exists crash_ballast (b blob);
    create trigger if not exists crash_ballast_before_commit after update on import_runs begin
      insert into crash_ballast select randomblob(65536) from (with recursive c(x) as (select 1 union all select x + 1 from c where x < 400) select x from c);
      select count(*) from (with recursive c(x) as (select 1 union all select x + 1 from c where x < 3000000) select x from c);
    end;`)
  s.close()
}
function removeBallast(db: string) {
  const s = new SQLite(db)
  const left = s.prepare('select count(*) from crash_ballast').pluck().get() as number
  s.exec('drop trigger crash_ballast_before_commit; drop table crash_ballast;')
  s.close()
  return left
}

function importState(db: string, file: string, reportId: string): Outcome['state'] {
  const s = new SQLite(db, { readonly: true })
  try {
    const r = s
      .prepare(
        `select (select count(*) from import_runs where file_name = @file) as runs,
                (select coalesce(sum(rows_new), 0) from import_runs where file_name = @file) as rows_new,
                (select count(*) from lab_reports where report_number = @report) as reports,
                (select count(*) from lab_results r join lab_reports p on p.id = r.lab_report_id where p.report_number = @report) as results`,
      )
      .get({ file, report: reportId }) as { runs: number; rows_new: number; reports: number; results: number }
    if (r.runs === 0 && r.reports === 0 && r.results === 0) return 'absent'
    if (r.runs === 1 && r.reports === 1 && r.results === rowsPerFile && r.rows_new === rowsPerFile) return 'present'
    return 'partial'
  } finally {
    s.close()
  }
}

/** Runs per database: a fresh copy every `chunk` runs keeps each run as cheap as the first under test:stress. */
const chunk = 25

async function lane(id: number, count: number): Promise<Outcome[]> {
  const template = tmp.path(`lane-${id}-template.db`)
  await makeFarmDatabase(template)
  // how long a whole import takes here and now (start-up included, the other lane running too);
  // runs that finish by themselves refine it below
  const calibrationDb = tmp.path(`lane-${id}-calibrate.db`)
  copyFileSync(template, calibrationDb)
  writeLabFile(tmp.path(`calibrate-${id}.csv`), `CRA-26-C${id}`, rowsPerFile)
  const started = performance.now()
  const calibration = await runCli(['--db', calibrationDb, '-q', 'labs', 'import', tmp.path(`calibrate-${id}.csv`)])
  if (calibration.exitCode !== 0) throw new Error(`calibration import failed: ${calibration.stderr}`)
  let fullRunMs = performance.now() - started
  const out: Outcome[] = []
  for (let from = 0; from < count; from += chunk) {
    const db = tmp.path(`lane-${id}-${from}.db`)
    copyFileSync(template, db)
    const files: string[] = []
    const states: Outcome['state'][] = []
    for (let i = from; i < Math.min(count, from + chunk); i++) {
      // every tenth run is killed just before its commit, every tenth just after, the rest at random
      const moment: Moment = i % 10 === 1 ? 'after-commit' : i % 10 === 6 ? 'before-commit' : 'random'
      const reportId = `CRA-26-L${id}R${i}`
      const file = tmp.path(`${reportId}.csv`)
      writeLabFile(file, reportId, rowsPerFile, i + 1)
      files.push(file)
      if (moment === 'before-commit') installBallast(db)
      // most of a run is Node's start-up; aim the random kills over the whole run, weighted to its later part
      const killAfterMs = fullRunMs * (0.5 + 0.7 * Math.random())
      const { exited, ms } = await runAndKill(db, file, moment, killAfterMs, reportId)
      if (exited === 0) fullRunMs = (fullRunMs + ms) / 2 // follow the machine's current pace
      if (moment === 'before-commit') expect(removeBallast(db)).toBe(0) // the ballast rolled back with the import
      const check = checkFile(db)
      const state = importState(db, file, reportId)
      states.push(state)
      out.push({
        moment,
        killAfterMs: moment === 'random' ? Math.round(killAfterMs) : null,
        exitedByItself: exited,
        state,
        integrity: check.integrity,
        foreignKeys: check.foreignKeys.length,
      })
    }
    // the database takes every file again: the killed imports go in, the committed ones are no-ops
    const again = await runCli(['--db', db, '-q', '--json', 'labs', 'import', ...files])
    expect(again.exitCode, String(again.stderr)).toBe(0)
    const summary = JSON.parse(String(again.stdout)) as { files: { outcome: string }[] }
    summary.files.forEach((f, i) => expect(f.outcome).toBe(states[i] === 'present' ? 'unchanged' : 'imported'))
    expect(checkFile(db)).toEqual({ integrity: 'ok', foreignKeys: [] })
    for (const f of [db, `${db}-wal`, `${db}-shm`, ...files]) rmSync(f, { force: true })
  }
  return out
}

describe('lab imports killed with SIGKILL', () => {
  it(
    `leave the database sound and each import all there or not at all (${runs} runs)`,
    async () => {
      const perLane = Math.ceil(runs / lanes)
      const results = (await Promise.all(Array.from({ length: lanes }, (_, id) => lane(id, id === lanes - 1 ? runs - perLane * (lanes - 1) : perLane)))).flat()
      expect(results).toHaveLength(runs)
      const bad = results.filter((r) => r.integrity !== 'ok' || r.foreignKeys !== 0 || r.state === 'partial')
      expect(bad).toEqual([])
      // an import that said it had finished must be there
      expect(results.filter((r) => r.exitedByItself === 0 && r.state !== 'present')).toEqual([])
      expect(results.filter((r) => r.moment === 'before-commit').map((r) => [r.exitedByItself, r.state])).toEqual(
        results.filter((r) => r.moment === 'before-commit').map(() => [null, 'absent']),
      )
      expect(results.filter((r) => r.moment === 'after-commit').every((r) => r.state === 'present')).toBe(true)

      const count = (m: Moment, s: Outcome['state']) => results.filter((r) => r.moment === m && r.state === s).length
      const report = {
        runs,
        rows_per_file: rowsPerFile,
        random: { present: count('random', 'present'), absent: count('random', 'absent') },
        before_commit: { present: count('before-commit', 'present'), absent: count('before-commit', 'absent') },
        after_commit: { present: count('after-commit', 'present'), absent: count('after-commit', 'absent') },
        finished_before_kill: results.filter((r) => r.exitedByItself === 0).length,
        integrity_failures: 0,
        partial_imports: 0,
      }
      const dir = fileURLToPath(new URL('../artifacts/', import.meta.url))
      mkdirSync(dir, { recursive: true })
      writeFileSync(`${dir}crash.json`, JSON.stringify(report, null, 2) + '\n')
      process.stdout.write(`crash: ${JSON.stringify(report)}\n`)
      // the kills must have hit both sides of the commit, or the test proved little
      expect(report.random.absent + report.before_commit.absent).toBeGreaterThan(0)
      expect(report.random.present + report.after_commit.present).toBeGreaterThan(0)
    },
    scaledTimeout(300_000),
  )
})
