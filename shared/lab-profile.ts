import { z } from 'zod'
import type { Problem } from './errors.ts'

/**
 * A column-mapping profile for a lab whose files do not use Pitside's column names: which file
 * header stands for which canonical column, the file's delimiter and decimal mark, lines to skip
 * before the header, and values to assume where the file says nothing (units, basis, lab name).
 * See examples/labs/profile-cobble-run.json.
 */
export interface LabProfile {
  name: string | null
  /** file header (as written, matched forgivingly) → canonical column name */
  columns: Record<string, string>
  delimiter: ',' | ';' | '\t' | null
  decimal: '.' | ',' | null
  /** number of lines before the header row (a lab's letterhead) */
  skipLines: number
  defaults: {
    units: string | null
    basis: string | null
    form: 'liquid' | 'solid' | null
    species: string | null
    lab: string | null
  }
}

/** Canonical lab columns a profile may map to (`moisture_pct` is read as 100 − dry matter). */
export const labProfileTargets = [
  'report_id',
  'sample_id',
  'sampled_on',
  'farm',
  'storage',
  'form',
  'species',
  'basis',
  'units',
  'dry_matter_pct',
  'moisture_pct',
  'total_n',
  'ammonium_n',
  'p2o5',
  'p',
  'k2o',
  'k',
  'lab',
  'sulfur',
  'ph',
  'notes',
] as const

const profileSchema = z.strictObject({
  name: z.string().min(1).optional(),
  columns: z
    .record(z.string().min(1), z.enum(labProfileTargets, { error: `expected one of ${labProfileTargets.join(', ')}` }))
    .optional(),
  delimiter: z.enum([',', ';', '\t']).optional(),
  decimal: z.enum(['.', ',']).optional(),
  skip_lines: z.number().int().min(0).max(100).optional(),
  defaults: z
    .strictObject({
      units: z.string().min(1).optional(),
      basis: z.string().min(1).optional(),
      form: z.enum(['liquid', 'solid']).optional(),
      species: z.string().min(1).optional(),
      lab: z.string().min(1).optional(),
    })
    .optional(),
})

/**
 * Reads a profile from its JSON text. Returns the profile, or problems naming the JSON path of
 * each mistake (`columns.Lab No.: expected one of report_id, …`). Never throws.
 */
export function parseLabProfile(text: string): { profile?: LabProfile; problems: Problem[] } {
  let json: unknown
  try {
    json = JSON.parse(text.replace(/^\ufeff/, ''))
  } catch (error) {
    return { problems: [{ code: 'profile_json', message: `is not valid JSON (${(error as Error).message})` }] }
  }
  const parsed = profileSchema.safeParse(json)
  if (!parsed.success) {
    return {
      problems: parsed.error.issues.map((issue) => ({
        code: 'profile_invalid',
        path: issue.path.map((p) => (typeof p === 'symbol' ? String(p) : p)),
        message: issue.message,
      })),
    }
  }
  const p = parsed.data
  return {
    profile: {
      name: p.name ?? null,
      columns: p.columns ?? {},
      delimiter: p.delimiter ?? null,
      decimal: p.decimal ?? null,
      skipLines: p.skip_lines ?? 0,
      defaults: {
        units: p.defaults?.units ?? null,
        basis: p.defaults?.basis ?? null,
        form: p.defaults?.form ?? null,
        species: p.defaults?.species ?? null,
        lab: p.defaults?.lab ?? null,
      },
    },
    problems: [],
  }
}
