import type { ReferenceSet, ReferenceSource } from './reference-set.ts'

/**
 * Tables that both built-in reference sets share: crop removal, nitrogen guidance for crops
 * whose guidance does not differ between the sets, legume credits, soil-test classes, manure P
 * limits and book values. Each row names its source by id; the sources are listed below with
 * their confidence (H read in the source, M read in a repost or excerpt, L from memory).
 */
export const commonSources: ReferenceSource[] = [
  {
    id: 'omafra-removal-2025',
    title: 'Crop Removal Values, Table 1: Average nutrient removal by common field crops in Ontario',
    publisher: 'Ontario Ministry of Agriculture, Food and Agribusiness (Field Crop News)',
    year: 2025,
    url: 'https://fieldcropnews.com/2025/05/crop-removal-values',
    confidence: 'H',
  },
  {
    id: 'ipni-pnt-2008',
    title: 'Plant Nutrition Today, Fall 2008 No. 4: nutrient removal rates for field crops in the northcentral USA',
    publisher: 'International Plant Nutrition Institute',
    year: 2008,
    confidence: 'H',
  },
  {
    id: 'ndsu-forage-2021',
    title: 'Fertilizer Value of Distressed Corn Harvest for Forage (Crop and Pest Report, 08/05/21): corn silage at 65 % moisture',
    publisher: 'North Dakota State University Extension',
    year: 2021,
    confidence: 'H',
  },
  {
    id: 'uky-uptake',
    title: 'Nutrient uptake by crops (Plant and Soil Sciences views 142): alfalfa about 50-14-55 lb N-P2O5-K2O per ton',
    publisher: 'University of Kentucky',
    year: null,
    url: 'https://uknowledge.uky.edu/pss_views/142/',
    confidence: 'H',
  },
  {
    id: 'rutgers-fs1295',
    title: 'Fact Sheet FS1295, Soil Fertility Recommendations for Producing Grass Hay: 15 lb P2O5 and 50 lb K2O per ton',
    publisher: 'Rutgers NJAES Cooperative Extension',
    year: null,
    url: 'https://njaes.rutgers.edu/fs1295/',
    confidence: 'H',
  },
  {
    id: 'ksu-grass-hay-n',
    title: 'Fertilization of tall fescue and smooth bromegrass hayfields: about 30 lb N per ton of expected yield (Kansas State research, as reported)',
    publisher: 'Progressive Forage',
    year: null,
    confidence: 'M',
  },
  {
    id: 'wfh-1995-n',
    title: 'Western Fertilizer Handbook, 8th ed. (1995), nitrogen requirements of crops: corn silage 30 tons 250 lb N/ac, wheat 3 tons 175 lb N/ac (read as reprinted in a county dairy fact sheet, Table 3)',
    publisher: 'San Joaquin County (Calif.) Environmental Health, Fact Sheet No. 4 for Dairies, citing the Western Fertilizer Handbook',
    year: 1995,
    confidence: 'M',
  },
  {
    id: 'okstate-wheat-n',
    title: 'Nitrogen requirements for winter wheat (grain only): N = 2 lb per bushel of yield goal − soil-test nitrate-N (Zhang and Edwards, Oklahoma State University, as reported)',
    publisher: 'Oklahoma State University Extension, reported by Oklahoma Farm Report',
    year: 2011,
    url: 'http://oklahomafarmreport.com/wire/news/2011/09/01888_NitrogenRequirements09262011_161132.php',
    confidence: 'M',
  },
  {
    id: 'usda-ah697',
    title: 'Weights, Measures, and Conversion Factors for Agricultural Commodities and Their Products (AH-697): bushel weights corn 56 lb, soybean and wheat 60 lb',
    publisher: 'USDA Economic Research Service',
    year: 1992,
    confidence: 'L',
  },
  {
    id: 'definition',
    title: 'Unit definition: a short ton is 2000 lb',
    publisher: 'NIST Handbook 44, Appendix C',
    year: null,
    confidence: 'H',
  },
  {
    id: 'umn-legume-credits',
    title: 'Nitrogen credits for corn: first year after a good alfalfa stand 150 lb N/ac, second year 75 lb N/ac',
    publisher: 'University of Minnesota Extension',
    year: null,
    confidence: 'H',
  },
  {
    id: 'missouri-eq392',
    title: 'EQ392: soybean N credit 30 lb N/ac; slurry P2O5 and K2O 95 % available',
    publisher: 'University of Missouri Extension',
    year: null,
    confidence: 'H',
  },
  {
    id: 'tristate-2020',
    title: 'Tri-State Fertilizer Recommendations for Corn, Soybean, Wheat, and Alfalfa (Bulletin 974): Mehlich-3 P critical level 20 ppm (corn, soybean) and 30 ppm (wheat, alfalfa); maintenance to 50 ppm; build-up over 4 years',
    publisher: 'The Ohio State University, Michigan State University, Purdue University',
    year: 2020,
    confidence: 'H',
  },
  {
    id: 'tristate-2020-k',
    title: 'Tri-State Fertilizer Recommendations (2020): Mehlich-3 K critical level 120 ppm and maintenance limit 170 ppm for CEC above 5 meq/100 g (as summarised by a soil laboratory)',
    publisher: 'A&L Great Lakes Laboratories, reporting Bulletin 974',
    year: 2020,
    confidence: 'M',
  },
  {
    id: 'tristate-1995-buildup',
    title: 'Tri-State Fertilizer Recommendations (E-2567, 1995): build-up term (critical level − soil test) × 5 lb P2O5 per ppm per year over 4 years; K2O × (1 + 0.05 CEC), about 2 at CEC 20',
    publisher: 'Michigan State University, The Ohio State University, Purdue University',
    year: 1995,
    confidence: 'L',
  },
  {
    id: 'osu-agbmps-bray',
    title: 'Soil test P levels less than 50 ppm: Bray P1 critical level 15 ppm (corn/soybean) and 25 ppm (rotations with wheat or alfalfa) from the Tri-State recommendations (Vitosh et al., 1995); no additional fertilizer for crop production above 50 ppm Bray P1',
    publisher: 'The Ohio State University, Agricultural BMPs',
    year: null,
    url: 'https://agbmps.osu.edu/scenario/soil-test-p-levels-less-50-ppm-or-p-risk-index-low-medium',
    confidence: 'H',
  },
  {
    id: 'umn-olsen-rehm',
    title: 'Phosphate is not likely to increase corn yields above 20 ppm Bray or 16 ppm Olsen P (G. Rehm, University of Minnesota Extension, as reported)',
    publisher: 'Corn+Soybean Digest (Farm Progress)',
    year: null,
    url: 'https://www.farmprogress.com/soil-test-making-fertilizer-decisions',
    confidence: 'M',
  },
  {
    id: 'usu-cnmp-step5',
    title: 'CNMP Step 5.1, Manure Application Rate: soil-test P below 50 ppm N- or P-based; 50–100 ppm crop P removal; above 100 ppm no manure',
    publisher: 'Utah State University Extension',
    year: null,
    url: 'https://extension.usu.edu/waterquality/htm/agriculturewq/cnmp/step5/step5-1/',
    confidence: 'H',
  },
  {
    id: 'iowa-pmr1003',
    title: 'Using Manure Nutrients for Crop Production (PMR 1003): swine finishing liquid manure 32–79 lb N, 17–54 lb P2O5, 23–48 lb K2O per 1000 gal; P 80–100 % available for beef and dairy manure',
    publisher: 'Iowa State University Extension and Outreach',
    year: 2016,
    confidence: 'M',
  },
  {
    id: 'uga-c933',
    title: 'Circular 933: broiler litter 62 lb N, 62 lb P2O5, 56 lb K2O per ton',
    publisher: 'University of Georgia Extension',
    year: null,
    confidence: 'H',
  },
  {
    id: 'sare-bsbc-2010',
    title: 'Building Soils for Better Crops, 3rd ed., Table 12.1 Typical Manure Characteristics: dairy cow, beef cow, chicken and hog manure, solid (lb/ton) and liquid (lb/1,000 gal), with dry matter (read in an HTML copy of the book)',
    publisher: 'SARE Outreach (Magdoff and van Es)',
    year: 2010,
    url: 'https://www.sare.org/publications/building-soils-for-better-crops/animal-manures-for-increasing-organic-matter-and-supplying-nutrients/',
    confidence: 'M',
  },
  {
    id: 'ndsu-nm1259-2021',
    title: 'Solid Manure Sampling for Nutrient Management Planning (NM1259): N in solid beef manure in North Dakota ranges from 4 to 32 lb/ton (from NM2007, Nutrient Characteristics of Solid Beef Manure in North Dakota)',
    publisher: 'North Dakota State University Extension',
    year: 2021,
    url: 'https://www.ag.ndsu.edu/publications/livestock/solid-manure-sampling-for-nutrient-management-planning/',
    confidence: 'H',
  },
  {
    id: 'midatlantic-ch9',
    title: 'Mid-Atlantic Nutrient Management Handbook, Chapter 9, Manure as a Nutrient Source (D. Hansen, Univ. of Delaware): layer manure 35 lb N, 42 lb P2O5, 28 lb K2O per ton (read in a reprint of the chapter presentation)',
    publisher: 'Mid-Atlantic Regional Water Program',
    year: null,
    confidence: 'M',
  },
  {
    id: 'umn-book-range',
    title: 'Organic manures testing: University of Minnesota research found manure analyses ranging from 25 to 300 percent of the average (book) values (as reported by a testing laboratory)',
    publisher: 'BSHAT Research (testing laboratory), reporting University of Minnesota bulletins',
    year: null,
    url: 'https://bshatresearch.com/organic-manures-testing-service',
    confidence: 'M',
  },
  {
    id: 'utk-variability',
    title: 'An individual farm’s manure analysis can vary from average values by 50 percent or more',
    publisher: 'University of Tennessee Extension',
    year: null,
    url: 'http://trace.tennessee.edu/utk_agexani/62/',
    confidence: 'H',
  },
]

