// A child process that keeps writing committed batches into a Pitside database until it is killed
// or has written `count` batches. Each batch is one transaction: one import_runs row named
// `batch-<k>` plus `size` farms coded `B<k>-<i>`, so any committed state has, for every batch
// present, exactly `size` farms, and batches 1..K with no gaps.
// usage: node writer.mjs <db> <count|0 for forever> [size] [pauseMs]
import SQLite from 'better-sqlite3'

const [file, countArg = '0', sizeArg = '20', pauseArg = '0'] = process.argv.slice(2)
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
const last = db.prepare(`select count(*) as n from import_runs where kind = 'writer-test'`).get().n
const insertRun = db.prepare(
  `insert into import_runs (kind, file_name, sha256, rows, rows_new, outcome) values ('writer-test', ?, ?, ?, ?, 'imported')`,
)
const insertFarm = db.prepare(`insert into farms (organization_id, code, name, notes) values (?, ?, ?, ?)`)
const batch = db.transaction((k) => {
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
