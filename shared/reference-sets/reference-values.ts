/**
 * The words of the reference-set format (shared/reference-sets/reference-set.ts), without its
 * schema: species, methods, crops and storage kinds.
 */

export const speciesValues = ['swine', 'dairy', 'beef', 'poultry', 'other'] as const
export const methodValues = ['injected', 'broadcast', 'broadcast_incorporated', 'irrigated'] as const
export const conditionsValues = ['average', 'cool_wet', 'cool_dry', 'warm_wet', 'warm_dry'] as const
export const cropNameValues = ['corn_grain', 'corn_silage', 'soybean', 'wheat', 'alfalfa', 'grass_hay'] as const
export const previousCropValues = [
  'none',
  'corn',
  'soybean',
  'alfalfa',
  'alfalfa_second_year',
  'wheat',
  'grass_hay',
  'other',
] as const
export const soilTestMethodValues = ['bray1', 'olsen', 'mehlich3'] as const
/** Kinds of manure storage a book-value row can stand for (the storages file uses the same words). */
export const storageKindValues = ['deep_pit', 'earthen_basin', 'lagoon', 'tank', 'stack', 'other'] as const

export type Species = (typeof speciesValues)[number]
export type ApplicationMethod = (typeof methodValues)[number]
export type Conditions = (typeof conditionsValues)[number]
export type CropName = (typeof cropNameValues)[number]
export type PreviousCrop = (typeof previousCropValues)[number]
export type SoilTestMethod = (typeof soilTestMethodValues)[number]
export type StorageKindName = (typeof storageKindValues)[number]
