import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { isAppError } from './errors.ts'
import { computeStorageVolume, computeVolumeToHeight, type StorageGeometry } from './storage.ts'

describe('computeStorageVolume', () => {
  it('gives L × W × H for a rectangular pit and gallons at 7.48 per ft³ (Univ. Missouri)', () => {
    const v = computeStorageVolume({ geometry: { shape: 'rectangular', length: 100, width: 40, depth: 8 }, units: 'us', freeboard: 1 })
    expect(v.total.ft3).toBe(32000)
    expect(v.total.gal).toBeCloseTo(32000 * 7.48, -2)
    expect(v.usable.ft3).toBe(28000)
  })

  it('gives π D²/4 × H for a circular tank', () => {
    // 16 ft diameter × 2 ft: 128 π ft³ ≈ 402 ft³ ≈ 3,008 gal (7.4805 gal/ft³)
    const v = computeStorageVolume({ geometry: { shape: 'circular', diameter: 16, depth: 2 }, units: 'us' })
    expect(v.total.ft3).toBeCloseTo(128 * Math.PI, 9)
    expect(v.total.gal).toBeCloseTo(128 * Math.PI * 7.4805, 0)
  })

  it('uses the prismoidal formula for a sloped basin (Alberta Agriculture dugout formula)', () => {
    // V = d/6 (At + Ab + 4 Am), Ab = (L − 2·ES·d)(W − 2·SS·d), Am = (L − ES·d)(W − SS·d)
    const L = 200, W = 120, d = 12, s = 3
    const At = L * W
    const Ab = (L - 2 * s * d) * (W - 2 * s * d)
    const Am = (L - s * d) * (W - s * d)
    const v = computeStorageVolume({ geometry: { shape: 'basin', topLength: L, topWidth: W, depth: d, sideSlope: s }, units: 'us' })
    expect(v.total.ft3).toBeCloseTo((d / 6) * (At + Ab + 4 * Am), 6)
  })

  it('measures usable volume below the freeboard and contents at the manure depth', () => {
    const v = computeStorageVolume({ geometry: { shape: 'basin', topLength: 200, topWidth: 120, depth: 12, sideSlope: 3 }, units: 'us', freeboard: 2, manureDepth: 6 })
    expect(v.usable.ft3).toBeLessThan(v.total.ft3)
    expect(v.contents!.ft3).toBeLessThan(v.usable.ft3)
    expect(v.warnings).toEqual([])
  })

  it('warns when manure stands above the freeboard line', () => {
    const v = computeStorageVolume({ geometry: { shape: 'rectangular', length: 10, width: 10, depth: 10 }, units: 'us', freeboard: 1, manureDepth: 9.5 })
    expect(v.warnings[0]).toContain('over its usable capacity')
  })

  it('takes metres and gives m³ and litres in metric', () => {
    const v = computeStorageVolume({ geometry: { shape: 'rectangular', length: 10, width: 5, depth: 2 }, units: 'metric' })
    expect(v.total.m3).toBeCloseTo(100, 9)
    expect(v.total.litres).toBeCloseTo(100000, 6)
  })

  it('gives tons from a bulk density for solids', () => {
    const v = computeStorageVolume({ geometry: { shape: 'rectangular', length: 20, width: 10, depth: 5 }, units: 'us', bulkDensity: 50 })
    expect(v.total.mass).toBe(25) // 1000 ft³ × 50 lb/ft³ ÷ 2000
    expect(v.massUnit).toBe('ton')
  })

  const refused = [
    { input: { geometry: { shape: 'rectangular', length: 0, width: 10, depth: 5 }, units: 'us' }, says: 'length' },
    { input: { geometry: { shape: 'basin', topLength: 40, topWidth: 30, depth: 10, sideSlope: 3 }, units: 'us' }, says: 'close the bottom' },
    { input: { geometry: { shape: 'circular', diameter: 10, depth: 5 }, units: 'us', freeboard: 5 }, says: 'freeboard' },
    { input: { geometry: { shape: 'circular', diameter: 10, depth: 5 }, units: 'us', manureDepth: 6 }, says: 'manure_depth' },
  ] as const
  it.each(refused)('refuses impossible geometry naming $says', ({ input, says }) => {
    try {
      computeStorageVolume(input as never)
      expect.unreachable()
    } catch (error) {
      expect(isAppError(error) && error.code).toBe('invalid_input')
      expect((error as Error).message).toContain(says)
    }
  })

  it('agrees with numerical integration of the plan area for any straight-sided basin (property)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 60, max: 400, noNaN: true }),
        fc.double({ min: 60, max: 300, noNaN: true }),
        fc.double({ min: 2, max: 15, noNaN: true }),
        fc.double({ min: 0, max: 1.9, noNaN: true }),
        (L, W, d, s) => {
          const g: StorageGeometry = { shape: 'basin', topLength: L, topWidth: W, depth: d, sideSlope: s }
          const steps = 2000
          let sum = 0
          for (let i = 0; i < steps; i++) {
            const h = ((i + 0.5) / steps) * d
            sum += (L - 2 * s * d + 2 * s * h) * (W - 2 * s * d + 2 * s * h) * (d / steps)
          }
          expect(computeVolumeToHeight(g, d)).toBeCloseTo(sum, 0)
        },
      ),
      { numRuns: 100 },
    )
  })
})
