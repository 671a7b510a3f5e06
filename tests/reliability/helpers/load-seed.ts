import SQLite from 'better-sqlite3'
import { makeTempDatabase, type TempDir } from '../../helpers/temp-db.ts'
import { seedViewerDatabase } from '../../helpers/viewer-seed.ts'

export interface LoadDatabase {
  file: string
  tmp: TempDir
  farmCodes: string[]
  /** Latest plan id of each farm, by code. */
  planIds: Record<string, number>
}

/**
 * A database with `farmCount` farms of the demo firm (loamridge): the viewer's seed
 * (tests/helpers/viewer-seed.ts) with its loamridge farms cloned, each clone keeping its storages,
 * three seasons of lab results, fields, crop seasons and every stored plan with its plan fields.
 * Invented data; the accounts are the seed's (password `pitside-demo`).
 */
export async function makeLoadDatabase(farmCount = 200): Promise<LoadDatabase> {
  const temp = await makeTempDatabase()
  await seedViewerDatabase(temp.db)
  await temp.close()
  const file = temp.tmp.path('test.db')
  const s = new SQLite(file)
  s.pragma('journal_mode = WAL')
  s.pragma('foreign_keys = ON')
  const org = (s.prepare(`select id from organizations where code = 'loamridge'`).get() as { id: number }).id
  const templates = s.prepare('select * from farms where organization_id = ? order by code').all(org) as Record<string, any>[]
  const insert = (table: string, row: Record<string, unknown>) => {
    const cols = Object.keys(row).filter((k) => k !== 'id')
    return Number(s.prepare(`insert into ${table} (${cols.join(', ')}) values (${cols.map(() => '?').join(', ')})`).run(...cols.map((c) => row[c] as never)).lastInsertRowid)
  }
  const all = (sql: string, ...args: unknown[]) => s.prepare(sql).all(...args) as Record<string, any>[]
  const clone = s.transaction((template: Record<string, any>, code: string, n: number) => {
    const farmId = insert('farms', { ...template, code, name: `${template.name} ${n}` })
    const storageMap = new Map<number, number>()
    for (const st of all('select * from storages where farm_id = ?', template.id)) storageMap.set(st.id, insert('storages', { ...st, farm_id: farmId }))
    for (const r of all('select * from lab_results where storage_id in (select id from storages where farm_id = ?)', template.id)) {
      insert('lab_results', { ...r, storage_id: storageMap.get(r.storage_id), sample_code: `${code}-${r.sample_code}` })
    }
    const fieldMap = new Map<number, number>()
    for (const f of all('select * from fields where farm_id = ?', template.id)) {
      fieldMap.set(f.id, insert('fields', { ...f, farm_id: farmId, storage_id: f.storage_id === null ? null : storageMap.get(f.storage_id) }))
    }
    for (const c of all('select * from crop_seasons where field_id in (select id from fields where farm_id = ?)', template.id)) {
      insert('crop_seasons', { ...c, field_id: fieldMap.get(c.field_id) })
    }
    let latest = 0
    for (const p of all('select * from plans where farm_id = ? order by version', template.id)) {
      const planId = insert('plans', { ...p, farm_id: farmId, result: p.result.replace(`"farm":"${template.code}"`, `"farm":"${code}"`) })
      latest = planId
      for (const pf of all('select * from plan_fields where plan_id = ?', p.id)) {
        insert('plan_fields', { ...pf, plan_id: planId, field_id: fieldMap.get(pf.field_id), storage_id: pf.storage_id === null ? null : storageMap.get(pf.storage_id) })
      }
    }
    return latest
  })
  const planIds: Record<string, number> = {}
  const existing = templates.length
  for (const t of templates) {
    planIds[t.code] = (s.prepare('select max(id) as id from plans where farm_id = ?').get(t.id) as { id: number }).id
  }
  for (let n = existing; n < farmCount; n++) {
    const template = templates[n % templates.length]!
    const code = `L${String(n + 1).padStart(3, '0')}`
    planIds[code] = clone(template, code, n + 1)
  }
  s.pragma('wal_checkpoint(TRUNCATE)')
  s.close()
  return { file, tmp: temp.tmp, farmCodes: Object.keys(planIds), planIds }
}
