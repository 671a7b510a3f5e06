import { writeFile } from 'node:fs/promises'
import { requireFarm } from '../../shared/db/farms.ts'
import { listSamplingEvents, prepareSampleImport, type SamplingEvent } from '../../shared/db/samples.ts'
import { listStorages, type Storage } from '../../shared/db/storages.ts'
import { AppError, formatProblems } from '../../shared/errors.ts'
import { makeSampleCode, parseAccessPoints, parseSampleCsv, parseSampleValues } from '../../shared/sample-csv.ts'
import { planSamples, renderSamplingSheet, type SamplingSheetInput } from '../../shared/sampling-sheet.ts'
import { parseDateCell } from '../../shared/csv-cells.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson, printTable } from '../output.ts'
import {
  localToday,
  printImportReport,
  runRecordImport,
  withDatabase,
  type ImportDeps,
  type ImportOptions,
  type ImportReport,
  type ImportSource,
} from './record-import.ts'

/** The core of `pitside samples import`, callable in-process. */
export async function importSamples(deps: ImportDeps, files: readonly ImportSource[], options: ImportOptions = {}): Promise<ImportReport> {
  const today = options.today ?? localToday()
  return runRecordImport(deps, 'samples', files, options, async (text) => {
    const parsed = parseSampleCsv(text, { today })
    const prepared = await prepareSampleImport(deps.db, parsed.rows)
    return { ...prepared, problems: [...parsed.problems, ...prepared.problems] }
  })
}

export interface AddSampleInput {
  farm: string
  storage: string
  /** YYYY-MM-DD; defaults to today. */
  date?: string
  /** Sample id; defaults to `<farm>-<storage>-<YYYYMMDD>[-<points>]`. */
  id?: string
  agitated?: boolean
  sampler?: string
  cores?: string | number
  points?: string
  by?: string
  notes?: string
  today?: string
}

const flagOf: Record<string, string> = {
  farm: '--farm',
  storage: '--storage',
  sample_id: '--id',
  sampled_on: '--date',
  agitated: '--agitated',
  sampler_kind: '--sampler',
  cores: '--cores',
  access_points: '--points',
  sampled_by: '--by',
  notes: '--notes',
}

/**
 * The core of `pitside samples add`: records one sampling event. Returns the sample id and whether
 * it was new. Throws `invalid_input` for bad values and `conflict` when the id is already recorded
 * with other values.
 */
export async function addSample(deps: ImportDeps, input: AddSampleInput): Promise<{ sampleCode: string; status: 'new' | 'unchanged' }> {
  const today = input.today ?? localToday()
  const date = input.date ?? today
  let id = input.id
  if (!id) {
    const dateOk = parseDateCell(date)
    const points = input.points ? parseAccessPoints(input.points) : { ok: true as const, value: [] }
    if (dateOk.ok && points.ok) {
      id = makeSampleCode(input.farm, input.storage, dateOk.value, points.value) ?? undefined
      if (!id) throw new AppError('usage', 'the proposed sample id would be longer than 40 characters; give one with --id')
    }
  }
  const { row, problems } = parseSampleValues(
    {
      farm: input.farm,
      storage: input.storage,
      sample_id: id ?? '',
      sampled_on: date,
      ...(input.agitated !== undefined ? { agitated: input.agitated ? 'yes' : 'no' } : {}),
      ...(input.sampler !== undefined ? { sampler_kind: input.sampler } : {}),
      ...(input.cores !== undefined ? { cores: String(input.cores) } : {}),
      ...(input.points !== undefined ? { access_points: input.points } : {}),
      ...(input.by !== undefined ? { sampled_by: input.by } : {}),
      ...(input.notes !== undefined ? { notes: input.notes } : {}),
    },
    { today },
  )
  const flagged = (ps: typeof problems) => formatProblems(ps.map((p) => ({ ...p, column: p.column ? (flagOf[p.column] ?? p.column) : undefined })))
  if (!row) throw new AppError('invalid_input', flagged(problems.filter((p) => p.severity !== 'warning')))
  const { sqlite, db } = deps
  sqlite.exec('BEGIN IMMEDIATE')
  try {
    const prepared = await prepareSampleImport(db, [row])
    const errors = prepared.problems.filter((p) => p.severity !== 'warning')
    if (errors.length) {
      throw new AppError(errors.some((e) => e.code === 'unknown_farm' || e.code === 'unknown_storage') ? 'not_found' : 'conflict', flagged(errors.map((e) => ({ ...e, line: undefined }))))
    }
    const item = prepared.items[0]!
    if (item.status === 'changed') {
      const what = item.changes.map((c) => `${c.column} ${String(c.from ?? '(empty)')} → ${String(c.to ?? '(empty)')}`).join('; ')
      throw new AppError('conflict', `sample ${row.sampleCode} is already recorded with other values (${what}); correct it with \`pitside samples import\``)
    }
    if (item.status === 'new') prepared.write({ sqlite, db, importRunId: 0, now: new Date().toISOString() })
    sqlite.exec('COMMIT')
    return { sampleCode: row.sampleCode, status: item.status }
  } catch (error) {
    if (sqlite.inTransaction) sqlite.exec('ROLLBACK')
    throw error
  }
}

export const runImport: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const report = await withDatabase(g.db, (deps) => importSamples(deps, args[0] as string[], { dryRun: options.dryRun }))
  printImportReport(g, report)
}

