import { hasErrors, parseCsvTable, type CsvTable, type TableSpec } from './csv-table.ts'
import type { Problem } from './errors.ts'
import { byLine, checkUniqueKeys, codePattern, makeRowReader, optional, type ParsedRows, type RowReader } from './row-reader.ts'

/** How the sample was taken. */
export const samplerKinds = ['tube_core', 'dipper', 'bucket_at_pump', 'bucket_at_spreader', 'fork_grab', 'other'] as const
export type SamplerKind = (typeof samplerKinds)[number]

/** A sampling event: one sample (one lab bottle) taken from one storage on one day. */
export interface SampleRow {
  line: number
  farmCode: string
  storageCode: string
  sampleCode: string
  sampledOn: string
  agitated?: boolean | null
  samplerKind?: SamplerKind | null
  /** Number of cores or subsamples combined into the bottle. */
  cores?: number | null
  /** Labels of the access points sampled, e.g. ["A", "C"]. */
  accessPoints?: string[] | null
  sampledBy?: string | null
  notes?: string | null
}

export const sampleCsvSpec: TableSpec = {
  columns: [
    { key: 'farm', aliases: ['farm_code'], required: true },
    { key: 'storage', aliases: ['storage_code'], required: true },
    { key: 'sample_id', aliases: ['sample_code', 'sample'], required: true },
    { key: 'sampled_on', aliases: ['date', 'sample_date', 'sampled'], required: true },
    { key: 'agitated' },
    { key: 'sampler_kind', aliases: ['sampler'] },
    { key: 'cores', aliases: ['subsamples', 'number_of_cores'] },
    { key: 'access_points', aliases: ['access_points_sampled', 'points'] },
    { key: 'sampled_by', aliases: ['sampler_name'] },
    { key: 'notes' },
  ],
}

const samplerAliases: Record<string, SamplerKind> = {
  tube: 'tube_core',
  core: 'tube_core',
  probe: 'tube_core',
  dip: 'dipper',
  bucket: 'bucket_at_pump',
  pump: 'bucket_at_pump',
  spreader: 'bucket_at_spreader',
  fork: 'fork_grab',
  grab: 'fork_grab',
}

/**
 * Reads a list of access point labels ("A, C", "A+B", "1 2"): upper-cased, without repeats.
 * Returns null with a reason when a label is not 1–4 letters or digits.
 */
export function parseAccessPoints(raw: string): { ok: true; value: string[] } | { ok: false; reason: string } {
  const labels = raw.split(/[\s,;+/&]+/).map((s) => s.trim().toUpperCase()).filter(Boolean)
  const bad = labels.find((l) => !/^[A-Z0-9]{1,4}$/.test(l))
  if (bad) return { ok: false, reason: `"${bad}" is not an access point label (1–4 letters or digits, e.g. A or P3)` }
  return { ok: true, value: [...new Set(labels)] }
}

/**
 * The sample id Pitside proposes for a storage, day and access points:
 * `<farm>-<storage>-<YYYYMMDD>[-<points>]`, e.g. `QBF-P1-20261015-A`. Returns null when it would
 * be longer than a code may be (40 characters); give an id of your own then.
 */
export function makeSampleCode(farmCode: string, storageCode: string, date: string, points: readonly string[] = []): string | null {
  const code = [farmCode, storageCode, date.replaceAll('-', ''), points.join('')].filter(Boolean).join('-')
  return codePattern.test(code) ? code : null
}

/** Parses a samples file (sampling events). `today` (YYYY-MM-DD) makes a future date an error. */
export function parseSampleCsv(text: string, options: { today?: string } = {}): ParsedRows<SampleRow> {
  const table = parseCsvTable(text, sampleCsvSpec)
  const problems = [...table.problems]
  if (hasErrors(problems)) return { rows: [], problems }
  const rows: SampleRow[] = []
  table.rows.forEach((cells, i) => {
    const r = makeRowReader(table, cells, table.lines[i]!, problems)
    const row = readSampleRow(r, options.today)
    if (!r.failed) rows.push(row)
  })
  const unique = checkUniqueKeys(rows, (s) => s.sampleCode, (s) => `sample ${s.sampleCode}`, 'sample_id', problems)
  return { rows: unique, problems: byLine(problems) }
}

function readSampleRow(r: RowReader, today: string | undefined): SampleRow {
  const sampledOn = r.date('sampled_on', { required: true })
  if (sampledOn && today && sampledOn > today) r.error('sampled_on', `${sampledOn} is in the future (today is ${today})`)
  if (sampledOn && sampledOn < '1990-01-01') r.error('sampled_on', `${sampledOn} is before 1990; check the date`)
  const accessPoints = optional(r, 'access_points', () => {
    const raw = r.raw('access_points')
    if (raw === '') return null
    const parsed = parseAccessPoints(raw)
    if (!parsed.ok) {
      r.error('access_points', `expected labels such as "A, B", found ${parsed.reason}`)
      return null
    }
    return parsed.value
  })
  return {
    line: r.line,
    farmCode: r.code('farm', { required: true }) ?? '',
    storageCode: r.code('storage', { required: true }) ?? '',
    sampleCode: r.code('sample_id', { required: true }) ?? '',
    sampledOn: sampledOn ?? '',
    agitated: optional(r, 'agitated', () => r.yesNo('agitated')),
    samplerKind: optional(r, 'sampler_kind', () => r.choice('sampler_kind', samplerKinds, { aliases: samplerAliases })),
    cores: optional(r, 'cores', () => r.integer('cores', { min: 1, max: 500 })),
    accessPoints,
    sampledBy: optional(r, 'sampled_by', () => r.text('sampled_by', { maxLength: 200 })),
    notes: optional(r, 'notes', () => r.text('notes')),
  }
}

/**
 * Reads one sampling event given as named values (command-line flags), with the same checks as a
 * file row. Problems name the column; there is no line.
 */
export function parseSampleValues(values: Readonly<Record<string, string | undefined>>, options: { today?: string } = {}): { row: SampleRow | null; problems: Problem[] } {
  const keys = sampleCsvSpec.columns.map((c) => c.key).filter((k) => values[k] !== undefined)
  const index: Record<string, number> = {}
  for (const c of sampleCsvSpec.columns) index[c.key] = keys.indexOf(c.key)
  const table: CsvTable = { rows: [], lines: [], index, headerUnits: {}, delimiter: ',', decimal: '.', problems: [] }
  const problems: Problem[] = []
  const r = makeRowReader(table, keys.map((k) => values[k]!), 0, problems)
  const row = readSampleRow(r, options.today)
  for (const p of problems) delete p.line
  return { row: r.failed ? null : row, problems }
}
