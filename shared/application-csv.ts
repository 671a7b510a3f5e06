import { hasErrors, parseCsvTable, type TableSpec } from './csv-table.ts'
import { applicationMethods, checkIncorporation, type ApplicationMethod } from './field-csv.ts'
import { byLine, checkUniqueKeys, makeRowReader, optional, type ParsedRows, type RowReader } from './row-reader.ts'
import { amountUnits, type AmountUnit } from './storage-csv.ts'

/** What was actually spread on one field on one day from one storage. */
export interface ApplicationRow {
  line: number
  farmCode: string
  fieldCode: string
  storageCode: string
  appliedOn: string
  /** Total over the field, in amountUnit (not per acre). */
  amount: number
  amountUnit: AmountUnit
  method: ApplicationMethod | null
  incorporatedWithinHours: number | null
  loads?: number | null
  applicator?: string | null
  notes?: string | null
}

export const applicationCsvSpec: TableSpec = {
  columns: [
    { key: 'farm', aliases: ['farm_code'], required: true },
    { key: 'field', aliases: ['field_code'], required: true },
    { key: 'applied_on', aliases: ['date', 'application_date'], required: true },
    { key: 'storage', aliases: ['storage_code', 'source'], required: true },
    { key: 'amount', aliases: ['total_amount', 'quantity'], required: true },
    { key: 'amount_unit', aliases: ['unit'], required: true },
    { key: 'method', aliases: ['application_method'], required: true },
    { key: 'incorporated_within_hours', aliases: ['incorporation_hours'] },
    { key: 'loads' },
    { key: 'applicator', aliases: ['applied_by', 'operator'] },
    { key: 'notes' },
  ],
}

/**
 * The crop season an application serves: spreading from July 1 of one year through June 30 of
 * the next counts for the next year's crop (fall-applied manure feeds next season's crop; common
 * practice). Takes and returns ISO dates / years.
 */
export function seasonOfApplication(appliedOn: string): number {
  const year = Number(appliedOn.slice(0, 4))
  const month = Number(appliedOn.slice(5, 7))
  return month >= 7 ? year + 1 : year
}

/** The first and last day (inclusive, ISO) of the spreading that serves `season`. */
export function applicationWindow(season: number): { from: string; to: string } {
  return { from: `${season - 1}-07-01`, to: `${season}-06-30` }
}

/** Parses an applications file. `today` (YYYY-MM-DD) makes a future date an error. */
export function parseApplicationCsv(text: string, options: { today?: string } = {}): ParsedRows<ApplicationRow> {
  const table = parseCsvTable(text, applicationCsvSpec)
  const problems = [...table.problems]
  if (hasErrors(problems)) return { rows: [], problems }
  const rows: ApplicationRow[] = []
  table.rows.forEach((cells, i) => {
    const r = makeRowReader(table, cells, table.lines[i]!, problems)
    const row = readApplicationRow(r, options.today)
    if (!r.failed) rows.push(row)
  })
  const unique = checkUniqueKeys(
    rows,
    (a) => [a.farmCode, a.fieldCode, a.appliedOn, a.storageCode].join('\u0000'),
    (a) => `an application to field ${a.fieldCode} of farm ${a.farmCode} on ${a.appliedOn} from storage ${a.storageCode}`,
    'applied_on',
    problems,
  )
  return { rows: unique, problems: byLine(problems) }
}

function readApplicationRow(r: RowReader, today: string | undefined): ApplicationRow {
  const appliedOn = r.date('applied_on', { required: true })
  if (appliedOn && today && appliedOn > today) r.error('applied_on', `${appliedOn} is in the future (today is ${today}); record spreading once it is done`)
  const method = r.choice('method', applicationMethods, {
    required: true,
    aliases: { injection: 'injected', surface: 'broadcast', incorporated: 'broadcast_incorporated', irrigation: 'irrigated' },
  })
  const hours = r.has('incorporated_within_hours') ? r.number('incorporated_within_hours', { min: 0, max: 24 * 30 }) : null
  if (method) checkIncorporation(r, method, hours)
  const amountUnit = r.choice('amount_unit', amountUnits, { required: true, aliases: { gallons: 'gal', tons: 'ton', t: 'ton' } })
  return {
    line: r.line,
    farmCode: r.code('farm', { required: true }) ?? '',
    fieldCode: r.code('field', { required: true }) ?? '',
    storageCode: r.code('storage', { required: true }) ?? '',
    appliedOn: appliedOn ?? '',
    amount: r.number('amount', { required: true, above: 0, hint: 'the total spread on the field' }) ?? 0,
    amountUnit: amountUnit ?? 'gal',
    method,
    incorporatedWithinHours: hours,
    loads: optional(r, 'loads', () => r.number('loads', { above: 0, max: 10_000 })),
    applicator: optional(r, 'applicator', () => r.text('applicator', { maxLength: 200 })),
    notes: optional(r, 'notes', () => r.text('notes')),
  }
}

// Rates above these per-acre amounts are almost always a unit or typing mistake (common practice,
// deliberately generous: heavy liquid applications run ~10,000–15,000 gal/ac, solids ~30–40 t/ac).
export const implausibleRatePerAcre: Record<AmountUnit, number> = { gal: 40_000, ton: 80 }
