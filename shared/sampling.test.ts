import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { computeRateBand, computeSamplesNeeded, computeSampleStats, studentTQuantile } from './sampling.ts'

describe('studentTQuantile', () => {
  const rows = [
    // NIST/SEMATECH e-Handbook of Statistical Methods, Upper critical values of Student's t, column 0.05
    { df: 1, t: 6.314 }, { df: 2, t: 2.92 }, { df: 3, t: 2.353 }, { df: 4, t: 2.132 }, { df: 5, t: 2.015 },
    { df: 9, t: 1.833 }, { df: 10, t: 1.812 }, { df: 20, t: 1.725 }, { df: 30, t: 1.697 }, { df: 60, t: 1.671 }, { df: 100, t: 1.66 },
  ]
  it.each(rows)('gives t(0.95, $df) = $t (NIST/SEMATECH t table)', ({ df, t }) => {
    expect(studentTQuantile(0.95, df)).toBeCloseTo(t, 3)
  })
  const twoSided95 = [
    // same table, column 0.025
    { df: 1, t: 12.706 }, { df: 4, t: 2.776 }, { df: 10, t: 2.228 }, { df: 29, t: 2.045 },
  ]
  it.each(twoSided95)('gives t(0.975, $df) = $t (NIST/SEMATECH t table)', ({ df, t }) => {
    expect(studentTQuantile(0.975, df)).toBeCloseTo(t, 3)
  })
})

describe('computeSampleStats', () => {
  it('combines five cores into mean, sample sd, cv and a 90 % Student-t interval', () => {
    // Σ(x − 42)² = 16 + 0 + 9 + 1 + 4 = 30; sd = √(30/4); t(0.95, 4) = 2.132 (NIST/SEMATECH)
    const s = computeSampleStats([38, 42, 45, 41, 44])
    expect(s.n).toBe(5)
    expect(s.mean).toBe(42)
    expect(s.sd).toBeCloseTo(Math.sqrt(7.5), 12)
    expect(s.cv).toBeCloseTo(Math.sqrt(7.5) / 42, 12)
    expect(s.interval!.t).toBeCloseTo(2.132, 3)
    expect(s.interval!.halfWidth).toBeCloseTo((2.132 * Math.sqrt(7.5)) / Math.sqrt(5), 2)
    expect([s.min, s.max]).toEqual([38, 45])
  })
  it('gives no spread for a single sample', () => {
    const s = computeSampleStats([40])
    expect(s.sd).toBeNull()
    expect(s.interval).toBeNull()
  })
  it('refuses no values and non-numbers, naming the value', () => {
    expect(() => computeSampleStats([])).toThrow('at least one')
    expect(() => computeSampleStats([1, Number.NaN])).toThrow('values.1')
  })
  it('contains the mean in its interval and widens with the confidence (property)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 1, max: 100, noNaN: true }), { minLength: 2, maxLength: 30 }), (values) => {
        const s90 = computeSampleStats(values, 0.9)
        const s95 = computeSampleStats(values, 0.95)
        expect(s90.interval!.low).toBeLessThanOrEqual(s90.mean)
        expect(s90.interval!.high).toBeGreaterThanOrEqual(s90.mean)
        expect(s95.interval!.halfWidth).toBeGreaterThanOrEqual(s90.interval!.halfWidth)
      }),
    )
  })
})

describe('computeSamplesNeeded', () => {
  it('finds the smallest n with t(n − 1) × cv ÷ √n within the precision', () => {
    // cv 20 %, ±10 % at 90 %: n = 13 gives 1.782 × 0.2 / √13 = 0.0989 (t from NIST/SEMATECH); n = 12 gives 0.1036
    expect(computeSamplesNeeded(0.2, 0.1, 0.9)).toBe(13)
  })
  it('needs more samples for a tighter precision or a wider spread (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 0.05, max: 0.6, noNaN: true }), fc.double({ min: 0.05, max: 0.3, noNaN: true }), (cv, e) => {
        expect(computeSamplesNeeded(cv, e / 2)).toBeGreaterThanOrEqual(computeSamplesNeeded(cv, e))
        expect(computeSamplesNeeded(cv * 2, e)).toBeGreaterThanOrEqual(computeSamplesNeeded(cv, e))
      }),
      { numRuns: 50 },
    )
  })
  it('needs at least two samples even for a uniform storage', () => {
    expect(computeSamplesNeeded(0, 0.1)).toBe(2)
  })
})

describe('computeRateBand', () => {
  it('spans the rates that meet the need if the content is at either end of the interval', () => {
    const s = computeSampleStats([30, 40, 50])
    const b = computeRateBand(5000, s)!
    expect(b.rateLow).toBeCloseTo((5000 * 40) / s.interval!.high, 9)
    expect(b.rateHigh).toBeCloseTo((5000 * 40) / s.interval!.low, 9)
    expect(b.suppliedLowFraction).toBeLessThan(1)
    expect(b.suppliedHighFraction).toBeGreaterThan(1)
  })
  it('leaves the top of the band open when the interval reaches zero', () => {
    const b = computeRateBand(5000, computeSampleStats([1, 40, 90]))!
    expect(b.rateHigh).toBeNull()
  })
})
