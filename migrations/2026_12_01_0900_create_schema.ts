import { sql, type Kysely } from 'kysely'

// Frozen in time: never edit this file once it has landed. Add a new migration instead.
// Dates are ISO-8601 text (YYYY-MM-DD), instants are ISO-8601 UTC text; JSON columns hold text.

export async function up(db: Kysely<any>): Promise<void> {
  const now = sql`CURRENT_TIMESTAMP`

  await db.schema
    .createTable('organizations')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('code', 'text', (c) => c.notNull().unique())
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .execute()

  await db.schema
    .createTable('users')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('organization_id', 'integer', (c) => c.notNull().references('organizations.id'))
    .addColumn('email', 'text', (c) => c.notNull().unique())
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('password_hash', 'text', (c) => c.notNull())
    .addColumn('role', 'text', (c) => c.notNull().check(sql`role in ('advisor', 'client')`))
    .addColumn('disabled', 'integer', (c) => c.notNull().defaultTo(0))
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .addColumn('updated_at', 'text', (c) => c.notNull().defaultTo(now))
    .execute()

  await db.schema
    .createTable('farms')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('organization_id', 'integer', (c) => c.notNull().references('organizations.id'))
    .addColumn('code', 'text', (c) => c.notNull().unique())
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('operator_name', 'text')
    .addColumn('contact_email', 'text')
    .addColumn('contact_phone', 'text')
    .addColumn('address', 'text')
    .addColumn('region', 'text')
    .addColumn('notes', 'text')
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .addColumn('updated_at', 'text', (c) => c.notNull().defaultTo(now))
    .execute()

  await db.schema
    .createTable('user_farms')
    .addColumn('user_id', 'integer', (c) => c.notNull().references('users.id').onDelete('cascade'))
    .addColumn('farm_id', 'integer', (c) => c.notNull().references('farms.id').onDelete('cascade'))
    .addPrimaryKeyConstraint('user_farms_pk', ['user_id', 'farm_id'])
    .execute()

  await db.schema
    .createTable('storages')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('farm_id', 'integer', (c) => c.notNull().references('farms.id'))
    .addColumn('code', 'text', (c) => c.notNull())
    .addColumn('name', 'text')
    .addColumn('kind', 'text', (c) =>
      c.notNull().check(sql`kind in ('deep_pit', 'earthen_basin', 'lagoon', 'tank', 'stack', 'other')`),
    )
    .addColumn('species', 'text', (c) => c.notNull())
    .addColumn('form', 'text', (c) => c.notNull().check(sql`form in ('liquid', 'solid')`))
    // geometry: shape is rectangular | circular | basin | none; lengths in feet; side_slope is run per unit rise
    .addColumn('shape', 'text')
    .addColumn('length_ft', 'real')
    .addColumn('width_ft', 'real')
    .addColumn('diameter_ft', 'real')
    .addColumn('depth_ft', 'real')
    .addColumn('side_slope', 'real')
    .addColumn('freeboard_ft', 'real')
    .addColumn('capacity', 'real')
    .addColumn('capacity_unit', 'text') // gal | ton
    .addColumn('current_amount', 'real') // recorded volume or mass in storage, in capacity_unit
    .addColumn('current_amount_on', 'text')
    .addColumn('current_depth_ft', 'real')
    .addColumn('access_points', 'integer')
    .addColumn('notes', 'text')
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .addColumn('updated_at', 'text', (c) => c.notNull().defaultTo(now))
    .addUniqueConstraint('storages_farm_code_uq', ['farm_id', 'code'])
    .execute()

  await db.schema
    .createTable('import_runs')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('kind', 'text', (c) => c.notNull()) // labs | farms | storages | fields | samples | applications
    .addColumn('file_name', 'text', (c) => c.notNull())
    .addColumn('sha256', 'text', (c) => c.notNull())
    .addColumn('rows', 'integer', (c) => c.notNull().defaultTo(0))
    .addColumn('rows_new', 'integer', (c) => c.notNull().defaultTo(0))
    .addColumn('rows_unchanged', 'integer', (c) => c.notNull().defaultTo(0))
    .addColumn('warnings', 'integer', (c) => c.notNull().defaultTo(0))
    .addColumn('outcome', 'text', (c) =>
      c.notNull().check(sql`outcome in ('imported', 'unchanged', 'replaced', 'refused')`),
    )
    .addColumn('message', 'text')
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .execute()
  await db.schema.createIndex('import_runs_sha_idx').on('import_runs').columns(['kind', 'sha256']).execute()

  await db.schema
    .createTable('sampling_events')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('storage_id', 'integer', (c) => c.notNull().references('storages.id'))
    .addColumn('sample_code', 'text', (c) => c.notNull().unique())
    .addColumn('sampled_on', 'text', (c) => c.notNull())
    .addColumn('agitated', 'integer')
    .addColumn('sampler_kind', 'text') // e.g. tube_core, dipper, bucket_at_pump, fork_grab
    .addColumn('cores', 'integer')
    .addColumn('access_points_sampled', 'text')
    .addColumn('sampled_by', 'text')
    .addColumn('notes', 'text')
    .addColumn('import_run_id', 'integer', (c) => c.references('import_runs.id'))
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .execute()

  await db.schema
    .createTable('lab_reports')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('lab', 'text')
    .addColumn('report_number', 'text', (c) => c.notNull())
    .addColumn('received_on', 'text')
    .addColumn('source_file', 'text')
    .addColumn('source_sha256', 'text')
    .addColumn('import_run_id', 'integer', (c) => c.references('import_runs.id'))
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .execute()
  await db.schema.createIndex('lab_reports_number_idx').on('lab_reports').column('report_number').execute()

  await db.schema
    .createTable('lab_results')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('lab_report_id', 'integer', (c) => c.notNull().references('lab_reports.id'))
    .addColumn('storage_id', 'integer', (c) => c.notNull().references('storages.id'))
    .addColumn('sampling_event_id', 'integer', (c) => c.references('sampling_events.id'))
    .addColumn('report_number', 'text', (c) => c.notNull())
    .addColumn('sample_code', 'text', (c) => c.notNull())
    .addColumn('sampled_on', 'text', (c) => c.notNull())
    .addColumn('line', 'integer')
    .addColumn('form', 'text', (c) => c.notNull())
    .addColumn('species', 'text', (c) => c.notNull())
    // as reported by the lab: basis, units and the raw cell texts (JSON) with qualifiers such as '<'
    .addColumn('basis', 'text', (c) => c.notNull())
    .addColumn('units', 'text', (c) => c.notNull())
    .addColumn('reported', 'text', (c) => c.notNull())
    .addColumn('qualifiers', 'text')
    // normalized as-is values, per 1000 US gal (liquid) or per short ton (solid)
    .addColumn('per_unit', 'text', (c) => c.notNull())
    .addColumn('dry_matter_pct', 'real')
    .addColumn('total_n', 'real')
    .addColumn('ammonium_n', 'real')
    .addColumn('organic_n', 'real')
    .addColumn('p2o5', 'real')
    .addColumn('k2o', 'real')
    .addColumn('sulfur', 'real')
    .addColumn('ph', 'real')
    .addColumn('notes', 'text')
    .addColumn('warnings', 'text')
    .addColumn('superseded_by', 'integer', (c) => c.references('lab_results.id'))
    .addColumn('import_run_id', 'integer', (c) => c.references('import_runs.id'))
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .execute()
  await db.schema
    .createIndex('lab_results_report_sample_idx')
    .on('lab_results')
    .columns(['report_number', 'sample_code'])
    .execute()
  await db.schema
    .createIndex('lab_results_storage_idx')
    .on('lab_results')
    .columns(['storage_id', 'sampled_on'])
    .execute()

  await db.schema
    .createTable('fields')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('farm_id', 'integer', (c) => c.notNull().references('farms.id'))
    .addColumn('code', 'text', (c) => c.notNull())
    .addColumn('name', 'text')
    .addColumn('acres', 'real', (c) => c.notNull())
    .addColumn('storage_id', 'integer', (c) => c.references('storages.id'))
    .addColumn('method', 'text')
    .addColumn('incorporated_within_hours', 'real')
    .addColumn('overrides', 'text') // JSON: basis, needs, factor overrides, max_rate
    .addColumn('notes', 'text')
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .addColumn('updated_at', 'text', (c) => c.notNull().defaultTo(now))
    .addUniqueConstraint('fields_farm_code_uq', ['farm_id', 'code'])
    .execute()

  await db.schema
    .createTable('soil_tests')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('field_id', 'integer', (c) => c.notNull().references('fields.id'))
    .addColumn('sampled_on', 'text')
    .addColumn('p_ppm', 'real')
    .addColumn('p_method', 'text') // bray1 | olsen | mehlich3
    .addColumn('k_ppm', 'real')
    .addColumn('organic_matter_pct', 'real')
    .addColumn('ph', 'real')
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .execute()
  await db.schema.createIndex('soil_tests_field_idx').on('soil_tests').column('field_id').execute()

  await db.schema
    .createTable('crop_seasons')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('field_id', 'integer', (c) => c.notNull().references('fields.id'))
    .addColumn('season', 'integer', (c) => c.notNull())
    .addColumn('crop', 'text', (c) => c.notNull())
    .addColumn('yield_goal', 'real')
    .addColumn('previous_crop', 'text')
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .addUniqueConstraint('crop_seasons_field_season_uq', ['field_id', 'season'])
    .execute()

  await db.schema
    .createTable('plans')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('farm_id', 'integer', (c) => c.notNull().references('farms.id'))
    .addColumn('season', 'integer', (c) => c.notNull())
    .addColumn('version', 'integer', (c) => c.notNull())
    .addColumn('reference_set', 'text', (c) => c.notNull())
    .addColumn('reference_set_version', 'text', (c) => c.notNull())
    .addColumn('basis', 'text', (c) => c.notNull())
    .addColumn('as_of', 'text', (c) => c.notNull())
    .addColumn('inputs', 'text', (c) => c.notNull()) // JSON snapshot of everything the plan was computed from
    .addColumn('result', 'text', (c) => c.notNull()) // JSON of the computed plan (storages, totals)
    .addColumn('created_by', 'text', (c) => c.notNull())
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .addUniqueConstraint('plans_farm_season_version_uq', ['farm_id', 'season', 'version'])
    .execute()

  await db.schema
    .createTable('plan_fields')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('plan_id', 'integer', (c) => c.notNull().references('plans.id'))
    .addColumn('field_id', 'integer', (c) => c.notNull().references('fields.id'))
    .addColumn('field_code', 'text', (c) => c.notNull())
    .addColumn('acres', 'real', (c) => c.notNull())
    .addColumn('crop', 'text')
    .addColumn('storage_id', 'integer', (c) => c.references('storages.id'))
    .addColumn('method', 'text')
    .addColumn('rate', 'real')
    .addColumn('rate_unit', 'text')
    .addColumn('limited_by', 'text')
    .addColumn('need_n', 'real')
    .addColumn('need_p2o5', 'real')
    .addColumn('need_k2o', 'real')
    .addColumn('applied_n', 'real')
    .addColumn('applied_p2o5', 'real')
    .addColumn('applied_k2o', 'real')
    .addColumn('supplied_n', 'real')
    .addColumn('supplied_p2o5', 'real')
    .addColumn('supplied_k2o', 'real')
    .addColumn('supplemental_n', 'real')
    .addColumn('supplemental_p2o5', 'real')
    .addColumn('supplemental_k2o', 'real')
    .addColumn('total_manure', 'real')
    .addColumn('loads', 'real')
    .addColumn('detail', 'text') // JSON: the full per-field result (factors, sources, balance, residuals)
    .addColumn('warnings', 'text')
    .execute()
  await db.schema.createIndex('plan_fields_plan_idx').on('plan_fields').column('plan_id').execute()

  await db.schema
    .createTable('applications')
    .addColumn('id', 'integer', (c) => c.primaryKey().autoIncrement())
    .addColumn('field_id', 'integer', (c) => c.notNull().references('fields.id'))
    .addColumn('storage_id', 'integer', (c) => c.references('storages.id'))
    .addColumn('applied_on', 'text', (c) => c.notNull())
    .addColumn('amount', 'real', (c) => c.notNull())
    .addColumn('amount_unit', 'text', (c) => c.notNull()) // gal | ton (total over the field)
    .addColumn('method', 'text')
    .addColumn('incorporated_within_hours', 'real')
    .addColumn('loads', 'real')
    .addColumn('applicator', 'text')
    .addColumn('notes', 'text')
    .addColumn('import_run_id', 'integer', (c) => c.references('import_runs.id'))
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .execute()
  await db.schema.createIndex('applications_field_idx').on('applications').columns(['field_id', 'applied_on']).execute()

  await db.schema
    .createTable('share_links')
    .addColumn('id', 'text', (c) => c.primaryKey()) // the token's jti
    .addColumn('plan_id', 'integer', (c) => c.notNull().references('plans.id'))
    .addColumn('recipient_email', 'text', (c) => c.notNull())
    .addColumn('created_by', 'text', (c) => c.notNull())
    .addColumn('created_at', 'text', (c) => c.notNull().defaultTo(now))
    .addColumn('expires_at', 'text', (c) => c.notNull())
    .addColumn('revoked_at', 'text')
    .execute()
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const table of [
    'share_links',
    'applications',
    'plan_fields',
    'plans',
    'crop_seasons',
    'soil_tests',
    'fields',
    'lab_results',
    'lab_reports',
    'sampling_events',
    'import_runs',
    'storages',
    'user_farms',
    'farms',
    'users',
    'organizations',
  ]) {
    await db.schema.dropTable(table).execute()
  }
}
