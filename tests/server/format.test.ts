import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { fmt } from '../../src/components/format.ts'

// The viewer's figures run in the browser; checked here in Node against Intl.NumberFormat, which
// the viewer used to call for every figure (the same en-US pattern in every engine with ICU).
const intl = (x: number, digits: number) => new Intl.NumberFormat('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits }).format(x)

describe('fmt', () => {
  it('writes figures exactly as Intl.NumberFormat en-US does, for any finite number and 0 to 6 decimals', () => {
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), fc.integer({ min: 0, max: 6 }), (x, d) => {
        expect(fmt(x, d)).toBe(intl(x, d))
      }),
      { numRuns: 5000 },
    )
    // figures of the size plans show, and halves where rounding decides
    fc.assert(
      fc.property(fc.integer({ min: -10_000_000_00, max: 10_000_000_00 }), fc.integer({ min: 0, max: 3 }), fc.integer({ min: 0, max: 3 }), (k, scale, d) => {
        const x = k / 10 ** scale + (k % 2 ? 0.5 / 10 ** d : 0)
        expect(fmt(x, d)).toBe(intl(x, d))
      }),
      { numRuns: 5000 },
    )
  })

  it('groups thousands, keeps the sign of a negative that rounds to zero, and gives a dash for a missing figure', () => {
    const cases: [unknown, number, string][] = [
      [0, 0, '0'],
      [999.5, 0, '1,000'],
      [1234567.891, 1, '1,234,567.9'],
      [-1234.5, 0, '-1,235'],
      [-0.2, 0, '-0'],
      [-0, 1, '-0.0'],
      [0.05, 1, '0.1'],
      [1.005, 2, '1.01'],
      [0.15, 1, '0.2'],
      [9.96, 1, '10.0'],
      [99999.5, 0, '100,000'],
      [1e15, 0, '1,000,000,000,000,000'],
      [null, 0, '—'],
      [undefined, 1, '—'],
      [Number.NaN, 0, '—'],
      ['12', 0, '—'],
    ]
    for (const [x, d, expected] of cases) expect(fmt(x, d), String(x)).toBe(expected)
  })
})
