import type { LabStorage } from './lab-results.ts'
import { speciesValues, type Species } from './reference-sets/reference-values.ts'
import { defaultReferenceSetName, findBookValues, findReferenceSet, type BookValues } from './reference-sets/registry.ts'

/**
 * The book values that stand for a storage in the lab plausibility checks: those of its species,
 * form and storage kind (a lagoon never takes rows written for pits) in the named reference set (default set when omitted), looked up once per storage.
 * Throws AppError('not_found') for an unknown set; the returned function never throws and returns
 * null where the set has none.
 */
export function bookValuesForStorage(referenceSet?: string): (storage: LabStorage) => BookValues | null {
  const set = findReferenceSet(referenceSet ?? defaultReferenceSetName)
  const species = new Set<string>(speciesValues)
  const cache = new Map<number, BookValues | null>()
  return (storage) => {
    let found = cache.get(storage.id)
    if (found === undefined) {
      found = species.has(storage.species) ? findBookValues(storage.species as Species, storage.form, set, storage.kind) : null
      cache.set(storage.id, found)
    }
    return found
  }
}
