import { hasErrors, parseCsvTable, type TableSpec } from './csv-table.ts'
import { speciesValues, type Species } from './reference-sets/reference-set.ts'
import { byLine, checkUniqueKeys, makeRowReader, optional, type ParsedRows, type RowReader } from './row-reader.ts'

export const storageKinds = ['deep_pit', 'earthen_basin', 'lagoon', 'tank', 'stack', 'other'] as const
export type StorageKind = (typeof storageKinds)[number]

/** Livestock the manure comes from, as the reference sets' availability and book-value tables name them. */
export const manureSpecies = speciesValues
export type ManureSpecies = Species

export const manureForms = ['liquid', 'solid'] as const
export type StorageForm = (typeof manureForms)[number]

/** rectangular: L × W × depth; circular: diameter × depth; basin: top L × W, depth, side slope (run per unit rise). */
export const storageShapes = ['rectangular', 'circular', 'basin'] as const
export type StorageShape = (typeof storageShapes)[number]

export const amountUnits = ['gal', 'ton'] as const
export type AmountUnit = (typeof amountUnits)[number]

/** Labels of access points, in order: a storage with 3 access points has A, B and C. */
export function accessPointLabels(count: number): string[] {
  return Array.from({ length: Math.max(0, Math.min(count, 26)) }, (_, i) => String.fromCharCode(65 + i))
}

export interface StorageRow {
  line: number
  farmCode: string
  code: string
  kind: StorageKind
  species: ManureSpecies
  form: StorageForm
  // undefined: the file has no such column (the stored value stays); null: present but blank (cleared)
  name?: string | null
  shape?: StorageShape | null
  lengthFt?: number | null
  widthFt?: number | null
  diameterFt?: number | null
  depthFt?: number | null
  sideSlope?: number | null
  freeboardFt?: number | null
  capacity?: number | null
  capacityUnit?: AmountUnit | null
  currentAmount?: number | null
  currentAmountOn?: string | null
  currentDepthFt?: number | null
  accessPoints?: number | null
  notes?: string | null
}

export const storageCsvSpec: TableSpec = {
  columns: [
    { key: 'farm', aliases: ['farm_code'], required: true },
    { key: 'storage', aliases: ['storage_code', 'storage_id'], required: true },
    { key: 'kind', aliases: ['storage_kind', 'type'], required: true },
    { key: 'species', aliases: ['animal', 'livestock'], required: true },
    { key: 'form', aliases: ['manure_form'], required: true },
    { key: 'name', aliases: ['storage_name'] },
    { key: 'shape' },
    { key: 'length_ft', aliases: ['length'] },
    { key: 'width_ft', aliases: ['width'] },
    { key: 'diameter_ft', aliases: ['diameter'] },
    { key: 'depth_ft', aliases: ['depth'] },
    { key: 'side_slope', aliases: ['slope'] },
    { key: 'freeboard_ft', aliases: ['freeboard'] },
    { key: 'capacity' },
    { key: 'capacity_unit', aliases: ['unit'] },
    { key: 'current_amount', aliases: ['in_storage'] },
    { key: 'current_amount_on', aliases: ['current_amount_date', 'measured_on'] },
    { key: 'current_depth_ft', aliases: ['current_depth'] },
    { key: 'access_points' },
    { key: 'notes' },
  ],
}

const speciesAliases: Record<string, ManureSpecies> = {
  hog: 'swine',
  hogs: 'swine',
  pig: 'swine',
  pigs: 'swine',
  broiler: 'poultry',
  broilers: 'poultry',
  layer: 'poultry',
  layers: 'poultry',
  turkey: 'poultry',
  chicken: 'poultry',
}
const kindAliases: Record<string, StorageKind> = { pit: 'deep_pit', basin: 'earthen_basin', slab: 'stack' }
const feetColumns = ['length_ft', 'width_ft', 'diameter_ft', 'depth_ft', 'freeboard_ft', 'current_depth_ft'] as const

