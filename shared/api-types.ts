// The JSON the viewer's API answers with: browser-safe types shared by server/ and src/.
// Plans are rendered from the stored plan JSON (`plans.result`), so its types are tolerant:
// every number may be null or missing, and unknown keys are kept.

export interface ApiErrorBody {
  error: { code: string; message: string }
}

export type Role = 'advisor' | 'client'

export interface SessionUser {
  email: string
  name: string
  role: Role
  organization: { code: string; name: string }
  /** Farms a client may see; every farm of the organization for an advisor. */
  farms: string[]
}

export interface SessionResponse {
  user: SessionUser
  expires_at: string
}

export interface PlanSummary {
  id: number
  season: number
  version: number
  reference_set: string
  basis: string
  as_of: string
  created_by: string
  created_at: string
  fields: number
  acres: number
}

export interface FarmSummary {
  code: string
  name: string
  operator_name: string | null
  region: string | null
  storages: number
  fields: number
  acres: number
  latest_plan: PlanSummary | null
}

export interface FarmsResponse {
  farms: FarmSummary[]
}

export interface NutrientSet {
  n?: number | null
  p2o5?: number | null
  k2o?: number | null
  [key: string]: unknown
}

/** One lab result of a storage, as-is, per 1000 US gal (liquid) or per short ton (solid). */
export interface SampleResult {
  sample_code: string
  report_number: string
  lab: string | null
  sampled_on: string
  dry_matter_pct: number | null
  total_n: number | null
  ammonium_n: number | null
  p2o5: number | null
  k2o: number | null
}

export type AnalyteKey = 'dry_matter_pct' | 'total_n' | 'ammonium_n' | 'p2o5' | 'k2o'
export const analyteKeys: readonly AnalyteKey[] = ['dry_matter_pct', 'total_n', 'ammonium_n', 'p2o5', 'k2o']

export interface Spread {
  n: number
  mean: number | null
  sd: number | null
  cv_pct: number | null
  min: number | null
  max: number | null
}

export interface SeasonTrend {
  season: number
  samples: number
  values: Record<AnalyteKey, Spread>
}

export interface StorageView {
  code: string
  name: string | null
  kind: string
  species: string
  form: 'liquid' | 'solid'
  capacity: number | null
  capacity_unit: string | null
  current_amount: number | null
  current_amount_on: string | null
  /** 'lb/1000 gal' for liquids, 'lb/ton' for solids. */
  analysis_unit: string
  /** The latest sampling round (samples within 45 days of the latest one), combined. */
  latest_round: { from: string; to: string; samples: SampleResult[]; values: Record<AnalyteKey, Spread> } | null
  seasons: SeasonTrend[]
  results: number
}

export interface FieldView {
  code: string
  name: string | null
  acres: number
  storage: string | null
  method: string | null
  season: number | null
  crop: string | null
  yield_goal: number | null
  soil_test: { sampled_on: string | null; p_ppm: number | null; p_method: string | null; k_ppm: number | null } | null
}

export interface FarmDetail {
  code: string
  name: string
  operator_name: string | null
  region: string | null
  storages: StorageView[]
  fields: FieldView[]
  plans: PlanSummary[]
}

export interface PlanStorage {
  storage: string
  unit?: string | null
  in_storage?: number | null
  planned?: number | null
  samples?: number | null
  analysis?: Record<string, unknown> | null
  cv?: Record<string, unknown> | null
  [key: string]: unknown
}

export interface PlanField {
  field: string
  acres?: number | null
  crop?: string | null
  storage?: string | null
  method?: string | null
  rate?: number | null
  rate_unit?: string | null
  limited_by?: string | null
  need?: NutrientSet | null
  applied?: NutrientSet | null
  supplied?: NutrientSet | null
  balance?: NutrientSet | null
  supplemental?: NutrientSet | null
  total_manure?: number | null
  loads?: number | null
  warnings?: unknown[] | null
  factors?: Record<string, unknown> | null
  /** ids of the plan's `sources` this field's numbers used */
  source_ids?: string[] | null
  /** plans stored before sources were listed once per plan: the full entries, in every field */
  sources?: unknown[] | null
  residual_n?: unknown
  [key: string]: unknown
}

export interface PlanResult {
  storages?: PlanStorage[]
  fields?: PlanField[]
  /** every source the fields cite, once (read with computePlanSources, which also reads older plans) */
  sources?: unknown[] | null
  [key: string]: unknown
}

/** What the database says about a storage named in a plan (for labels and the what-if panel). */
export interface PlanStorageInfo {
  code: string
  name: string | null
  kind: string
  species: string
  form: 'liquid' | 'solid'
}

export interface PlanView {
  id: number
  farm: { code: string; name: string; operator_name: string | null }
  season: number
  version: number
  reference_set: string
  reference_set_version: string
  basis: string
  as_of: string
  created_by: string
  created_at: string
  result: PlanResult
  storages: PlanStorageInfo[]
  fields: { code: string; name: string | null }[]
  /** The calculator case each field was computed from (`plans.inputs`), by field code, for the what-if panel. */
  cases: Record<string, unknown>
}

export interface PlanVersionsResponse {
  versions: PlanSummary[]
}

export interface SharedPlanResponse {
  plan: PlanView
  expires_at: string
}