export const runAdd: ActionModule['run'] = async ({ options, globals: g }) => {
  const result = await withDatabase(g.db, (deps) =>
    addSample(deps, {
      farm: options.farm,
      storage: options.storage,
      date: options.date,
      id: options.id,
      agitated: options.agitated,
      sampler: options.sampler,
      cores: options.cores,
      points: options.points,
      by: options.by,
      notes: options.notes,
    }),
  )
  if (g.json) printJson({ sample_id: result.sampleCode, status: result.status })
  else if (result.status === 'new') process.stdout.write(`${result.sampleCode}\n`)
  else note(g, `sample ${result.sampleCode} is already recorded with these values; nothing changed`)
}

export function sampleJson(s: SamplingEvent) {
  return {
    sample_id: s.sampleCode,
    farm: s.farmCode,
    storage: s.storageCode,
    sampled_on: s.sampledOn,
    agitated: s.agitated,
    sampler_kind: s.samplerKind,
    cores: s.cores,
    access_points: s.accessPoints,
    sampled_by: s.sampledBy,
    notes: s.notes,
    lab_results: s.labResults,
  }
}

export const runList: ActionModule['run'] = async ({ options, globals: g }) => {
  const events = await withDatabase(g.db, async ({ db }) => {
    const farm = options.farm ? await requireFarm(db, options.farm) : undefined
    let storageId: number | undefined
    if (options.storage) {
      if (!farm) throw new AppError('usage', '--storage needs --farm <code>')
      const storage = (await listStorages(db, { farmId: farm.id })).find((s) => s.code === options.storage)
      if (!storage) throw new AppError('not_found', `storage ${options.storage} is not a storage of farm ${farm.code}`)
      storageId = storage.id
    }
    return listSamplingEvents(db, { farmId: farm?.id, storageId, from: options.from, to: options.to })
  })
  if (g.json) return printJson({ samples: events.map(sampleJson) })
  if (!events.length) return note(g, 'no sampling events match; record them with `pitside samples add` or `samples import`')
  printTable(events, [
    { header: 'sample id', value: (s) => s.sampleCode },
    { header: 'farm', value: (s) => s.farmCode },
    { header: 'storage', value: (s) => s.storageCode },
    { header: 'sampled on', value: (s) => s.sampledOn },
    { header: 'agitated', value: (s) => (s.agitated === null ? '' : s.agitated ? 'yes' : 'no') },
    { header: 'sampler', value: (s) => s.samplerKind },
    { header: 'cores', value: (s) => s.cores, align: 'right' },
    { header: 'points', value: (s) => s.accessPoints.join(' ') },
    { header: 'lab results', value: (s) => s.labResults, align: 'right' },
  ])
}

function sizeOf(s: Storage): string | null {
  if (s.shape === 'rectangular') return `${s.lengthFt} × ${s.widthFt} × ${s.depthFt} ft`
  if (s.shape === 'circular') return `${s.diameterFt} ft across, ${s.depthFt} ft deep`
  if (s.shape === 'basin') return `${s.lengthFt} × ${s.widthFt} ft at the top, ${s.depthFt} ft deep`
  return null
}

/** Builds the sampling-sheet input of a farm from the database. */
export async function findSamplingSheetInput(deps: ImportDeps, farmCode: string, visitDate: string): Promise<SamplingSheetInput> {
  const farm = await requireFarm(deps.db, farmCode)
  const storages = await listStorages(deps.db, { farmId: farm.id })
  const events = await listSamplingEvents(deps.db, { farmId: farm.id })
  return {
    farm: { code: farm.code, name: farm.name, operatorName: farm.operatorName, address: farm.address, contactPhone: farm.contactPhone },
    visitDate,
    storages: storages.map((s) => ({
      code: s.code,
      name: s.name,
      kind: s.kind,
      species: s.species,
      form: s.form,
      accessPoints: s.accessPoints,
      size: sizeOf(s),
      lastSampledOn: events.filter((e) => e.storageCode === s.code).at(-1)?.sampledOn ?? null,
    })),
  }
}

export const runSheet: ActionModule['run'] = async ({ options, globals: g }) => {
  const date = options.date ? parseDateCell(options.date) : { ok: true as const, value: localToday() }
  if (!date.ok) throw new AppError('usage', `--date: expected YYYY-MM-DD, found ${date.reason}`)
  const input = await withDatabase(g.db, (deps) => findSamplingSheetInput(deps, options.farm, date.value))
  const html = renderSamplingSheet(input)
  const samples = planSamples(input)
  if (options.out) {
    try {
      await writeFile(options.out, html)
    } catch (error) {
      throw new AppError('io', `${options.out}: cannot write (${(error as NodeJS.ErrnoException).code ?? (error as Error).message})`)
    }
  }
  if (options.template) {
    const lines = ['farm,storage,sample_id,sampled_on,agitated,sampler_kind,cores,access_points,sampled_by,notes']
    for (const s of samples) lines.push([input.farm.code, s.storageCode, s.sampleCode, input.visitDate, '', '', '', s.accessPoint, '', ''].join(','))
    try {
      await writeFile(options.template, lines.join('\n') + '\n')
    } catch (error) {
      throw new AppError('io', `${options.template}: cannot write (${(error as NodeJS.ErrnoException).code ?? (error as Error).message})`)
    }
  }
  if (g.json) {
    return printJson({
      farm: input.farm.code,
      visit_date: input.visitDate,
      out: options.out ?? null,
      template: options.template ?? null,
      samples: samples.map((s) => ({ storage: s.storageCode, access_point: s.accessPoint, sample_id: s.sampleCode })),
    })
  }
  if (!options.out) process.stdout.write(html)
  else note(g, `wrote ${options.out}: sampling sheet for ${input.farm.code} on ${input.visitDate}, ${samples.length} sample ids in ${input.storages.length} storages`)
  if (options.template) note(g, `wrote ${options.template}: fill it in after the visit and record it with \`pitside samples import ${options.template}\``)
}
