/**
 * Unit definitions and conversion factors used by every computation in Pitside.
 *
 * Every factor here comes from an exact unit definition or from standard atomic masses; each
 * names its source. Formulas elsewhere import these constants and never write a factor inline.
 */

/** Exact unit definitions and atomic masses, each with its source. */
export const unitDefinitions = {
  /** kg per avoirdupois pound. Exact: International Yard and Pound Agreement (1959). */
  kgPerLb: { value: 0.45359237, source: 'International Yard and Pound Agreement, 1959 (exact)' },
  /** m per foot. Exact: International Yard and Pound Agreement (1959). */
  mPerFt: { value: 0.3048, source: 'International Yard and Pound Agreement, 1959 (exact)' },
  /** litres per US liquid gallon (231 in³). Exact: NIST Handbook 44, Appendix C. */
  litresPerUsGal: { value: 3.785411784, source: 'NIST Handbook 44, Appendix C (231 in³, exact)' },
  /** ft² per international acre (1/640 mi²). Exact: NIST Handbook 44, Appendix C. */
  ft2PerAcre: { value: 43560, source: 'NIST Handbook 44, Appendix C (exact)' },
  /** lb per short ton. Exact by definition. */
  lbPerShortTon: { value: 2000, source: 'NIST Handbook 44, Appendix C (exact)' },
  /** ft per statute mile. Exact: NIST Handbook 44, Appendix C. */
  ftPerMile: { value: 5280, source: 'NIST Handbook 44, Appendix C (exact)' },
  /** m² per hectare. Exact by definition (SI). */
  m2PerHa: { value: 10000, source: 'SI Brochure, 9th ed., Table 8 (exact)' },
  /** in³ per US gallon. Exact: NIST Handbook 44, Appendix C. */
  in3PerUsGal: { value: 231, source: 'NIST Handbook 44, Appendix C (exact)' },
  /** Standard atomic weights (conventional values). */
  atomicMassP: { value: 30.973762, source: 'IUPAC standard atomic weights (2021); npm chemical-elements' },
  atomicMassK: { value: 39.0983, source: 'IUPAC standard atomic weights (2021); npm chemical-elements' },
  atomicMassO: { value: 15.999, source: 'IUPAC standard atomic weights (2021, conventional); npm chemical-elements' },
  /**
   * Weight of water-like liquid manure, lb per US gallon; used when a lab reports liquid manure
   * by mass (%, ppm, lb/ton) and no density is given. Overridable per analysis.
   */
  defaultLiquidDensityLbPerGal: {
    value: 8.34,
    source: 'LPELC (Livestock and Poultry Environmental Learning Community), Common Manure Test Results Conversions',
  },
} as const

const kgPerLb = unitDefinitions.kgPerLb.value
const mPerFt = unitDefinitions.mPerFt.value
const litresPerUsGal = unitDefinitions.litresPerUsGal.value
const ft2PerAcre = unitDefinitions.ft2PerAcre.value
const lbPerShortTon = unitDefinitions.lbPerShortTon.value
const m2PerHa = unitDefinitions.m2PerHa.value

/** The default density of liquid manure, lb per US gallon (LPELC conversions). */
export const defaultLiquidDensityLbPerGal: number = unitDefinitions.defaultLiquidDensityLbPerGal.value

// Derived factors: arithmetic on the exact definitions above.
/** m² per acre (4046.8564224). */
export const m2PerAcre = ft2PerAcre * mPerFt * mPerFt
/** ha per acre (0.40468564224). */
export const haPerAcre = m2PerAcre / m2PerHa
/** ft³ per US gallon (0.133680…); its inverse 7.48052 gal/ft³ is the worksheets' 7.48. */
export const ft3PerUsGal = unitDefinitions.in3PerUsGal.value / 1728
/** US gallons per ft³ (7.480519…). */
export const usGalPerFt3 = 1 / ft3PerUsGal
/** m³ per ft³ (0.028316846592). */
export const m3PerFt3 = mPerFt * mPerFt * mPerFt
/** US gallons per acre-inch (27,154.3). */
export const usGalPerAcreInch = (ft2PerAcre * (1 / 12)) * usGalPerFt3
/** kg per short ton (907.18474). */
export const kgPerShortTon = lbPerShortTon * kgPerLb
/** lb/ac → kg/ha (1.12085). */
export const kgPerHaPerLbPerAcre = kgPerLb / haPerAcre
/** gal/ac → L/ha (9.35396). */
export const lPerHaPerGalPerAcre = litresPerUsGal / haPerAcre
/** ton/ac → t/ha (2.24170). */
export const tPerHaPerTonPerAcre = kgPerShortTon / 1000 / haPerAcre
/** lb per 1000 US gal → kg/m³ (= g/L) (0.119826). */
export const kgPerM3PerLbPer1000Gal = kgPerLb / litresPerUsGal
/** lb per short ton → kg per tonne (0.5). */
export const kgPerTPerLbPerTon = 1000 / lbPerShortTon
/** mg/L → lb per 1000 US gal (0.0083454). */
export const lbPer1000GalPerMgPerL = 1 / (1000 * kgPerM3PerLbPer1000Gal)

