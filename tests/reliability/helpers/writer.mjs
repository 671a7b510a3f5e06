// A child process that keeps writing committed batches into a Pitside database until it is killed
// or has written `count` batches. Each batch is one transaction: one import_runs row named
// `batch-<k>` plus `size` farms coded `B<k>-<i>`, so any committed state has, for every batch
// present, exactly `size` farms, and consecutive batches with no gaps. With `keep` > 0 the same
// transaction deletes batch k - keep, so the database stays small however long the writer runs.
// usage: node writer.mjs <db> <count|0 for forever> [size] [pauseMs] [keep]
import SQLite from 'better-sqlite3'

const [file, countArg = '0', sizeArg = '20', pauseArg = '0', keepArg = '0'] = process.argv.slice(2)
const keep = Number(keepArg)
const count = Number(countArg)
const size = Number(sizeArg)
const pauseMs = Number(pauseArg)
const db = new SQLite(file)
db.pragma('busy_timeout = 5000')
db.pragma('journal_mode = WAL')
db.pragma('foreign_keys = ON')
let org = db.prepare(`select id from organizations where code = 'writer'`).get()
if (!org) {
  db.prepare(`insert into organizations (code, name) values ('writer', 'Writer Test Firm')`).run()
  org = db.prepare(`select id from organizations where code = 'writer'`).get()
}
const last = db.prepare(`select coalesce(max(cast(substr(file_name, 7) as integer)), 0) as n from import_runs where kind = 'writer-test'`).get().n
const insertRun = db.prepare(
  `insert into import_runs (kind, file_name, sha256, rows, rows_new, outcome) values ('writer-test', ?, ?, ?, ?, 'imported')`,
)
const insertFarm = db.prepare(`insert into farms (organization_id, code, name, notes) values (?, ?, ?, ?)`)
const dropFarms = db.prepare(`delete from farms where code like ? || '-%'`)
const dropRun = db.prepare(`delete from import_runs where kind = 'writer-test' and file_name = ?`)
const batch = db.transaction((k) => {
  if (keep > 0 && k > keep) {
    dropFarms.run(`B${k - keep}`)
    dropRun.run(`batch-${k - keep}`)
  }
  insertRun.run(`batch-${k}`, String(k).padStart(64, '0'), size, size)
  for (let i = 0; i < size; i++) insertFarm.run(org.id, `B${k}-${i}`, `Batch ${k} farm ${i}`, 'x'.repeat(200))
})
process.send?.('ready')
const sleep = (ms) => new Promise((r) => setTimeout(r, ms))
for (let k = last + 1; count === 0 || k <= last + count; k++) {
  batch(k)
  process.stdout.write(`${k}\n`)
  if (pauseMs > 0) await sleep(pauseMs)
  else if (k % 20 === 0) await sleep(0)
}
db.close()
