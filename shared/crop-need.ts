import type {
  CropName,
  CropRow,
  PreviousCrop,
  ReferenceSet,
  SoilClassRow,
  SoilTestMethod,
} from './reference-sets/reference-set.ts'

export type SoilTestClass = 'build_up' | 'maintenance' | 'no_need'

/**
 * The soil-test class for one soil test against a class row: below the critical level
 * "build_up" (removal plus build-up), up to the maintenance limit "maintenance" (crop removal),
 * above it "no_need" (Tri-State Fertilizer Recommendations, 2020). Never throws.
 */
export function computeSoilTestClass(ppm: number, row: SoilClassRow): SoilTestClass {
  if (ppm < row.critical_ppm) return 'build_up'
  if (ppm <= row.maintenance_limit_ppm) return 'maintenance'
  return 'no_need'
}

/**
 * The oxide need (lb/ac) for one season from crop removal and a soil-test class:
 * build_up → removal + (critical − soil test) × build-up per ppm ÷ build years;
 * maintenance → removal; no_need → 0. Never throws.
 */
export function computeSoilTestNeed(removalLbPerAcre: number, ppm: number, row: SoilClassRow): number {
  switch (computeSoilTestClass(ppm, row)) {
    case 'build_up':
      return removalLbPerAcre + ((row.critical_ppm - ppm) * row.buildup_lb_per_ppm) / row.build_years
    case 'maintenance':
      return removalLbPerAcre
    case 'no_need':
      return 0
  }
}

/** One crop of the season this application is for; all amounts in US units. */
export interface CropNeedInput {
  name: CropName
  /** bu/ac or ton/ac. */
  yieldGoal: number
  previousCrop?: PreviousCrop
  soilTestPPpm?: number
  soilTestPMethod?: SoilTestMethod
  soilTestKPpm?: number
  soilTestKMethod?: SoilTestMethod
  /** lb N/ac already supplied by earlier manure and by other N (starter, irrigation water). */
  manureNCredit?: number
  otherNCredit?: number
}

export interface CropNeed {
  /** lb/ac the manure must still supply; null where the set gives no basis to compute it. */
  n: number | null
  p2o5: number | null
  k2o: number | null
  /** lb N/ac before credits, and each credit subtracted. */
  nGross: number | null
  nCredits: { legume: number; manure: number; other: number }
  /** lb P2O5/ac removed by this crop (season 1). */
  p2o5Removal: number | null
  k2oRemoval: number | null
  pClass: SoilTestClass | null
  kClass: SoilTestClass | null
  /** Sources of every number used; `nSourceIds` are those behind the N need alone. */
  sourceIds: string[]
  nSourceIds: string[]
  warnings: { code: string; message: string; nutrient?: 'n' | 'p2o5' | 'k2o' }[]
}

/** The crop row of a set, or undefined. */
export function findCrop(set: ReferenceSet, name: CropName): CropRow | undefined {
  return set.crops.find((c) => c.name === name)
}

/**
 * Crop removal (lb/ac) of N, P2O5 and K2O for a yield (bu/ac or ton/ac): yield × removal per
 * unit from the set's crop table (OMAFRA 2025, NDSU 2021, Univ. of Kentucky, Rutgers FS1295).
 * Null where the set lists no removal for that nutrient. Never throws.
 */
export function computeCropRemoval(crop: CropRow, yieldGoal: number) {
  const r = crop.removal
  return {
    n: r.n === null ? null : r.n * yieldGoal,
    p2o5: r.p2o5 === null ? null : r.p2o5 * yieldGoal,
    k2o: r.k2o === null ? null : r.k2o * yieldGoal,
  }
}

/**
 * The N, P2O5 and K2O the manure must supply for one crop (lb/ac), from the reference set:
 * N from the yield-goal rule (lb N per unit × yield) or a fixed rate, less the legume credit
 * (unless the fixed rate already includes it), the manure-N credit and other N; 0 for legumes.
 * P2O5 and K2O from crop removal and the soil-test class (see computeSoilTestNeed); without a
 * soil test or class row the need is crop removal, with a warning. Throws nothing; a crop the
 * set does not list gives nulls and a warning (parseRateCase refuses that case first).
 */
