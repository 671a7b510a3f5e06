import { readFileSync } from 'node:fs'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { importFarms } from '../../cli/actions/farms.ts'
import { addSample, importSamples } from '../../cli/actions/samples.ts'
import { importStorages } from '../../cli/actions/storages.ts'
import type { OpenDatabase } from '../../shared/db/open-database.ts'
import { runCli } from '../helpers/cli.ts'
import { makeTempDatabase, type TempDir } from '../helpers/temp-db.ts'

const fixture = (path: string) => new URL(`../fixtures/${path}`, import.meta.url).pathname

let t: OpenDatabase & { tmp: TempDir }
let open = false
async function closeDb(): Promise<string> {
  if (open) await t.close()
  open = false
  return t.tmp.path('test.db')
}
beforeEach(async () => {
  t = await makeTempDatabase()
  open = true
  await t.db.insertInto('organizations').values({ code: 'brightwater', name: 'Brightwater Agronomy' }).execute()
  await importFarms(t, [fixture('farms/farms.csv')])
  await importStorages(t, [fixture('storages/storages.csv')])
})
afterEach(async () => {
  await closeDb()
  t.tmp.cleanup()
})

const today = '2026-11-15'

describe('importSamples and addSample (in-process cores)', () => {
  it('records sampling events keyed by sample id and finds a re-import unchanged', async () => {
    expect((await importSamples(t, [fixture('samples/samples.csv')], { today })).files[0]).toMatchObject({ new: 3 })
    const row = t.sqlite.prepare("select * from sampling_events where sample_code = 'BWA-PIT-20261012-B'").get() as Record<string, unknown>
    expect(row).toMatchObject({ sampled_on: '2026-10-12', agitated: 1, sampler_kind: 'bucket_at_pump', cores: 18, access_points_sampled: 'B', sampled_by: 'Ida Brightwater' })
    expect(row.import_run_id).toEqual(expect.any(Number))
    expect((await importSamples(t, [fixture('samples/samples.csv')], { today })).files[0]).toMatchObject({ outcome: 'unchanged', unchanged: 3 })
  })

  it('refuses a sample id that is recorded for another storage, and warns about an unknown access point', async () => {
    await importSamples(t, [fixture('samples/samples.csv')], { today })
    const moved = 'farm,storage,sample_id,sampled_on\nBWA,PILE,BWA-PIT-20261012-A,2026-10-12\n'
    await expect(importSamples(t, [{ name: 's.csv', text: moved }], { today })).rejects.toMatchObject({
      message: expect.stringContaining('s.csv:2: sample_id: sample BWA-PIT-20261012-A is recorded for storage BWA/PIT; a sample id belongs to one storage'),
    })
    const r = await importSamples(t, [{ name: 'w.csv', text: 'farm,storage,sample_id,sampled_on,access_points\nBWA,PIT,X1,2026-10-12,D\n' }], { today })
    expect(r.files[0]!.warnings).toEqual([expect.objectContaining({ line: 2, column: 'access_points', message: 'storage PIT has access points A, B, C; D is not one of them' })])
  })

  it('adds one sample with a proposed id, accepts the same again, and refuses other values for it', async () => {
    const first = await addSample(t, { farm: 'HRN', storage: 'BASIN', date: '2026-10-20', points: 'a,c', cores: 12, agitated: false, today })
    expect(first).toEqual({ sampleCode: 'HRN-BASIN-20261020-AC', status: 'new' })
    expect(await addSample(t, { farm: 'HRN', storage: 'BASIN', date: '2026-10-20', points: 'A,C', cores: 12, agitated: false, today })).toEqual({ sampleCode: 'HRN-BASIN-20261020-AC', status: 'unchanged' })
    await expect(addSample(t, { farm: 'HRN', storage: 'BASIN', date: '2026-10-20', points: 'A,C', cores: 14, today })).rejects.toMatchObject({
      code: 'conflict',
      message: expect.stringContaining('sample HRN-BASIN-20261020-AC is already recorded with other values (cores 12 → 14)'),
    })
    await expect(addSample(t, { farm: 'HRN', storage: 'NOPE', today })).rejects.toMatchObject({ code: 'not_found', message: expect.stringContaining('--storage: storage NOPE is not a storage of farm HRN (known: BASIN)') })
  })
})

describe('pitside samples (built binary)', () => {
  it('writes a sampling sheet with its sample ids and a template that imports as those samples', async () => {
    const db = await closeDb()
    const sheet = t.tmp.path('sheet.html')
    const template = t.tmp.path('template.csv')
    const r = await runCli(['--db', db, 'samples', 'sheet', '--farm', 'BWA', '--date', '2026-10-12', '--out', sheet, '--template', template])
    expect(r.exitCode).toBe(0)
    expect(r.stderr).toMatch(/sampling sheet for BWA on 2026-10-12, 5 sample ids in 2 storages/)
    const html = readFileSync(sheet, 'utf8')
    for (const id of ['BWA-PIT-20261012-A', 'BWA-PIT-20261012-C', 'BWA-PILE-20261012-B']) expect(html).toContain(id)
    expect(html).toContain('Danger: manure gases')
    const imported = await runCli(['--db', db, '--json', 'samples', 'import', template])
    expect(imported.exitCode).toBe(0)
    expect(JSON.parse(String(imported.stdout)).files[0]).toMatchObject({ new: 5 })
    const list = await runCli(['--db', db, 'samples', 'list', '--farm', 'BWA', '--storage', 'PILE'])
    expect(list.stdout).toMatch(/│ BWA-PILE-20261012-A │ BWA\s+│ PILE\s+│ 2026-10-12 │/)
    expect(list.stdout).not.toMatch(/BWA-PIT-/)
  })

  it('prints the id of an added sample and names the flag of a bad value', async () => {
    const db = await closeDb()
    const ok = await runCli(['--db', db, 'samples', 'add', '--farm', 'BWA', '--storage', 'PIT', '--date', '2026-10-12', '--points', 'B', '--agitated', '--sampler', 'tube_core', '--cores', '14'])
    expect(ok.exitCode).toBe(0)
    expect(ok.stdout).toBe('BWA-PIT-20261012-B')
    const bad = await runCli(['--db', db, 'samples', 'add', '--farm', 'BWA', '--storage', 'PIT', '--date', '2026-13-01'])
    expect(bad.exitCode).toBe(65)
    expect(bad.stderr).toMatch(/^pitside: --date: expected a date \(YYYY-MM-DD\), found "2026-13-01" is not a real date/)
  })
})
