import { AppError } from '../errors.ts'
import { albertaRetentionRelease } from './alberta-retention-release.ts'
import type { BookValueRow, ReferenceSet, ReferenceSource, Species, StorageKindName } from './reference-set.ts'
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
  /** The storage kinds the row stands for; null for any kind. */
  storageKinds: StorageKindName[] | null
  source: ReferenceSource
  referenceSet: string
  note?: string
}

function toBookValues(row: BookValueRow, set: ReferenceSet): BookValues {
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
    storageKinds: row.storage_kinds ?? null,
    source,
    referenceSet: set.name,
    ...(row.note ? { note: row.note } : {}),
  }
}

/**
 * Book values for a species and form from a reference set (default set when omitted), for
 * plausibility warnings on lab results and for plans made before a lab result exists.
 * Without `kind` the set's first row for that species and form; with `kind` (the storage kind,
 * e.g. "lagoon") the first row that stands for that kind, else the first row that names no kinds.
 * Returns null when the set has none (a lagoon gets none from rows written for pits). Never throws.
 */
export function findBookValues(
  species: Species,
  form: 'liquid' | 'solid',
  set: ReferenceSet = findReferenceSet(defaultReferenceSetName),
  kind?: string,
): BookValues | null {
  const rows = set.book_values.filter((b) => b.species === species && b.form === form)
  const row =
    kind === undefined
      ? rows[0]
      : (rows.find((b) => b.storage_kinds?.includes(kind as StorageKindName)) ?? rows.find((b) => b.storage_kinds === undefined))
  return row ? toBookValues(row, set) : null
}

/** Every book-value row of a set (default set when omitted), optionally for one species and form, in set order. Never throws. */
export function listBookValues(
  filter: { species?: Species; form?: 'liquid' | 'solid' } = {},
  set: ReferenceSet = findReferenceSet(defaultReferenceSetName),
): BookValues[] {
  return set.book_values
    .filter((b) => (filter.species === undefined || b.species === filter.species) && (filter.form === undefined || b.form === filter.form))
    .map((b) => toBookValues(b, set))
}
