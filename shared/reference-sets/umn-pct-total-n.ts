import { commonCrops, commonSources, commonTables, cornGrainRemoval } from './common-tables.ts'
import type { ReferenceSet } from './reference-set.ts'

/**
 * Nitrogen as a share of total N, by species × application method × incorporation delay
 * (University of Minnesota Extension, Table 1), with P2O5 80 % available (UMN guidelines) and
 * fixed maximum corn N rates by previous crop.
 */
export const umnPctTotalN: ReferenceSet = {
  name: 'umn-pct-total-n',
  version: '2027.2',
  title: 'Share of total N available by species, method and incorporation (University of Minnesota Extension)',
  description:
    'First-year N available as a fraction of total N; year-2 and year-3 fractions give the residual credits. Injection uses the knife/coulter column; broadcast without incorporation uses the >96 h column.',
  sources: [
    {
      id: 'umn-rates-table1',
      title: 'Calculating manure application rates, Table 1: Nitrogen availability (%) as affected by method of manure application and animal species',
      publisher: 'University of Minnesota Extension',
      year: null,
      url: 'https://extension.umn.edu/manure-management/calculating-manure-application-rates',
      confidence: 'H',
    },
    {
      id: 'umn-rates-table1-reprint',
      title: 'Calculating manure application rates, Table 1 (poultry year-2 value read in a reprint)',
      publisher: 'University of Minnesota Extension',
      year: null,
      confidence: 'M',
    },
    {
      id: 'umn-guidelines',
      title: 'Guidelines for manure application rates: plant-available P is assumed to be 80 % of total P in the first year',
      publisher: 'University of Minnesota Extension',
      year: null,
      url: 'https://extension.umn.edu/manure-land-application/manure-application-rates',
      confidence: 'H',
    },
    {
      id: 'umn-k-reprint',
      title: 'Calculating manure application rates: 90 % of K available (read in a reprint)',
      publisher: 'University of Minnesota Extension',
      year: null,
      confidence: 'M',
    },
    {
      id: 'umn-n-max-2019',
      title: 'Manure N guidelines updated 2019: corn after soybean 150 lb N/ac, continuous corn 195 lb N/ac (as reported)',
      publisher: 'University of Minnesota Extension, reported by Minnesota Farm Guide (agupdate.com)',
      year: 2019,
      confidence: 'M',
    },
    ...commonSources,
  ],
  nitrogen: {
    model: 'pct_of_total',
    rows: [
      // beef
      { species: 'beef', form: 'any', method: 'broadcast', year1: 0.25, year2: 0.25, year3: 0.1, source: 'umn-rates-table1', note: '>96 h incorporation column' },
      { species: 'beef', form: 'any', method: 'broadcast_incorporated', within_hours: 12, year1: 0.6, year2: 0.25, year3: 0.1, source: 'umn-rates-table1' },
      { species: 'beef', form: 'any', method: 'broadcast_incorporated', within_hours: 96, year1: 0.45, year2: 0.25, year3: 0.1, source: 'umn-rates-table1' },
      { species: 'beef', form: 'any', method: 'injected', year1: 0.5, year2: 0.25, year3: 0.1, source: 'umn-rates-table1', note: 'knife or coulter; sweeps 60 %' },
      // dairy (the table gives years 1 and 2)
      { species: 'dairy', form: 'any', method: 'broadcast', year1: 0.2, year2: 0.25, year3: 0, source: 'umn-rates-table1' },
      { species: 'dairy', form: 'any', method: 'broadcast_incorporated', within_hours: 12, year1: 0.55, year2: 0.25, year3: 0, source: 'umn-rates-table1' },
      { species: 'dairy', form: 'any', method: 'broadcast_incorporated', within_hours: 96, year1: 0.4, year2: 0.25, year3: 0, source: 'umn-rates-table1' },
      { species: 'dairy', form: 'any', method: 'injected', year1: 0.5, year2: 0.25, year3: 0, source: 'umn-rates-table1', note: 'knife or coulter; sweeps 55 %' },
      // swine
      { species: 'swine', form: 'any', method: 'broadcast', year1: 0.35, year2: 0.15, year3: 0, source: 'umn-rates-table1' },
      { species: 'swine', form: 'any', method: 'broadcast_incorporated', within_hours: 12, year1: 0.75, year2: 0.15, year3: 0, source: 'umn-rates-table1' },
      { species: 'swine', form: 'any', method: 'broadcast_incorporated', within_hours: 96, year1: 0.55, year2: 0.15, year3: 0, source: 'umn-rates-table1' },
      { species: 'swine', form: 'any', method: 'injected', year1: 0.7, year2: 0.15, year3: 0, source: 'umn-rates-table1', note: 'knife or coulter; sweeps 80 %' },
      // poultry (injection n/a in the table)
      { species: 'poultry', form: 'any', method: 'broadcast', year1: 0.45, year2: 0.25, year3: 0, source: 'umn-rates-table1-reprint', note: 'year 1 read in the source, year 2 in a reprint' },
      { species: 'poultry', form: 'any', method: 'broadcast_incorporated', within_hours: 12, year1: 0.7, year2: 0.25, year3: 0, source: 'umn-rates-table1-reprint' },
      { species: 'poultry', form: 'any', method: 'broadcast_incorporated', within_hours: 96, year1: 0.55, year2: 0.25, year3: 0, source: 'umn-rates-table1-reprint' },
    ],
  },
  p2o5_availability: [{ species: 'any', form: 'any', value: 0.8, source: 'umn-guidelines' }],
  k2o_availability: [{ species: 'any', form: 'any', value: 0.9, source: 'umn-k-reprint' }],
  crops: [
    {
      name: 'corn_grain',
      title: 'Corn (grain)',
      yield_unit: 'bu',
      lb_per_yield_unit: 56,
      lb_per_yield_unit_source: 'usda-ah697',
      removal: cornGrainRemoval,
      n_guidance: { kind: 'fixed', lb_n_per_acre: 195, by_previous_crop: { soybean: 150 }, source: 'umn-n-max-2019' },
      soil_test_group: 'corn_soybean',
    },
    ...commonCrops,
  ],
  ...commonTables,
}
