import { writeFileSync } from 'node:fs'

const header = 'report_id,sample_id,sampled_on,farm,storage,form,species,basis,units,dry_matter_pct,total_n,ammonium_n,p2o5,k2o,lab,notes\n'

/**
 * Writes an invented lab file of `rows` results for the demo's swine pits (QBF P1/P2), all under one
 * report number, with values in the usual range for swine finishing pits so no plausibility check fires.
 */
export function writeLabFile(path: string, reportId: string, rows: number, seed = 1): void {
  const parts = [header]
  for (let i = 0; i < rows; i++) {
    const x = ((i * 7919 + seed * 104729) % 1000) / 1000
    const totalN = (50 + 10 * x).toFixed(1)
    const nh4 = (34 + 6 * x).toFixed(1)
    parts.push(
      `${reportId},${reportId}-S${i + 1},2026-0${1 + (i % 9)}-${String(10 + (i % 18)).padStart(2, '0')},QBF,${i % 2 ? 'P2' : 'P1'},liquid,swine,as_is,lb/1000 gal,${(5.5 + x).toFixed(2)},${totalN},${nh4},${(30 + 5 * x).toFixed(1)},${(27 + 4 * x).toFixed(1)},Cobble Run Analytical,\n`,
    )
  }
  writeFileSync(path, parts.join(''))
}