type Common = Pick<
  ReferenceSet,
  'legume_credits' | 'soil_test_p' | 'soil_test_k' | 'manure_p_limits' | 'book_values' | 'book_value_spread'
>

/** Crops with their removal and the N guidance both sets share (corn grain differs per set). */
export const commonCrops: ReferenceSet['crops'] = [
  {
    name: 'corn_silage',
    title: 'Corn silage (65 % moisture)',
    yield_unit: 'ton',
    lb_per_yield_unit: 2000,
    lb_per_yield_unit_source: 'definition',
    removal: { n: 13, p2o5: 5.6, k2o: 7, source: 'ndsu-forage-2021' },
    // 250 lb N for 30 tons (Western Fertilizer Handbook); a crop requirement, before credits.
    n_guidance: { kind: 'yield_goal', lb_n_per_yield_unit: 8.33, source: 'wfh-1995-n' },
    soil_test_group: 'corn_soybean',
  },
  {
    name: 'soybean',
    title: 'Soybean',
    yield_unit: 'bu',
    lb_per_yield_unit: 60,
    lb_per_yield_unit_source: 'usda-ah697',
    removal: { n: 3.85, p2o5: 0.84, k2o: 1.39, source: 'omafra-removal-2025', note: 'midpoints of the published ranges 3.7–4.0, 0.80–0.88, 1.38–1.40 lb/bu' },
    n_guidance: { kind: 'legume', source: 'missouri-eq392' },
    soil_test_group: 'corn_soybean',
  },
  {
    name: 'wheat',
    title: 'Winter wheat (grain)',
    yield_unit: 'bu',
    lb_per_yield_unit: 60,
    lb_per_yield_unit_source: 'usda-ah697',
    removal: { n: 1.2, p2o5: 0.59, k2o: 0.36, source: 'omafra-removal-2025', note: 'midpoints of the published ranges 1.15–1.25, 0.55–0.63, 0.35–0.37 lb/bu' },
    n_guidance: { kind: 'yield_goal', lb_n_per_yield_unit: 2, source: 'okstate-wheat-n' },
    soil_test_group: 'wheat_alfalfa',
  },
  {
    name: 'alfalfa',
    title: 'Alfalfa hay',
    yield_unit: 'ton',
    lb_per_yield_unit: 2000,
    lb_per_yield_unit_source: 'definition',
    removal: { n: 50, p2o5: 14, k2o: 55, source: 'uky-uptake' },
    n_guidance: { kind: 'legume', source: 'uky-uptake' },
    soil_test_group: 'wheat_alfalfa',
  },
  {
    name: 'grass_hay',
    title: 'Grass hay',
    yield_unit: 'ton',
    lb_per_yield_unit: 2000,
    lb_per_yield_unit_source: 'definition',
    removal: { n: null, p2o5: 15, k2o: 50, source: 'rutgers-fs1295' },
    n_guidance: { kind: 'yield_goal', lb_n_per_yield_unit: 30, source: 'ksu-grass-hay-n' },
    soil_test_group: 'grass',
  },
]

