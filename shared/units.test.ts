import { elementsObject } from 'chemical-elements'
import { createRequire } from 'node:module'
import { describe, expect, it } from 'vitest'
import {
  galPerAcreToLPerHa,
  haPerAcre,
  k2oPerK,
  kgPerHaPerLbPerAcre,
  kgPerM3PerLbPer1000Gal,
  kgPerShortTon,
  lbPer1000GalPerMgPerL,
  lPerHaPerGalPerAcre,
  p2o5PerP,
  tPerHaPerTonPerAcre,
  unitDefinitions,
  usGalPerAcreInch,
  usGalPerFt3,
} from './units.ts'

// js-quantities ships no type declarations; a narrow signature is enough for these checks.
const Qty = createRequire(import.meta.url)('js-quantities') as (q: string) => {
  to(unit: string): { scalar: number }
}
const via = (from: string, to: string) => Qty(from).to(to).scalar

describe('unit conversion factors', () => {
  const cases = [
    // each factor checked against the npm units library js-quantities and against the published value
    { name: 'm² per acre', ours: haPerAcre * 10000, outside: via('1 acre', 'm^2'), published: 4046.86, digits: 2, source: 'js-quantities (international acre); NIST Handbook 44 App. C' },
    { name: 'lb/ac → kg/ha', ours: kgPerHaPerLbPerAcre, outside: via('1 lb/acre', 'kg/hectare'), published: 1.12085, digits: 5, source: 'js-quantities; sources.md (exact unit definitions)' },
    { name: 'gal/ac → L/ha', ours: lPerHaPerGalPerAcre, outside: via('1 gal/acre', 'l/hectare'), published: 9.35396, digits: 5, source: 'js-quantities; sources.md (exact unit definitions)' },
    { name: 'ton/ac → t/ha', ours: tPerHaPerTonPerAcre, outside: via('1 ton/acre', 'tonne/hectare'), published: 2.2417, digits: 4, source: 'js-quantities; sources.md (exact unit definitions)' },
    { name: 'lb/1000 gal → kg/m³', ours: kgPerM3PerLbPer1000Gal, outside: via('1 lb/gal', 'kg/m^3') / 1000, published: 0.119826, digits: 6, source: 'js-quantities; sources.md (exact unit definitions)' },
    { name: 'gal per ft³', ours: usGalPerFt3, outside: via('1 ft^3', 'gal'), published: 7.48, digits: 2, source: 'js-quantities; Univ. Missouri, Determining the Volume of a Circular Tank (2003): 7.48 gal/ft³' },
    { name: 'kg per short ton', ours: kgPerShortTon, outside: via('1 ton', 'kg'), published: 907.18, digits: 2, source: 'js-quantities; NIST Handbook 44 App. C' },
    { name: 'mg/L → lb/1000 gal', ours: lbPer1000GalPerMgPerL, outside: via('1 mg/l', 'lb/gal') * 1000, published: 0.0083454, digits: 7, source: 'js-quantities; sources.md (8.3454 lb water per US gal)' },
    { name: 'gal per acre-inch', ours: usGalPerAcreInch, outside: via('1 acre*in', 'gal'), published: 27154, digits: 0, source: 'js-quantities; Ohio livestock assurance program: 27,154 gal per acre-inch' },
  ]
  it.each(cases)('$name agrees with js-quantities and the published value ($source)', ({ ours, outside, published, digits }) => {
    // js-quantities stores the gallon as 3.7854118 L (rounded), so agree to one part in a million
    expect(Math.abs(ours - outside) / outside).toBeLessThan(1e-6)
    expect(ours).toBeCloseTo(published, digits)
  })

  it('converts gal/ac to L/ha with the same factor the function applies', () => {
    expect(galPerAcreToLPerHa(1000)).toBeCloseTo(9353.96, 2)
  })
})

describe('oxide factors from atomic masses', () => {
  const P = elementsObject.P!.mass!
  const K = elementsObject.K!.mass!
  const O = elementsObject.O!.mass!
  it('P → P2O5 equals M(P2O5)/2M(P) from chemical-elements and the published 2.291 (Virginia Tech SPES-201NP, Table 1)', () => {
    expect(p2o5PerP).toBeCloseTo((2 * P + 5 * O) / (2 * P), 4)
    expect(p2o5PerP).toBeCloseTo(2.291, 3)
  })
  it('K → K2O equals M(K2O)/2M(K) from chemical-elements and rounds to 1.2 (LPELC, Common Manure Test Results Conversions)', () => {
    expect(k2oPerK).toBeCloseTo((2 * K + O) / (2 * K), 4)
    expect(k2oPerK).toBeCloseTo(1.2, 1)
  })
  it('uses atomic masses that match chemical-elements to four decimals', () => {
    expect(unitDefinitions.atomicMassP.value).toBeCloseTo(P, 4)
    expect(unitDefinitions.atomicMassK.value).toBeCloseTo(K, 4)
    expect(unitDefinitions.atomicMassO.value).toBeCloseTo(O, 3)
  })
})
