import { listFarms, prepareFarmImport } from '../../shared/db/farms.ts'
import { findOrganizationByCode, resolveOrganization } from '../../shared/db/users.ts'
import { AppError } from '../../shared/errors.ts'
import { parseFarmCsv } from '../../shared/farm-csv.ts'
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

export interface FarmImportOptions extends ImportOptions {
  /** Organization code; defaults to the only organization in the database. */
  org?: string
  /** Creates the organization `org` with this name when it does not exist (after the files check out). */
  orgName?: string
}

/** The core of `pitside farms import`, callable in-process. */
export async function importFarms(deps: ImportDeps, files: readonly ImportSource[], options: FarmImportOptions = {}): Promise<ImportReport> {
  const run = (organization: { id: number; code: string }, o: ImportOptions) =>
    runRecordImport(deps, 'farms', files, o, async (text) => {
      const parsed = parseFarmCsv(text)
      const prepared = await prepareFarmImport(deps.db, parsed.rows, organization)
      return { ...prepared, problems: [...parsed.problems, ...prepared.problems] }
    })
  if (options.org && options.orgName && !(await findOrganizationByCode(deps.db, options.org))) {
    // checked against the organization-to-be first, so that a refused file creates nothing
    const planned = { id: -1, code: options.org }
    const check = await run(planned, { ...options, dryRun: true })
    if (options.dryRun) return check
    return run(await resolveOrganization(deps.db, { code: options.org, createName: options.orgName }), options)
  }
  if (options.orgName && !options.org) throw new AppError('usage', '--org-name needs --org <code> for the new organization')
  return run(await resolveOrganization(deps.db, { code: options.org }), options)
}

export const runImport: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const report = await withDatabase(g.db, (deps) =>
    importFarms(deps, args[0] as string[], { dryRun: options.dryRun, org: options.org, orgName: options.orgName }),
  )
  printImportReport(g, report)
}

export const runList: ActionModule['run'] = async ({ options, globals: g }) => {
  const farms = await withDatabase(g.db, ({ db }) => listFarms(db, { organizationCode: options.org }))
  if (g.json) {
    return printJson({
      farms: farms.map((f) => ({
        farm: f.code,
        name: f.name,
        organization: f.organizationCode,
        operator_name: f.operatorName,
        contact_email: f.contactEmail,
        contact_phone: f.contactPhone,
        address: f.address,
        region: f.region,
        notes: f.notes,
        storages: f.storages,
        fields: f.fields,
        samples: f.samples,
      })),
    })
  }
  if (!farms.length) return note(g, 'no farms yet; add them with `pitside farms import farms.csv`')
  printTable(farms, [
    { header: 'farm', value: (f) => f.code },
    { header: 'name', value: (f) => f.name },
    { header: 'operator', value: (f) => f.operatorName },
    { header: 'region', value: (f) => f.region },
    { header: 'storages', value: (f) => f.storages, align: 'right' },
    { header: 'fields', value: (f) => f.fields, align: 'right' },
    { header: 'samples', value: (f) => f.samples, align: 'right' },
  ])
}