/** P2O5 per unit of elemental P by mass: M(P2O5) / (2 M(P)) = 2.2914. */
export const p2o5PerP =
  (2 * unitDefinitions.atomicMassP.value + 5 * unitDefinitions.atomicMassO.value) /
  (2 * unitDefinitions.atomicMassP.value)
/** K2O per unit of elemental K by mass: M(K2O) / (2 M(K)) = 1.2046. */
export const k2oPerK =
  (2 * unitDefinitions.atomicMassK.value + unitDefinitions.atomicMassO.value) /
  (2 * unitDefinitions.atomicMassK.value)

/** Elemental P (any mass unit) → P2O5 (same unit). */
export function pToP2o5(p: number): number {
  return p * p2o5PerP
}
/** P2O5 (any mass unit) → elemental P (same unit). */
export function p2o5ToP(p2o5: number): number {
  return p2o5 / p2o5PerP
}
/** Elemental K (any mass unit) → K2O (same unit). */
export function kToK2o(k: number): number {
  return k * k2oPerK
}
/** K2O (any mass unit) → elemental K (same unit). */
export function k2oToK(k2o: number): number {
  return k2o / k2oPerK
}

/** lb/ac → kg/ha. */
export function lbPerAcreToKgPerHa(lbPerAcre: number): number {
  return lbPerAcre * kgPerHaPerLbPerAcre
}
/** kg/ha → lb/ac. */
export function kgPerHaToLbPerAcre(kgPerHa: number): number {
  return kgPerHa / kgPerHaPerLbPerAcre
}
/** US gal/ac → L/ha. */
export function galPerAcreToLPerHa(galPerAcre: number): number {
  return galPerAcre * lPerHaPerGalPerAcre
}
/** L/ha → US gal/ac. */
export function lPerHaToGalPerAcre(lPerHa: number): number {
  return lPerHa / lPerHaPerGalPerAcre
}
/** short ton/ac → tonne/ha. */
export function tonPerAcreToTPerHa(tonPerAcre: number): number {
  return tonPerAcre * tPerHaPerTonPerAcre
}
/** tonne/ha → short ton/ac. */
export function tPerHaToTonPerAcre(tPerHa: number): number {
  return tPerHa / tPerHaPerTonPerAcre
}
/** acres → hectares. */
export function acresToHa(acres: number): number {
  return acres * haPerAcre
}
/** hectares → acres. */
export function haToAcres(ha: number): number {
  return ha / haPerAcre
}
/** US gallons → litres. */
export function galToLitres(gal: number): number {
  return gal * litresPerUsGal
}
/** litres → US gallons. */
export function litresToGal(litres: number): number {
  return litres / litresPerUsGal
}
/** short tons → tonnes. */
export function tonsToTonnes(tons: number): number {
  return (tons * kgPerShortTon) / 1000
}
/** tonnes → short tons. */
export function tonnesToTons(tonnes: number): number {
  return (tonnes * 1000) / kgPerShortTon
}
/** ft³ → US gallons. */
export function ft3ToGal(ft3: number): number {
  return ft3 * usGalPerFt3
}
/** m → ft. */
export function mToFt(m: number): number {
  return m / mPerFt
}
/** ft → m. */
export function ftToM(ft: number): number {
  return ft * mPerFt
}
/** ft³ → m³. */
export function ft3ToM3(ft3: number): number {
  return ft3 * m3PerFt3
}
/** m³ → ft³. */
export function m3ToFt3(m3: number): number {
  return m3 / m3PerFt3
}
/** lb → kg. */
export function lbToKg(lb: number): number {
  return lb * kgPerLb
}
/** kg → lb. */
export function kgToLb(kg: number): number {
  return kg / kgPerLb
}
/** lb per 1000 US gal → kg/m³. */
export function lbPer1000GalToKgPerM3(lbPer1000Gal: number): number {
  return lbPer1000Gal * kgPerM3PerLbPer1000Gal
}
/** kg/m³ → lb per 1000 US gal. */
export function kgPerM3ToLbPer1000Gal(kgPerM3: number): number {
  return kgPerM3 / kgPerM3PerLbPer1000Gal
}
/** lb per short ton → kg per tonne. */
export function lbPerTonToKgPerT(lbPerTon: number): number {
  return lbPerTon * kgPerTPerLbPerTon
}
/** kg per tonne → lb per short ton. */
export function kgPerTToLbPerTon(kgPerT: number): number {
  return kgPerT / kgPerTPerLbPerTon
}
