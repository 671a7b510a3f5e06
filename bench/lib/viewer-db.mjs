// A viewer database made with the real CLI: an advisor account, farms with 50 and 200 fields (or the
// tiny size's counts), their storages, recent lab results, fields and one stored plan each.
import { spawnSync } from 'node:child_process'
import { writeFileSync } from 'node:fs'
import { makeFarmDatabase } from '../cases/import.mjs'
import { fieldsCsv, recentLabsCsv } from '../generate/fields.mjs'
import { makeFarms } from '../generate/farms.mjs'
import { sqliteBinary } from '../baselines/sqlite-import.mjs'
import { benchPassword, pitside } from './context.mjs'
import { makeRandom } from './prng.mjs'

export const planSeason = 2027
export const benchAdvisor = 'advisor@bench.example'

/** Imports fields and recent lab results for the farms (already in `db`) and plans every farm. */
export async function addFieldsLabsAndPlans(work, db, random, farms, perFarm, tag) {
  const fields = work.path(`${tag}-fields.csv`)
  const labs = work.path(`${tag}-labs.csv`)
  const byCount = new Map()
  for (const f of farms) byCount.set(f.code, f.fieldCount ?? perFarm)
  // one file per distinct field count keeps the generator simple
  const lines = []
  for (const f of farms) {
    const text = fieldsCsv(random, [f], byCount.get(f.code), planSeason)
    lines.push(lines.length === 0 ? text : text.slice(text.indexOf('\n') + 1))
  }
  writeFileSync(fields, lines.join(''))
  writeFileSync(labs, recentLabsCsv(random, farms, 3))
  await pitside(db, ['-q', 'labs', 'import', labs])
  await pitside(db, ['-q', 'fields', 'import', fields])
}

/** The id of the latest stored plan of a farm for the season. */
export function findPlanId(db, farmCode) {
  const r = spawnSync(
    sqliteBinary,
    [db, `select p.id from plans p join farms f on f.id = p.farm_id where f.code = '${farmCode}' and p.season = ${planSeason} order by p.version desc limit 1`],
    { encoding: 'utf8' },
  )
  const id = Number(r.stdout.trim())
  if (!Number.isInteger(id) || id <= 0) throw new Error(`no stored plan for farm ${farmCode} in ${db}: ${r.stderr}`)
  return id
}

/** Makes the viewer's database; returns its path and the plan ids by field count. */
export async function makeViewerDatabase(work, { fieldCounts }) {
  const random = makeRandom(2027)
  const farms = makeFarms(random, fieldCounts.length).map((f, i) => ({ ...f, code: `V${String(fieldCounts[i]).padStart(3, '0')}`, fieldCount: fieldCounts[i] }))
  const db = work.path('viewer.db')
  await makeFarmDatabase(work, db, farms)
  await addFieldsLabsAndPlans(work, db, random, farms, 0, 'viewer')
  await pitside(db, ['-q', 'plan', '--all', '--season', String(planSeason), '--as-of', '2026-11-15'])
  const planIds = {}
  for (const f of farms) planIds[f.fieldCount] = findPlanId(db, f.code)
  return { db, planIds, email: benchAdvisor, password: benchPassword }
}

/** Signs in to a running viewer; returns the session cookie (name=value). */
export async function signIn(baseUrl, email, password) {
  const res = await fetch(new URL('/api/session', baseUrl), {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ email, password }),
  })
  if (!res.ok) throw new Error(`sign-in as ${email} answered ${res.status}: ${await res.text()}`)
  const cookie = res.headers.getSetCookie().find((c) => c.startsWith('pitside_session='))
  if (!cookie) throw new Error('sign-in set no session cookie')
  return cookie.split(';')[0]
}
