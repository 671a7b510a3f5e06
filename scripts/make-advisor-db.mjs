// Makes an invented advisor database of many farms through the real import commands, for timing
// `pitside plan --all` and `pitside labs import` by hand (npm run bench measures them properly):
//
//   npm run build:node
//   node scripts/make-advisor-db.mjs --db /tmp/advisor.db --farms 1000 --fields 20 [--lab-rows 200000]
//   time node bin/pitside.js --db /tmp/advisor.db -q plan --all --season 2027 --as-of 2026-11-15
//
// The generators are the benchmark's (bench/generate/): farms with their storages, fields with
// crop seasons and soil tests, three recent lab results per storage; with --lab-rows, also one large
// lab file (<db>.labs.csv) to import. Invented data only.
import { rmSync } from 'node:fs'
import { parseArgs } from 'node:util'
import { makeFarmDatabase } from '../bench/cases/import.mjs'
import { makeFarms } from '../bench/generate/farms.mjs'
import { writeLabFile } from '../bench/generate/labs.mjs'
import { makeWorkDir } from '../bench/lib/context.mjs'
import { makeRandom } from '../bench/lib/prng.mjs'
import { addFieldsLabsAndPlans } from '../bench/lib/viewer-db.mjs'

const { values } = parseArgs({ options: { db: { type: 'string' }, farms: { type: 'string', default: '1000' }, fields: { type: 'string', default: '20' }, 'lab-rows': { type: 'string' } } })
if (!values.db) {
  process.stderr.write('usage: node scripts/make-advisor-db.mjs --db <file> [--farms 1000] [--fields 20] [--lab-rows 200000]\n')
  process.exit(64)
}
const work = makeWorkDir()
try {
  for (const suffix of ['', '-wal', '-shm']) rmSync(values.db + suffix, { force: true })
  const random = makeRandom(1000)
  const farms = makeFarms(random, Number(values.farms))
  await makeFarmDatabase(work, values.db, farms)
  await addFieldsLabsAndPlans(work, values.db, random, farms, Number(values.fields), 'advisor')
  if (values['lab-rows']) {
    const { rows } = await writeLabFile(`${values.db}.labs.csv`, { random, farms, rows: Number(values['lab-rows']), firstReport: 50000 })
    process.stderr.write(`wrote ${values.db}.labs.csv (${rows} lab results)\n`)
  }
  process.stderr.write(`made ${values.db}: ${farms.length} farms × ${values.fields} fields\n`)
} finally {
  work.cleanup()
}
