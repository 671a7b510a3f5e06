// An invented lab-results file in the documented column layout (examples/labs/), every column filled
// the way a lab's export fills it: a few below-detection cells, a few quoted notes with commas.
import { createWriteStream } from 'node:fs'
import { once } from 'node:events'
import { addDays, decimal, pad } from '../lib/prng.mjs'

export const labColumns = [
  'report_id', 'sample_id', 'sampled_on', 'lab', 'farm', 'storage', 'form', 'species', 'basis', 'units',
  'dry_matter_pct', 'total_n', 'ammonium_n', 'p2o5', 'k2o', 'sulfur', 'ph', 'notes',
]

const notes = [
  'agitated 2 h before sampling',
  'composite of 6 cores',
  '"foam on surface, sampled below it"',
  'sampled at pump-out',
  '"bottle arrived warm, analysed same day"',
  'crust broken before sampling',
]

/**
 * Writes `rows` lab results for the given farms' storages to `path`. Each report covers 4–12
 * samples of one farm taken on one day, 2024–2026; sample ids are unique in the file. Returns the
 * number of rows written and of reports.
 */
export async function writeLabFile(path, { random, farms, rows, firstReport = 1 }) {
  const out = createWriteStream(path)
  let buffer = labColumns.join(',') + '\n'
  let written = 0
  let report = firstReport
  let sample = 1
  while (written < rows) {
    const farm = random.pick(farms)
    const day = addDays('2024-01-08', random.int(0, 1000)) // up to early October 2026
    const yy = day.slice(2, 4)
    const reportId = `CRA-${yy}-${pad(report++, 5)}`
    const count = Math.min(random.int(4, 12), rows - written)
    for (let k = 0; k < count; k++) {
      const storage = random.pick(farm.storages)
      const t = storage.type
      const tn = random.between(...t.tn)
      const nh4 = tn * random.between(...t.nh4)
      const units = t.form === 'liquid' ? 'lb_per_1000gal' : 'lb_per_ton'
      const sulfur = random.chance(0.01) ? '<0.5' : decimal(random.between(...t.s), 2)
      buffer +=
        `${reportId},S${yy}-${pad(sample++, 7)},${day},Cobble Run Analytical,${farm.code},${storage.code},${t.form},${t.species},as_is,${units},` +
        `${decimal(random.between(...t.dm), 2)},${decimal(tn, 2)},${decimal(nh4, 2)},${decimal(random.between(...t.p), 2)},${decimal(random.between(...t.k), 2)},` +
        `${sulfur},${decimal(random.between(...t.ph), 1)},${random.chance(0.06) ? random.pick(notes) : ''}\n`
      written++
    }
    if (buffer.length > 1 << 20) {
      if (!out.write(buffer)) await once(out, 'drain')
      buffer = ''
    }
  }
  out.end(buffer)
  await once(out, 'finish')
  return { rows: written, reports: report - firstReport }
}