/** Corn grain removal, shared; its N guidance is set-specific. */
export const cornGrainRemoval: ReferenceSet['crops'][number]['removal'] = {
  n: 0.825,
  p2o5: 0.405,
  k2o: 0.27,
  source: 'omafra-removal-2025',
  note: 'N and P2O5 midpoints of 0.65–1.0 and 0.37–0.44 lb/bu; K2O 0.27 lb/bu (IPNI 2008, within OMAFRA 0.26–0.30)',
}

/** Liquid book values stand for pits, tanks and basins; lagoon liquid is far thinner (under 1 % solids). */
const LIQUID_NOT_LAGOON: ('deep_pit' | 'earthen_basin' | 'tank' | 'other')[] = ['deep_pit', 'earthen_basin', 'tank', 'other']

/** A book-value row from typical values alone: low and high are typical × 0.25 and × 3 (book_value_spread). */
function spread(r: {
  species: 'swine' | 'dairy' | 'beef' | 'poultry'
  form: 'liquid' | 'solid'
  storage: string
  n: number
  p2o5: number
  k2o: number
  dm: number | null
  source: string
  kinds?: ('deep_pit' | 'earthen_basin' | 'lagoon' | 'tank' | 'stack' | 'other')[]
}): ReferenceSet['book_values'][number] {
  const band = (typical: number) => ({ typical, low: typical * BOOK_LOW, high: typical * BOOK_HIGH })
  return {
    species: r.species,
    form: r.form,
    storage: r.storage,
    total_n: band(r.n),
    ammonium_n: null,
    p2o5: band(r.p2o5),
    k2o: band(r.k2o),
    dry_matter_pct: r.dm === null ? null : band(r.dm),
    ...(r.kinds ? { storage_kinds: r.kinds } : {}),
    source: r.source,
    note: 'low and high are typical × 0.25 and × 3 (book_value_spread)',
  }
}