/** Parses a storages file: kind, species, form, geometry, capacity and what is in storage now. */
export function parseStorageCsv(text: string): ParsedRows<StorageRow> {
  const table = parseCsvTable(text, storageCsvSpec)
  const problems = [...table.problems]
  for (const key of feetColumns) {
    const unit = table.headerUnits[key]
    if (unit && !/^(ft|feet|foot)$/i.test(unit)) {
      problems.push({ code: 'unit_not_supported', line: 1, column: key, message: `expected feet, found "${unit}" in the header` })
    }
  }
  if (hasErrors(problems)) return { rows: [], problems }
  const rows: StorageRow[] = []
  table.rows.forEach((cells, i) => {
    const r = makeRowReader(table, cells, table.lines[i]!, problems)
    const farmCode = r.code('farm', { required: true })
    const code = r.code('storage', { required: true })
    const kind = r.choice('kind', storageKinds, { required: true, aliases: kindAliases })
    const species = r.choice('species', manureSpecies, { required: true, aliases: speciesAliases })
    const form = r.choice('form', manureForms, { required: true })
    const feet = (key: string) => optional(r, key, () => r.number(key, { above: 0, max: 5000 }))
    const row: StorageRow = {
      line: r.line,
      farmCode: farmCode ?? '',
      code: code ?? '',
      kind: kind ?? 'other',
      species: species ?? 'other',
      form: form ?? 'liquid',
      name: optional(r, 'name', () => r.text('name', { maxLength: 200 })),
      shape: optional(r, 'shape', () => r.choice('shape', storageShapes)),
      lengthFt: feet('length_ft'),
      widthFt: feet('width_ft'),
      diameterFt: feet('diameter_ft'),
      depthFt: feet('depth_ft'),
      sideSlope: optional(r, 'side_slope', () =>
        r.number('side_slope', { min: 0, max: 10, hint: 'run per unit rise: 3 for a 3:1 slope' }),
      ),
      freeboardFt: optional(r, 'freeboard_ft', () => r.number('freeboard_ft', { min: 0, max: 100 })),
      capacity: optional(r, 'capacity', () => r.number('capacity', { above: 0 })),
      capacityUnit: optional(r, 'capacity_unit', () => r.choice('capacity_unit', amountUnits, { aliases: { gallons: 'gal', tons: 'ton', t: 'ton' } })),
      currentAmount: optional(r, 'current_amount', () => r.number('current_amount', { min: 0 })),
      currentAmountOn: optional(r, 'current_amount_on', () => r.date('current_amount_on')),
      currentDepthFt: optional(r, 'current_depth_ft', () => r.number('current_depth_ft', { min: 0, max: 100 })),
      accessPoints: optional(r, 'access_points', () =>
        r.integer('access_points', { min: 1, max: 26, hint: 'access points are labelled A to Z' }),
      ),
      notes: optional(r, 'notes', () => r.text('notes')),
    }
    if (!r.failed) checkStorageRow(row, r)
    if (!r.failed) rows.push(row)
  })
  const unique = checkUniqueKeys(
    rows,
    (s) => `${s.farmCode}\u0000${s.code}`,
    (s) => `storage ${s.code} of farm ${s.farmCode}`,
    'storage',
    problems,
  )
  return { rows: unique, problems: byLine(problems) }
}

function checkStorageRow(row: StorageRow, r: RowReader): void {
  if (row.kind === 'stack' && row.form === 'liquid') {
    r.error('form', 'a stack holds solid manure; expected form solid (or kind other)')
  }
  if (row.form === 'solid' && ['deep_pit', 'lagoon', 'tank'].includes(row.kind)) {
    r.warn('form', `solid manure in a ${row.kind} is unusual; check kind and form`)
  }
  const need = (key: string, value: number | null | undefined, what: string) => {
    if (value === null || value === undefined) r.error(key, `a ${row.shape} storage needs ${what}`, 'missing_value')
  }
  if (row.shape === 'rectangular') {
    need('length_ft', row.lengthFt, 'length_ft')
    need('width_ft', row.widthFt, 'width_ft')
    need('depth_ft', row.depthFt, 'depth_ft')
  } else if (row.shape === 'circular') {
    need('diameter_ft', row.diameterFt, 'diameter_ft')
    need('depth_ft', row.depthFt, 'depth_ft')
  } else if (row.shape === 'basin') {
    need('length_ft', row.lengthFt, 'length_ft (top length)')
    need('width_ft', row.widthFt, 'width_ft (top width)')
    need('depth_ft', row.depthFt, 'depth_ft')
    need('side_slope', row.sideSlope, 'side_slope (run per unit rise)')
    if (row.lengthFt && row.widthFt && row.depthFt && row.sideSlope) {
      const bottom = Math.min(row.lengthFt, row.widthFt) - 2 * row.sideSlope * row.depthFt
      if (bottom <= 0) {
        r.error('side_slope', `slopes of ${row.sideSlope}:1 over ${row.depthFt} ft meet before the bottom of a ${row.widthFt} ft wide basin`)
      }
    }
  } else if (row.shape === null || row.shape === undefined) {
    const given = [row.lengthFt, row.widthFt, row.diameterFt].some((v) => v !== null && v !== undefined)
    if (given) r.error('shape', 'dimensions are given without a shape; expected rectangular, circular or basin')
  }
  if (row.depthFt && row.freeboardFt !== null && row.freeboardFt !== undefined && row.freeboardFt >= row.depthFt) {
    r.error('freeboard_ft', `freeboard ${row.freeboardFt} ft is not less than the depth ${row.depthFt} ft`)
  }
  if (row.depthFt && row.currentDepthFt && row.currentDepthFt > row.depthFt) {
    r.error('current_depth_ft', `${row.currentDepthFt} ft is deeper than the storage (${row.depthFt} ft)`)
  }
  const usesUnit = (row.capacity ?? null) !== null || (row.currentAmount ?? null) !== null
  if (usesUnit && !row.capacityUnit) row.capacityUnit = row.form === 'liquid' ? 'gal' : 'ton'
  if (row.capacityUnit && row.capacityUnit !== (row.form === 'liquid' ? 'gal' : 'ton')) {
    r.warn('capacity_unit', `a ${row.form} storage measured in ${row.capacityUnit} is unusual; rates will be per ${row.capacityUnit}`)
  }
  if (row.capacity && row.currentAmount && row.currentAmount > row.capacity) {
    r.warn('current_amount', `${row.currentAmount} ${row.capacityUnit} is more than the capacity ${row.capacity}`)
  }
  if ((row.currentAmount ?? null) !== null && row.currentAmountOn === null) {
    r.warn('current_amount_on', 'the amount in storage has no date; give the day it was measured')
  }
}
