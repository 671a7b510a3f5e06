import { describe, expect, it } from 'vitest'
import { computeFarmBalance } from './farm-balance.ts'

describe('computeFarmBalance', () => {
  const input = {
    form: 'liquid' as const,
    units: 'us' as const,
    storages: [{ name: 'north pit', amount: 600000 }, { name: 'south pit', amount: 200000 }],
    planned: [{ name: 'F1', area: 40, rate: 5000 }, { name: 'F2', area: 60, rate: 7500 }],
    areaAvailable: 120,
  }
  it('compares manure stored with manure planned', () => {
    const b = computeFarmBalance(input)
    expect(b.stored).toBe(800000)
    expect(b.planned).toBe(650000)
    expect(b.surplus).toBe(150000)
    expect(b.warnings).toContain('more manure is in storage than the plans use: plan more fields or carry it over')
  })
  it('gives the area needed at the area-weighted planned rate against the area available', () => {
    const b = computeFarmBalance(input)
    expect(b.typicalRate).toBe(6500)
    expect(b.areaNeeded).toBeCloseTo(800000 / 6500, 9)
    expect(b.areaShort).toBeCloseTo(800000 / 6500 - 120, 9)
  })
  it('values the available nutrients at fertilizer prices, per 1000 gal and for the storage', () => {
    const b = computeFarmBalance({ ...input, availablePerUnit: { n: 30, p2o5: 20, k2o: 25 }, prices: { n: 0.6, p2o5: 0.7, k2o: 0.45 } })
    expect(b.value!.perUnit.total).toBeCloseTo(18 + 14 + 11.25, 9)
    expect(b.value!.stored).toBeCloseTo(43.25 * 800, 6)
  })
  it('measures a storage given by geometry and manure depth', () => {
    const b = computeFarmBalance({
      ...input,
      storages: [{ name: 'tank', geometry: { geometry: { shape: 'rectangular', length: 100, width: 40, depth: 10 }, units: 'us', manureDepth: 5 } }],
    })
    expect(b.stored).toBeCloseTo(20000 * 7.4805, 0) // 100 × 40 × 5 ft³ at 7.4805 gal/ft³
  })
  it('refuses a negative amount naming the storage', () => {
    expect(() => computeFarmBalance({ ...input, storages: [{ name: 'x', amount: -1 }] })).toThrow('storages.0.amount')
  })
})
