import { hasErrors, parseCsvTable, type TableSpec } from './csv-table.ts'
import type { Problem } from './errors.ts'
import { byLine, checkUniqueKeys, makeRowReader, optional, type ParsedRows } from './row-reader.ts'

/**
 * The farms file: one row per farm, keyed by its code. An optional column that the file leaves out
 * keeps what is stored (undefined here); a column that is present but blank clears it (null).
 */
export interface FarmRow {
  line: number
  code: string
  name: string
  operatorName?: string | null
  contactEmail?: string | null
  contactPhone?: string | null
  address?: string | null
  region?: string | null
  notes?: string | null
}

export const farmCsvSpec: TableSpec = {
  columns: [
    { key: 'farm', aliases: ['farm_code', 'code'], required: true },
    { key: 'name', aliases: ['farm_name'], required: true },
    { key: 'operator_name', aliases: ['operator', 'owner'] },
    { key: 'contact_email', aliases: ['email'] },
    { key: 'contact_phone', aliases: ['phone'] },
    { key: 'address' },
    { key: 'region', aliases: ['county'] },
    { key: 'notes' },
  ],
}

export const emailPattern = /^[^\s@]+@[^\s@]+\.[^\s@]+$/

/** Parses a farms file. Returns the valid rows and every problem with its line and column. */
export function parseFarmCsv(text: string): ParsedRows<FarmRow> {
  const table = parseCsvTable(text, farmCsvSpec)
  const problems = [...table.problems]
  if (hasErrors(problems)) return { rows: [], problems }
  const rows: FarmRow[] = []
  table.rows.forEach((cells, i) => {
    const r = makeRowReader(table, cells, table.lines[i]!, problems)
    const code = r.code('farm', { required: true })
    const name = r.text('name', { required: true, maxLength: 200 })
    const contactEmail = optional(r, 'contact_email', () => r.text('contact_email', { maxLength: 320 }))
    if (contactEmail && !emailPattern.test(contactEmail)) {
      r.error('contact_email', `expected an address like name@example.org, found "${contactEmail}"`)
    }
    const row: FarmRow = {
      line: r.line,
      code: code ?? '',
      name: name ?? '',
      operatorName: optional(r, 'operator_name', () => r.text('operator_name', { maxLength: 200 })),
      contactEmail,
      contactPhone: optional(r, 'contact_phone', () => r.text('contact_phone', { maxLength: 60 })),
      address: optional(r, 'address', () => r.text('address', { maxLength: 500 })),
      region: optional(r, 'region', () => r.text('region', { maxLength: 200 })),
      notes: optional(r, 'notes', () => r.text('notes')),
    }
    if (!r.failed) rows.push(row)
  })
  const unique = checkUniqueKeys(rows, (f) => f.code, (f) => `farm ${f.code}`, 'farm', problems)
  return { rows: unique, problems: byLine(problems) }
}
