import type { Generated } from 'kysely'

// Table interfaces live only inside Database; elsewhere use Selectable<Database['farms']> and friends.
// Dates are ISO text (YYYY-MM-DD); instants are ISO UTC text; JSON columns hold text.

export interface Database {
  organizations: {
    id: Generated<number>
    code: string
    name: string
    created_at: Generated<string>
  }
  users: {
    id: Generated<number>
    organization_id: number
    email: string
    name: string
    password_hash: string
    role: 'advisor' | 'client'
    disabled: Generated<number>
    created_at: Generated<string>
    updated_at: Generated<string>
  }
  user_farms: {
    user_id: number
    farm_id: number
  }
  farms: {
    id: Generated<number>
    organization_id: number
    code: string
    name: string
    operator_name: string | null
    contact_email: string | null
    contact_phone: string | null
    address: string | null
    region: string | null
    notes: string | null
    created_at: Generated<string>
    updated_at: Generated<string>
  }
  storages: {
    id: Generated<number>
    farm_id: number
    code: string
    name: string | null
    kind: 'deep_pit' | 'earthen_basin' | 'lagoon' | 'tank' | 'stack' | 'other'
    species: string
    form: 'liquid' | 'solid'
    shape: string | null
    length_ft: number | null
    width_ft: number | null
    diameter_ft: number | null
    depth_ft: number | null
    side_slope: number | null
    freeboard_ft: number | null
    capacity: number | null
    capacity_unit: string | null
    current_amount: number | null
    current_amount_on: string | null
    current_depth_ft: number | null
    access_points: number | null
    notes: string | null
    created_at: Generated<string>
    updated_at: Generated<string>
  }
  import_runs: {
    id: Generated<number>
    kind: string
    file_name: string
    sha256: string
    rows: Generated<number>
    rows_new: Generated<number>
    rows_unchanged: Generated<number>
    warnings: Generated<number>
    outcome: 'imported' | 'unchanged' | 'replaced' | 'refused'
    message: string | null
    created_at: Generated<string>
  }
  sampling_events: {
    id: Generated<number>
    storage_id: number
    sample_code: string
    sampled_on: string
    agitated: number | null
    sampler_kind: string | null
    cores: number | null
    access_points_sampled: string | null
    sampled_by: string | null
    notes: string | null
    import_run_id: number | null
    created_at: Generated<string>
  }
  lab_reports: {
    id: Generated<number>
    lab: string | null
    report_number: string
    received_on: string | null
    import_run_id: number | null
    created_at: Generated<string>
  }
  lab_result_kinds: {
    id: Generated<number>
    form: string
    species: string
    basis: string
    units: string
    per_unit: string
  }
  lab_results: {
    id: Generated<number>
    lab_report_id: number
    storage_id: number
    sampling_event_id: number | null
    sample_code: string
    sampled_on: string
    line: number | null
    /** what the result was reported as: lab_result_kinds (set for every row, by the writer and the migration) */
    kind_id: number
    reported: string
    qualifiers: string | null
    dry_matter_pct: number | null
    total_n: number | null
    ammonium_n: number | null
    organic_n: number | null
    p2o5: number | null
    k2o: number | null
    sulfur: number | null
    ph: number | null
    notes: string | null
    warnings: string | null
    superseded_by: number | null
    import_run_id: number | null
  }
  fields: {
    id: Generated<number>
    farm_id: number
    code: string
    name: string | null
    acres: number
    storage_id: number | null
    method: string | null
    incorporated_within_hours: number | null
    overrides: string | null
    notes: string | null
    created_at: Generated<string>
    updated_at: Generated<string>
  }
  soil_tests: {
    id: Generated<number>
    field_id: number
    sampled_on: string | null
    p_ppm: number | null
    p_method: string | null
    k_ppm: number | null
    organic_matter_pct: number | null
    ph: number | null
    created_at: Generated<string>
  }
  crop_seasons: {
    id: Generated<number>
    field_id: number
    season: number
    crop: string
    yield_goal: number | null
    previous_crop: string | null
    created_at: Generated<string>
  }
  plans: {
    id: Generated<number>
    farm_id: number
    season: number
    version: number
    reference_set: string
    reference_set_version: string
    basis: string
    as_of: string
    inputs: string
    result: string
    created_by: string
    created_at: Generated<string>
  }
  plan_fields: {
    id: Generated<number>
    plan_id: number
    field_id: number
    field_code: string
    acres: number
    crop: string | null
    storage_id: number | null
    method: string | null
    rate: number | null
    rate_unit: string | null
    limited_by: string | null
    need_n: number | null
    need_p2o5: number | null
    need_k2o: number | null
    applied_n: number | null
    applied_p2o5: number | null
    applied_k2o: number | null
    supplied_n: number | null
    supplied_p2o5: number | null
    supplied_k2o: number | null
    supplemental_n: number | null
    supplemental_p2o5: number | null
    supplemental_k2o: number | null
    total_manure: number | null
    loads: number | null
    detail: string | null
    warnings: string | null
  }
  applications: {
    id: Generated<number>
    field_id: number
    storage_id: number | null
    applied_on: string
    amount: number
    amount_unit: string
    method: string | null
    incorporated_within_hours: number | null
    loads: number | null
    applicator: string | null
    notes: string | null
    import_run_id: number | null
    created_at: Generated<string>
  }
  share_links: {
    id: string
    plan_id: number
    recipient_email: string
    created_by: string
    created_at: Generated<string>
    expires_at: string
    revoked_at: string | null
  }
}
