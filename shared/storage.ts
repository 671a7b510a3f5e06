import { AppError } from './errors.ts'
import { ft3ToM3, mToFt, unitDefinitions, usGalPerFt3 } from './units.ts'

/**
 * Storage geometry. Lengths in ft ("us") or m ("metric").
 * - rectangular: length × width × depth
 * - circular: π × diameter² / 4 × depth
 * - basin: earthen basin measured at the top, with side and end slopes given as horizontal run
 *   per unit of vertical rise (3 for 3:1); volume by the prismoidal formula
 *   V = d/6 × (A_top + 4 A_mid + A_bottom), exact for straight slopes (Alberta Agriculture,
 *   dugout volume; Univ. of Maryland Facts 176).
 */
export type StorageGeometry =
  | { shape: 'rectangular'; length: number; width: number; depth: number }
  | { shape: 'circular'; diameter: number; depth: number }
  | { shape: 'basin'; topLength: number; topWidth: number; depth: number; sideSlope: number; endSlope?: number }

export interface StorageInput {
  geometry: StorageGeometry
  units: 'us' | 'metric'
  /** Depth kept empty at the top (ft or m); capacity is measured below it. */
  freeboard?: number
  /** Measured depth of manure from the bottom (ft or m), for the amount now in storage. */
  manureDepth?: number
  /** Bulk density for solids, lb/ft³ (us) or kg/m³ (metric); gives tons (t). */
  bulkDensity?: number
}

export interface StorageAmount {
  ft3: number
  m3: number
  /** US gallons. */
  gal: number
  litres: number
  /** Short tons (us) or tonnes (metric) when a bulk density was given. */
  mass: number | null
}

export interface StorageVolume {
  /** To the top of the structure. */
  total: StorageAmount
  /** Below the freeboard: what the storage may hold. */
  usable: StorageAmount
  /** At the measured manure depth, if given. */
  contents: StorageAmount | null
  massUnit: 'ton' | 't' | null
  warnings: string[]
}

/** Plan area (ft²) of the storage at height h above the bottom. */
function areaAt(g: StorageGeometry, h: number): number {
  switch (g.shape) {
    case 'rectangular':
      return g.length * g.width
    case 'circular':
      return (Math.PI * g.diameter * g.diameter) / 4
    case 'basin': {
      const end = g.endSlope ?? g.sideSlope
      const bottomL = g.topLength - 2 * end * g.depth
      const bottomW = g.topWidth - 2 * g.sideSlope * g.depth
      return (bottomL + 2 * end * h) * (bottomW + 2 * g.sideSlope * h)
    }
  }
}

/**
 * Volume (ft³, any consistent length unit cubed) from the bottom up to height h: exact for
 * prisms and cylinders, prismoidal formula V = h/6 (A_0 + 4 A_h/2 + A_h) for basins.
 */
export function computeVolumeToHeight(g: StorageGeometry, h: number): number {
  if (g.shape !== 'basin') return areaAt(g, 0) * h
  return (h / 6) * (areaAt(g, 0) + 4 * areaAt(g, h / 2) + areaAt(g, h))
}

/**
 * Capacity of a storage in ft³, m³, US gallons and litres (and tons with a bulk density): the
 * total, the usable volume below the freeboard and, with a measured depth, what it holds now.
 * gal = ft³ × 7.4805 (231 in³ per gal; Univ. Missouri uses 7.48). Throws AppError('invalid_input')
 * for impossible geometry (non-positive sizes, slopes that close the bottom, freeboard not
 * smaller than the depth, manure deeper than the storage).
 */
export function computeStorageVolume(input: StorageInput): StorageVolume {
  const metric = input.units === 'metric'
  const toFt = (x: number) => (metric ? mToFt(x) : x)
  const g0 = input.geometry
  const dims: [string, number][] =
    g0.shape === 'rectangular'
      ? [['length', g0.length], ['width', g0.width], ['depth', g0.depth]]
      : g0.shape === 'circular'
        ? [['diameter', g0.diameter], ['depth', g0.depth]]
        : [['top_length', g0.topLength], ['top_width', g0.topWidth], ['depth', g0.depth]]
  for (const [name, v] of dims) {
    if (!(Number.isFinite(v) && v > 0)) throw new AppError('invalid_input', `${name}: expected a size above 0, found ${v}`)
  }
  const g: StorageGeometry =
    g0.shape === 'rectangular'
      ? { shape: 'rectangular', length: toFt(g0.length), width: toFt(g0.width), depth: toFt(g0.depth) }
      : g0.shape === 'circular'
        ? { shape: 'circular', diameter: toFt(g0.diameter), depth: toFt(g0.depth) }
        : {
            shape: 'basin',
            topLength: toFt(g0.topLength),
            topWidth: toFt(g0.topWidth),
            depth: toFt(g0.depth),
            sideSlope: g0.sideSlope,
            ...(g0.endSlope !== undefined && { endSlope: g0.endSlope }),
          }
  if (g.shape === 'basin') {
    const end = g.endSlope ?? g.sideSlope
    if (g.sideSlope < 0 || end < 0) throw new AppError('invalid_input', 'side_slope: expected a slope of 0 or more (horizontal per vertical)')
    if (g.topLength - 2 * end * g.depth <= 0 || g.topWidth - 2 * g.sideSlope * g.depth <= 0) {
      throw new AppError('invalid_input', `side_slope: slopes of ${g.sideSlope}:1 over a depth of ${g0.depth} close the bottom of the basin; check the top size, depth and slopes`)
    }
  }
  const freeboard = toFt(input.freeboard ?? 0)
  if (freeboard < 0 || freeboard >= g.depth) {
    throw new AppError('invalid_input', `freeboard: expected at least 0 and less than the depth ${g0.depth}, found ${input.freeboard}`)
  }
  const warnings: string[] = []
  let contentsDepth: number | null = null
  if (input.manureDepth !== undefined) {
    const d = toFt(input.manureDepth)
    if (d < 0 || d > g.depth) throw new AppError('invalid_input', `manure_depth: expected 0 to ${g0.depth}, found ${input.manureDepth}`)
    if (d > g.depth - freeboard) warnings.push('the manure is above the freeboard line: the storage is over its usable capacity; plan an application or transfer')
    contentsDepth = d
  }

  const amount = (ft3: number): StorageAmount => {
    const m3 = ft3ToM3(ft3)
    let mass: number | null = null
    if (input.bulkDensity !== undefined) {
      mass = metric ? (m3 * input.bulkDensity) / 1000 : (ft3 * input.bulkDensity) / unitDefinitions.lbPerShortTon.value
    }
    return { ft3, m3, gal: ft3 * usGalPerFt3, litres: m3 * 1000, mass }
  }
  return {
    total: amount(computeVolumeToHeight(g, g.depth)),
    usable: amount(computeVolumeToHeight(g, g.depth - freeboard)),
    contents: contentsDepth === null ? null : amount(computeVolumeToHeight(g, contentsDepth)),
    massUnit: input.bulkDensity === undefined ? null : metric ? 't' : 'ton',
    warnings,
  }
}

