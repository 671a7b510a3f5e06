import { requireFarm } from '../../shared/db/farms.ts'
import { listStorages, prepareStorageImport, type Storage } from '../../shared/db/storages.ts'
import { parseStorageCsv } from '../../shared/storage-csv.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson, printTable } from '../output.ts'
import {
  printImportReport,
  runRecordImport,
  withDatabase,
  type ImportDeps,
  type ImportOptions,
  type ImportReport,
  type ImportSource,
} from './record-import.ts'

/** The core of `pitside storages import`, callable in-process. */
export async function importStorages(deps: ImportDeps, files: readonly ImportSource[], options: ImportOptions = {}): Promise<ImportReport> {
  return runRecordImport(deps, 'storages', files, options, async (text) => {
    const parsed = parseStorageCsv(text)
    const prepared = await prepareStorageImport(deps.db, parsed.rows)
    return { ...prepared, problems: [...parsed.problems, ...prepared.problems] }
  })
}

export const runImport: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const report = await withDatabase(g.db, (deps) => importStorages(deps, args[0] as string[], { dryRun: options.dryRun }))
  printImportReport(g, report)
}

export function storageJson(s: Storage) {
  return {
    farm: s.farmCode,
    storage: s.code,
    name: s.name,
    kind: s.kind,
    species: s.species,
    form: s.form,
    shape: s.shape,
    length_ft: s.lengthFt,
    width_ft: s.widthFt,
    diameter_ft: s.diameterFt,
    depth_ft: s.depthFt,
    side_slope: s.sideSlope,
    freeboard_ft: s.freeboardFt,
    capacity: s.capacity,
    capacity_unit: s.capacityUnit,
    current_amount: s.currentAmount,
    current_amount_on: s.currentAmountOn,
    current_depth_ft: s.currentDepthFt,
    access_points: s.accessPoints,
    notes: s.notes,
  }
}

function dimensions(s: Storage): string {
  const ft = (v: number | null) => (v === null ? '?' : String(v))
  if (s.shape === 'rectangular') return `${ft(s.lengthFt)} × ${ft(s.widthFt)} × ${ft(s.depthFt)} ft`
  if (s.shape === 'circular') return `⌀ ${ft(s.diameterFt)} × ${ft(s.depthFt)} ft`
  if (s.shape === 'basin') return `${ft(s.lengthFt)} × ${ft(s.widthFt)} × ${ft(s.depthFt)} ft, ${ft(s.sideSlope)}:1`
  return ''
}

export const runList: ActionModule['run'] = async ({ options, globals: g }) => {
  const storages = await withDatabase(g.db, async ({ db }) => {
    const farm = options.farm ? await requireFarm(db, options.farm) : undefined
    return listStorages(db, { farmId: farm?.id })
  })
  if (g.json) return printJson({ storages: storages.map(storageJson) })
  if (!storages.length) return note(g, 'no storages yet; add them with `pitside storages import storages.csv`')
  const amount = (v: number | null, unit: string | null) => (v === null ? '' : `${Math.round(v).toLocaleString('en-US')} ${unit ?? ''}`.trim())
  printTable(storages, [
    { header: 'farm', value: (s) => s.farmCode },
    { header: 'storage', value: (s) => s.code },
    { header: 'name', value: (s) => s.name },
    { header: 'kind', value: (s) => s.kind },
    { header: 'manure', value: (s) => `${s.species} ${s.form}` },
    { header: 'size', value: dimensions },
    { header: 'capacity', value: (s) => amount(s.capacity, s.capacityUnit), align: 'right' },
    { header: 'in storage', value: (s) => amount(s.currentAmount, s.capacityUnit), align: 'right' },
    { header: 'on', value: (s) => s.currentAmountOn },
    { header: 'access points', value: (s) => s.accessPoints, align: 'right' },
  ])
}