/**
 * Analyses ranged from 25 to 300 % of the average (book) values (Univ. of Minnesota, as reported);
 * an individual farm's analysis can differ from them by 50 % or more (Univ. of Tennessee). The
 * wide band flags unit and entry errors without flagging ordinary farm-to-farm spread.
 */
const BOOK_LOW = 0.25
const BOOK_HIGH = 3

export const commonTables: Common = {
  legume_credits: [
    { previous_crop: 'soybean', lb_n_per_acre: 30, source: 'missouri-eq392' },
    { previous_crop: 'alfalfa', lb_n_per_acre: 150, source: 'umn-legume-credits' },
    { previous_crop: 'alfalfa_second_year', lb_n_per_acre: 75, source: 'umn-legume-credits' },
  ],
  soil_test_p: [
    {
      method: 'mehlich3',
      soil_test_group: 'corn_soybean',
      critical_ppm: 20,
      maintenance_limit_ppm: 50,
      build_years: 4,
      buildup_lb_per_ppm: 20,
      source: 'tristate-2020',
      buildup_source: 'tristate-1995-buildup',
    },
    {
      method: 'mehlich3',
      soil_test_group: 'wheat_alfalfa',
      critical_ppm: 30,
      maintenance_limit_ppm: 50,
      build_years: 4,
      buildup_lb_per_ppm: 20,
      source: 'tristate-2020',
      buildup_source: 'tristate-1995-buildup',
    },
    {
      method: 'bray1',
      soil_test_group: 'corn_soybean',
      critical_ppm: 15,
      maintenance_limit_ppm: 50,
      build_years: 4,
      buildup_lb_per_ppm: 20,
      source: 'osu-agbmps-bray',
      buildup_source: 'tristate-1995-buildup',
      note: 'the 1995 Tri-State levels in Bray P1; 50 ppm is the level above which no rotation crop needs more P',
    },
    {
      method: 'bray1',
      soil_test_group: 'wheat_alfalfa',
      critical_ppm: 25,
      maintenance_limit_ppm: 50,
      build_years: 4,
      buildup_lb_per_ppm: 20,
      source: 'osu-agbmps-bray',
      buildup_source: 'tristate-1995-buildup',
      note: 'the 1995 Tri-State levels in Bray P1; 50 ppm is the level above which no rotation crop needs more P',
    },
    ...(['corn_soybean', 'wheat_alfalfa'] as const).map((group) => ({
      method: 'olsen' as const,
      soil_test_group: group,
      critical_ppm: 16,
      maintenance_limit_ppm: 100,
      build_years: 4,
      buildup_lb_per_ppm: 20,
      source: 'umn-olsen-rehm',
      buildup_source: 'tristate-1995-buildup',
      maintenance_limit_source: 'usu-cnmp-step5',
      note: 'critical level: the Olsen P above which corn is unlikely to respond (Minnesota; no separate value found for wheat and alfalfa); maintenance to 100 ppm, where Utah CNMP guidance allows crop P removal and no more; build-up per ppm is the Bray-based Tri-State 1995 figure',
    })),
  ],
  soil_test_k: [
    {
      method: 'mehlich3',
      soil_test_group: 'corn_soybean',
      critical_ppm: 120,
      maintenance_limit_ppm: 170,
      build_years: 4,
      buildup_lb_per_ppm: 8,
      source: 'tristate-2020-k',
      buildup_source: 'tristate-1995-buildup',
      note: 'soils with CEC above 5 meq/100 g; sandy soils (CEC ≤ 5) have 100–130 ppm',
    },
    {
      method: 'mehlich3',
      soil_test_group: 'wheat_alfalfa',
      critical_ppm: 120,
      maintenance_limit_ppm: 170,
      build_years: 4,
      buildup_lb_per_ppm: 8,
      source: 'tristate-2020-k',
      buildup_source: 'tristate-1995-buildup',
      note: 'soils with CEC above 5 meq/100 g; sandy soils (CEC ≤ 5) have 100–130 ppm',
    },
  ],
  manure_p_limits: [
    {
      method: 'olsen',
      removal_only_from_ppm: 50,
      no_manure_from_ppm: 100,
      source: 'usu-cnmp-step5',
      note: 'Utah soil tests use the bicarbonate (Olsen) extract; applied to Olsen results only',
    },
  ],
  book_values: [
    {
      species: 'swine',
      form: 'liquid',
      storage: 'finishing, deep pit',
      total_n: { typical: 55.5, low: 32, high: 79 },
      ammonium_n: null,
      p2o5: { typical: 35.5, low: 17, high: 54 },
      k2o: { typical: 35.5, low: 23, high: 48 },
      dry_matter_pct: null,
      storage_kinds: LIQUID_NOT_LAGOON,
      source: 'iowa-pmr1003',
      note: 'low and high are the published range across finishing facilities; typical is its midpoint',
    },
    spread({ species: 'poultry', form: 'solid', storage: 'broiler litter', n: 62, p2o5: 62, k2o: 56, dm: null, source: 'uga-c933' }),
    spread({ species: 'poultry', form: 'solid', storage: 'layer manure', n: 35, p2o5: 42, k2o: 28, dm: null, source: 'midatlantic-ch9' }),
    spread({ species: 'dairy', form: 'liquid', storage: 'slurry (pit, tank or basin)', n: 25, p2o5: 9, k2o: 20, dm: 7, source: 'sare-bsbc-2010', kinds: LIQUID_NOT_LAGOON }),
    spread({ species: 'dairy', form: 'solid', storage: 'solid, with bedding', n: 10, p2o5: 6, k2o: 7, dm: 26, source: 'sare-bsbc-2010' }),
    {
      ...spread({ species: 'beef', form: 'solid', storage: 'feedlot or bedded pack', n: 14, p2o5: 9, k2o: 11, dm: 23, source: 'sare-bsbc-2010' }),
      total_n: { typical: 14, low: 4, high: 32 },
      note: 'typical values from SARE Table 12.1; the total N range is the 4–32 lb/ton measured across North Dakota solid beef manure (NDSU NM1259); P2O5, K2O and dry matter typical × 0.25 and × 3',
    },
    spread({ species: 'beef', form: 'liquid', storage: 'liquid (pit or basin)', n: 39, p2o5: 25, k2o: 31, dm: 8, source: 'sare-bsbc-2010', kinds: LIQUID_NOT_LAGOON }),
    spread({ species: 'swine', form: 'solid', storage: 'solid (as published: 9 % dry matter)', n: 10, p2o5: 6, k2o: 9, dm: 9, source: 'sare-bsbc-2010' }),
    spread({ species: 'poultry', form: 'liquid', storage: 'liquid', n: 70, p2o5: 70, k2o: 33, dm: 17, source: 'sare-bsbc-2010', kinds: LIQUID_NOT_LAGOON }),
  ],
  book_value_spread: { low: BOOK_LOW, high: BOOK_HIGH, source: 'umn-book-range' },
}
