/**
 * The cells of a stored lab result as the lab wrote them. A result keeps the lab's units and basis,
 * its values (as-is, in lb/1000 gal or lb/ton) and a JSON object of cell texts. When the lab
 * reported in those same units on an as-is basis, a cell written as a plain canonical decimal
 * ("28.71") is exactly String(value) of the stored value, so the import leaves it out of the JSON
 * (a third of a stored row's bytes); everything else ("28.710", "<0.1", "6,2", a P or moisture
 * column, other units or a dry basis) is kept as written. reportedCells puts the cells back
 * together for records and audits. Pure; browser-safe.
 */

/** Lab-file columns whose value is stored under the same name. */
export const storedColumns: ReadonlySet<string> = new Set(['dry_matter_pct', 'total_n', 'ammonium_n', 'p2o5', 'k2o', 'sulfur', 'ph'])

/**
 * A decimal written the way String(Number(text)) writes it back, with at most 8 decimals and
 * 6 integer digits, so that the import's rounding at 9 decimals leaves its value untouched.
 */
export const canonicalDecimal = /^(?:0|[1-9]\d{0,5})(?:\.\d{0,7}[1-9])?$/

/** The units that a form's values are stored in. */
export function storedUnits(form: string): 'lb_per_1000gal' | 'lb_per_ton' {
  return form === 'liquid' ? 'lb_per_1000gal' : 'lb_per_ton'
}

/** True when a result's values are stored exactly as the lab reported them (same units, as-is). */
export function storedAsReported(form: string, units: string, basis: string): boolean {
  return basis === 'as_is' && units === storedUnits(form)
}

export interface StoredLabCells {
  form: string
  units: string
  basis: string
  /** the stored JSON object of cell texts */
  reported: string
  dry_matter_pct: number | null
  total_n: number | null
  ammonium_n: number | null
  p2o5: number | null
  k2o: number | null
  sulfur: number | null
  ph: number | null
}

/** Which cell a stored column's value was derived from when the lab did not report the column itself. */
const derivedFrom: Record<string, string> = { p2o5: 'p', k2o: 'k', dry_matter_pct: 'moisture_pct' }

/**
 * The analysis cells of a stored result as the lab wrote them: column → text, for every cell that
 * was not empty in the file.
 */
export function reportedCells(r: StoredLabCells): Record<string, string> {
  const cells = JSON.parse(r.reported) as Record<string, string>
  if (!storedAsReported(r.form, r.units, r.basis)) return cells
  const out: Record<string, string> = {}
  for (const column of storedColumns) {
    const value = r[column as keyof StoredLabCells] as number | null
    const written = cells[column]
    if (written !== undefined) out[column] = written
    else if (value !== null && !(column in derivedFrom && derivedFrom[column]! in cells)) out[column] = String(value)
  }
  for (const [column, text] of Object.entries(cells)) if (!(column in out)) out[column] = text
  return out
}
