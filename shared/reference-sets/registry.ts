import { AppError } from '../errors.ts'
import { albertaRetentionRelease } from './alberta-retention-release.ts'
import type { ReferenceSet, ReferenceSource, Species } from './reference-set.ts'
import { umnPctTotalN } from './umn-pct-total-n.ts'

const builtIn: readonly ReferenceSet[] = [albertaRetentionRelease, umnPctTotalN]

/** The set used when a case or plan names none. */
export const defaultReferenceSetName = albertaRetentionRelease.name

/** The built-in reference sets, default first. Never throws. */
export function listReferenceSets(): readonly ReferenceSet[] {
  return builtIn
}

/**
 * The built-in set with this name (or `extra`, e.g. an advisor's own set loaded from JSON).
 * Throws AppError('not_found') naming the known sets.
 */
export function findReferenceSet(name: string, extra: readonly ReferenceSet[] = []): ReferenceSet {
  const all = [...extra, ...builtIn]
  const found = all.find((s) => s.name === name)
  if (!found) {
    throw new AppError(
      'not_found',
      `reference set "${name}" not found; known sets: ${all.map((s) => s.name).join(', ')}`,
    )
  }
  return found
}

/** A typical value with the plausible range around it, in the book value's unit. */
export interface BookRange {
  typical: number
  low: number
  high: number
}

/** Book values of manure content: lb per 1000 US gal (liquid) or per short ton (solid), as-is. */
export interface BookValues {
  species: Species
  form: 'liquid' | 'solid'
  storage: string
  per: '1000gal' | 'ton'
  totalN: BookRange
  ammoniumN: BookRange | null
  p2o5: BookRange
  k2o: BookRange
  dryMatterPct: BookRange | null
  source: ReferenceSource
  referenceSet: string
  note?: string
}

/**
 * Book values for a species and form from a reference set (default set when omitted), for
 * plausibility warnings on lab results and for plans made before a lab result exists.
 * Returns null when the set has no book values for that species and form. Never throws.
 */
export function findBookValues(
  species: Species,
  form: 'liquid' | 'solid',
  set: ReferenceSet = findReferenceSet(defaultReferenceSetName),
): BookValues | null {
  const row = set.book_values.find((b) => b.species === species && b.form === form)
  if (!row) return null
  const source = set.sources.find((s) => s.id === row.source)!
  return {
    species: row.species,
    form: row.form,
    storage: row.storage,
    per: row.form === 'liquid' ? '1000gal' : 'ton',
    totalN: row.total_n,
    ammoniumN: row.ammonium_n,
    p2o5: row.p2o5,
    k2o: row.k2o,
    dryMatterPct: row.dry_matter_pct,
    source,
    referenceSet: set.name,
    ...(row.note ? { note: row.note } : {}),
  }
}
