import { sql, type Kysely } from 'kysely'

/**
 * What a lab result was reported as (the manure's form and species, the reporting basis, the units
 * and the amount they are per) is stored once per combination, in lab_result_kinds, instead of as
 * five words in every result row: a lab file has a handful of combinations for 200,000 rows. A
 * result row is some 40 bytes smaller, and a big import binds one number where it bound five
 * strings (docs/performance.md). Every result points at its kind (`kind_id`).
 */
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable('lab_result_kinds')
    .addColumn('id', 'integer', (c) => c.primaryKey())
    .addColumn('form', 'text', (c) => c.notNull())
    .addColumn('species', 'text', (c) => c.notNull())
    .addColumn('basis', 'text', (c) => c.notNull())
    .addColumn('units', 'text', (c) => c.notNull())
    .addColumn('per_unit', 'text', (c) => c.notNull())
    .addUniqueConstraint('lab_result_kinds_words_unique', ['form', 'species', 'basis', 'units', 'per_unit'])
    .execute()
  await sql`insert into lab_result_kinds (form, species, basis, units, per_unit)
    select distinct form, species, basis, units, per_unit from lab_results order by form, species, basis, units, per_unit`.execute(db)
  await db.schema.alterTable('lab_results').addColumn('kind_id', 'integer', (c) => c.references('lab_result_kinds.id')).execute()
  await sql`update lab_results set kind_id = (select k.id from lab_result_kinds k where k.form = lab_results.form
    and k.species = lab_results.species and k.basis = lab_results.basis and k.units = lab_results.units and k.per_unit = lab_results.per_unit)`.execute(db)
  for (const column of ['form', 'species', 'basis', 'units', 'per_unit']) {
    await db.schema.alterTable('lab_results').dropColumn(column).execute()
  }
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const column of ['form', 'species', 'basis', 'units', 'per_unit']) {
    await db.schema.alterTable('lab_results').addColumn(column, 'text').execute()
  }
  await sql`update lab_results set (form, species, basis, units, per_unit) =
    (select k.form, k.species, k.basis, k.units, k.per_unit from lab_result_kinds k where k.id = lab_results.kind_id)`.execute(db)
  await db.schema.alterTable('lab_results').dropColumn('kind_id').execute()
  await db.schema.dropTable('lab_result_kinds').execute()
}