export function computeCropNeed(input: CropNeedInput, set: ReferenceSet): CropNeed {
  const warnings: CropNeed['warnings'] = []
  const sourceIds: string[] = []
  const credits = { legume: 0, manure: input.manureNCredit ?? 0, other: input.otherNCredit ?? 0 }
  const crop = findCrop(set, input.name)
  if (!crop) {
    warnings.push({ code: 'unknown_crop', message: `reference set ${set.name} has no crop ${input.name}` })
    return { n: null, p2o5: null, k2o: null, nGross: null, nCredits: credits, p2o5Removal: null, k2oRemoval: null, pClass: null, kClass: null, sourceIds, nSourceIds: [], warnings }
  }
  const prev = input.previousCrop

  let nGross: number | null = null
  let creditIncluded = false
  const g = crop.n_guidance
  switch (g.kind) {
    case 'yield_goal':
      nGross = g.lb_n_per_yield_unit * input.yieldGoal
      sourceIds.push(g.source)
      break
    case 'fixed': {
      const byPrev = prev === undefined ? undefined : g.by_previous_crop?.[prev]
      creditIncluded = byPrev !== undefined
      nGross = byPrev ?? g.lb_n_per_acre
      sourceIds.push(g.source)
      break
    }
    case 'legume':
      nGross = 0
      sourceIds.push(g.source)
      break
    case 'none':
      warnings.push({ code: 'no_n_guidance', message: `${set.name}: ${g.note}`, nutrient: 'n' })
  }
  if (prev !== undefined && !creditIncluded && g.kind !== 'legume') {
    const credit = set.legume_credits.find((c) => c.previous_crop === prev)
    if (credit) {
      credits.legume = credit.lb_n_per_acre
      sourceIds.push(credit.source)
    }
  }
  const n = nGross === null ? null : Math.max(0, nGross - credits.legume - credits.manure - credits.other)
  const nSourceIds = [...sourceIds]

  const removal = computeCropRemoval(crop, input.yieldGoal)
  sourceIds.push(crop.removal.source)
  const oxide = (
    nutrient: 'P' | 'K',
    removalLb: number | null,
    ppm: number | undefined,
    method: SoilTestMethod | undefined,
    rows: SoilClassRow[],
  ): { need: number | null; cls: SoilTestClass | null } => {
    const nutrientKey = nutrient === 'P' ? 'p2o5' : 'k2o'
    if (removalLb === null) {
      warnings.push({ code: 'no_removal', message: `${set.name} lists no ${nutrient === 'P' ? 'P2O5' : 'K2O'} removal for ${crop.name}`, nutrient: nutrientKey })
      return { need: null, cls: null }
    }
    if (ppm === undefined || method === undefined) {
      warnings.push({
        code: 'no_soil_test',
        message: `no soil-test ${nutrient}: ${nutrient === 'P' ? 'P2O5' : 'K2O'} need taken as crop removal (${round(removalLb)} lb/ac)`,
        nutrient: nutrientKey,
      })
      return { need: removalLb, cls: null }
    }
    const row = rows.find((r) => r.method === method && r.soil_test_group === crop.soil_test_group)
    if (!row) {
      warnings.push({
        code: 'no_soil_test_classes',
        message: `${set.name} has no ${method} soil-test ${nutrient} classes for ${crop.name}; need taken as crop removal`,
        nutrient: nutrientKey,
      })
      return { need: removalLb, cls: null }
    }
    sourceIds.push(row.source)
    if (row.maintenance_limit_source !== undefined) sourceIds.push(row.maintenance_limit_source)
    const cls = computeSoilTestClass(ppm, row)
    if (cls === 'build_up') sourceIds.push(row.buildup_source)
    return { need: computeSoilTestNeed(removalLb, ppm, row), cls }
  }
  const p = oxide('P', removal.p2o5, input.soilTestPPpm, input.soilTestPMethod, set.soil_test_p)
  const k = oxide('K', removal.k2o, input.soilTestKPpm, input.soilTestKMethod, set.soil_test_k)

  return {
    n,
    p2o5: p.need,
    k2o: k.need,
    nGross,
    nCredits: credits,
    p2o5Removal: removal.p2o5,
    k2oRemoval: removal.k2o,
    pClass: p.cls,
    kClass: k.cls,
    sourceIds: [...new Set(sourceIds)],
    nSourceIds: [...new Set(nSourceIds)],
    warnings,
  }
}

function round(x: number) {
  return Math.round(x * 10) / 10
}
