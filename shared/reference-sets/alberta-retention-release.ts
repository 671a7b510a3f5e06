import { commonCrops, commonSources, commonTables, cornGrainRemoval } from './common-tables.ts'
import type { ReferenceSet } from './reference-set.ts'

/**
 * Nitrogen as ammonium-N retained (by incorporation delay and weather) plus organic N released
 * (Alberta Agriculture, Nutrient Management Planning Guide, Table 4.3.4 and p. 214), with
 * later-year organic-N release from Cornell's guidelines, ammonium-N kept by sprinkler
 * irrigation by depth per pass (Univ. of Nebraska–Lincoln 2022) and a yield-goal N need for corn.
 */
export const albertaRetentionRelease: ReferenceSet = {
  name: 'alberta-retention-release',
  version: '2027.2',
  title: 'Ammonium-N retention plus organic-N release (Alberta Agriculture, Nutrient Management Planning Guide)',
  description:
    'Available N = ammonium-N × retention + organic N × release. Retention by incorporation delay and weather class; sprinkler-irrigated liquid keeps 80 % of ammonium-N above 0.4 in per pass and 40 % at or below (Nebraska, no weather classes); organic-N release 25 % in year 1, 12 % and 5 % in the next two years.',
  sources: [
    {
      id: 'alberta-nmp-table434',
      title: 'Nutrient Management Planning Guide (Agdex 400/28-3), Table 4.3.4: ammonium-N retention factors',
      publisher: 'Alberta Agriculture and Food',
      year: null,
      where: 'p. 163',
      confidence: 'H',
    },
    {
      id: 'alberta-nmp-organic',
      title: 'Nutrient Management Planning Guide (Agdex 400/28-3): organic N year-1 availability factor 0.25',
      publisher: 'Alberta Agriculture and Food',
      year: null,
      where: 'p. 214',
      confidence: 'H',
    },
    {
      id: 'alberta-nmp-pk',
      title: 'Nutrient Management Planning Guide (Agdex 400/28-3): P 70 % available in year 1, K 90 % (read in an excerpt)',
      publisher: 'Alberta Agriculture and Food',
      year: null,
      confidence: 'M',
    },
    {
      id: 'unl-irrigation-2022',
      title: 'New UNL Manure Nitrogen Crediting Recommendations for Crop Fertility: ammonium-N availability from sprinkler irrigation 80 % when applied at more than 0.4 inches, 40 % at or less than 0.4 inches',
      publisher: 'University of Nebraska–Lincoln, CropWatch (Iqbal, Johnson, Millmier Schmidt, Kurtzhals)',
      year: 2022,
      url: 'https://cropwatch.unl.edu/2022/new-unl-manure-nitrogen-crediting-recommendations-crop-fertility',
      confidence: 'H',
    },
    {
      id: 'cornell-css412',
      title: 'CSS 412 Nutrient Management, Module 2: release rate for organic N in manure (applied last year 12 %, two years ago 5 %)',
      publisher: 'Cornell University, Department of Crop and Soil Sciences',
      year: null,
      url: 'https://courses.cit.cornell.edu/css412/mod2/ext_m2_pg6.htm',
      confidence: 'H',
    },
    {
      id: 'stanford-1973',
      title: 'Yield-goal rule: 1.2 lb N per bushel of expected corn yield (Stanford 1973, as cited in Nafziger et al., Crops & Soils 2022)',
      publisher: 'American Society of Agronomy (Crops & Soils)',
      year: 2022,
      confidence: 'H',
    },
    ...commonSources,
  ],
  nitrogen: {
    model: 'retention_release',
    ammonium_retention: [
      ...retention('injected', undefined, [1.0, 1.0, 1.0, 1.0, 1.0]),
      ...retention('broadcast_incorporated', 24, [0.75, 0.9, 0.85, 0.75, 0.5]),
      ...retention('broadcast_incorporated', 48, [0.7, 0.87, 0.81, 0.69, 0.43]),
      ...retention('broadcast_incorporated', 72, [0.65, 0.85, 0.78, 0.62, 0.35]),
      ...retention('broadcast_incorporated', 96, [0.6, 0.83, 0.74, 0.56, 0.28]),
      ...retention('broadcast_incorporated', 120, [0.55, 0.8, 0.7, 0.5, 0.2]),
      ...retention('broadcast', undefined, [0.34, 0.6, 0.5, 0.25, 0.0]),
      // Nebraska gives no weather classes: one average row per depth class.
      { method: 'irrigated', up_to_depth_in: 0.4, conditions: 'average', value: 0.4, source: 'unl-irrigation-2022', note: 'sprinkler (pivot) irrigation, 0.4 in or less per pass' },
      { method: 'irrigated', conditions: 'average', value: 0.8, source: 'unl-irrigation-2022', note: 'sprinkler (pivot) irrigation, more than 0.4 in per pass' },
    ],
    organic_release: [
      { species: 'any', form: 'any', year1: 0.25, year2: 0.12, year3: 0.05, source: 'alberta-nmp-organic', note: 'years 2 and 3 from Cornell CSS 412 (12 % and 5 %)' },
    ],
  },
  p2o5_availability: [{ species: 'any', form: 'any', value: 0.7, source: 'alberta-nmp-pk' }],
  k2o_availability: [{ species: 'any', form: 'any', value: 0.9, source: 'alberta-nmp-pk' }],
  crops: [
    {
      name: 'corn_grain',
      title: 'Corn (grain)',
      yield_unit: 'bu',
      lb_per_yield_unit: 56,
      lb_per_yield_unit_source: 'usda-ah697',
      removal: cornGrainRemoval,
      n_guidance: { kind: 'yield_goal', lb_n_per_yield_unit: 1.2, source: 'stanford-1973' },
      soil_test_group: 'corn_soybean',
    },
    ...commonCrops,
  ],
  ...commonTables,
}

/** One Table 4.3.4 row: average, cool-wet, cool-dry, warm-wet, warm-dry. */
function retention(
  method: 'injected' | 'broadcast' | 'broadcast_incorporated',
  withinHours: number | undefined,
  values: [number, number, number, number, number],
) {
  const conditions = ['average', 'cool_wet', 'cool_dry', 'warm_wet', 'warm_dry'] as const
  return conditions.map((c, i) => ({
    method,
    ...(withinHours === undefined ? {} : { within_hours: withinHours }),
    conditions: c,
    value: values[i]!,
    source: 'alberta-nmp-table434',
  }))
}
