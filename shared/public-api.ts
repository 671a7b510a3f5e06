/**
 * Pitside's Node API: `import { computeRate, parseLabCsv } from 'pitside'`. The package's one entry
 * point (package.json "exports"), and the only module that gathers others: inside the project,
 * import the module you mean. Everything here is pure (no files, no database), browser-safe, and
 * kept stable across minor versions. Formats are documented in the README; examples/scripts/ uses it.
 */

// the calculator: one field, one manure, one application
export { parseRateCase, rateCaseSchema, type RateCase } from './rate-case.ts'
export { computeRate, type RateResult, type Warning } from './rate.ts'
export { computeAvailability, type AvailabilityFactors, type ApplicationInput } from './availability.ts'
export { computeCropNeed, computeCropRemoval } from './crop-need.ts'

// lab analyses
export { normalizeAnalysis, toMetricAnalysis, fromMetricAnalysis, toReportedUnits, type AnalysisInput, type AsIsAnalysis } from './analysis.ts'
export { parseLabCsv, readLabCsv, parseLabUnits, parseLabBasis, labColumns, type LabRow, type LabCsv } from './lab-csv.ts'
export { parseLabProfile, type LabProfile } from './lab-profile.ts'
export { computeLabResults, checkLabRow, historyRule, type LabCheckContext, type LabResult, type LabStorage } from './lab-results.ts'

// reference sets and book values
export { listReferenceSets, findReferenceSet, findBookValues, defaultReferenceSetName, type BookValues } from './reference-sets/registry.ts'
export { parseReferenceSet, type ReferenceSet } from './reference-sets/reference-set.ts'

// storages, sampling, farm balance
export { computeStorageVolume, computeVolumeToHeight, type StorageInput, type StorageVolume } from './storage.ts'
export { computeSampleStats, computeSamplesNeeded, computeRateBand, type SampleStats } from './sampling.ts'
export { computeFarmBalance, type FarmBalanceInput, type FarmBalance } from './farm-balance.ts'

// plans
export {
  computePlan,
  planJson,
  findSamplingRound,
  samplingRoundDays,
  type FarmSnapshot,
  type PlanStorageSnapshot,
  type PlanFieldSnapshot,
  type PlanLabResult,
  type PlanOptions,
  type PlanBody,
  type PlanInputs,
  type PlanJson,
} from './plan.ts'
export { computePlanDiff, type PlanDiff } from './plan-diff.ts'

// the record files (farms, storages, fields, samples, applications)
export { parseFarmCsv } from './farm-csv.ts'
export { parseStorageCsv, type StorageRow } from './storage-csv.ts'
export { parseFieldCsv, type FieldRow, type FieldOverrides } from './field-csv.ts'
export { parseApplicationCsv, applicationWindow, seasonOfApplication, type ApplicationRow } from './application-csv.ts'

// CSV in and out
export { parseCsv } from './csv.ts'
export { writeCsv, formatCsvCell, type CsvValue } from './csv-write.ts'
export { formatProblems, AppError, type Problem } from './errors.ts'

// units
export * as units from './units.ts'
