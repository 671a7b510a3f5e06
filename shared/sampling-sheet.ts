import { makeSampleCode } from './sample-csv.ts'
import { accessPointLabels, type StorageForm } from './storage-csv.ts'

/** What the sampling sheet of one farm visit is made from. */
export interface SamplingSheetInput {
  farm: { code: string; name: string; operatorName?: string | null; address?: string | null; contactPhone?: string | null }
  /** The day of the visit (YYYY-MM-DD); part of every sample id. */
  visitDate: string
  storages: SheetStorage[]
}

export interface SheetStorage {
  code: string
  name?: string | null
  kind: string
  species: string
  form: StorageForm
  /** Number of access points (A, B, …); one sample each. Missing or 0 counts as one. */
  accessPoints?: number | null
  /** e.g. "200 × 41 × 8 ft"; shown as given. */
  size?: string | null
  lastSampledOn?: string | null
}

/** One bottle to fill: a sample id for one storage and access point. */
export interface PlannedSample {
  storageCode: string
  accessPoint: string
  sampleCode: string
}

/** One line of the checklist, with where it comes from (a publication, or "common practice"). */
export interface ChecklistItem {
  text: string
  source: string
}

/**
 * The sample ids of a visit: one per storage and access point, `<farm>-<storage>-<YYYYMMDD>-<point>`.
 * A storage whose codes would make an id longer than 40 characters gets a shortened storage part.
 */
export function planSamples(input: SamplingSheetInput): PlannedSample[] {
  const out: PlannedSample[] = []
  for (const s of input.storages) {
    for (const point of accessPointLabels(Math.max(1, s.accessPoints ?? 1))) {
      const code =
        makeSampleCode(input.farm.code, s.code, input.visitDate, [point]) ??
        makeSampleCode(input.farm.code.slice(0, 12), s.code.slice(0, 12), input.visitDate, [point])!
      out.push({ storageCode: s.code, accessPoint: point, sampleCode: code })
    }
  }
  return out
}

// Each checklist item names the publication it comes from, or "common practice".
const wsda = 'Washington State Dept. of Agriculture, manure sampling guidance'
const alberta = 'Alberta Agriculture, Nutrient Management Planning Guide (Agdex 400/28-3), p. 153'
const lpelc = 'Livestock and Poultry Environmental Learning Community (LPELC), manure test reports'

export const beforeVisitChecklist: readonly ChecklistItem[] = [
  { text: 'Pack wide-mouth plastic lab bottles (about 1 L) with tight lids, one per sample id below, plus spares.', source: alberta },
  { text: 'Pack a clean plastic bucket for mixing, a long tube sampler (or dipper), a fork or trowel for solids, gloves, zip-top bags and a cooler with ice packs.', source: 'common practice' },
  { text: 'Label each bottle before you fill it: sample id, farm, storage, date. Use a waterproof marker.', source: 'common practice' },
  { text: 'Bring a portable hydrogen sulfide monitor and a second person; agree who stays back, out of the gas zone.', source: 'Iowa State Univ. Extension Pm-1518k' },
]

export const liquidChecklist: readonly ChecklistItem[] = [
  { text: 'Best: sample while the storage is agitated and pumped out, or at the spreader: 15–25 subsamples into the bucket over the whole pump-out.', source: wsda },
  { text: 'From a storage that is not agitated: take full-depth cores with the tube sampler, 10–20 cores in all.', source: wsda },
  { text: 'Leave out the bottom sludge and the sump areas that are never pumped: sample what will actually be spread.', source: 'common practice' },
  { text: 'Take cores from several access points and combine them; one bottle per access point keeps the spread visible.', source: 'common practice' },
  { text: 'Stir the bucket thoroughly while filling the bottle so solids do not settle out.', source: wsda },
]

export const solidChecklist: readonly ChecklistItem[] = [
  { text: 'Take 15–25 subsamples from spots all over the pile and from inside it, not only the crust.', source: wsda },
  { text: 'Combine them in the clean bucket, break up lumps and mix well before filling the bottle or bag.', source: 'common practice' },
]

export const afterSamplingChecklist: readonly ChecklistItem[] = [
  { text: 'Fill each bottle only about three-quarters full: leave room for gas and for expansion when frozen.', source: 'common practice' },
  { text: 'Close tightly, wipe the outside, and double-bag every bottle.', source: alberta },
  { text: 'Keep samples cold (cooler or freezer) and ship early in the week so they do not sit over a weekend.', source: 'common practice' },
  { text: 'Send to a laboratory that takes part in a manure-analysis proficiency program.', source: 'common practice' },
  { text: 'Ask for dry matter, total N, ammonium-N, phosphorus (as P2O5) and potassium (as K2O), as-is (as sampled) basis.', source: lpelc },
  { text: 'Sample each storage every time it is emptied for spreading.', source: wsda },
]

export const safetyCautions: readonly ChecklistItem[] = [
  {
    text: 'Hydrogen sulfide from stored manure can kill. You smell it below 1 ppm, but the smell fades above about 10 ppm: never trust your nose.',
    source: 'Univ. of Iowa GPCAH; Michigan State Univ. Extension, Beware of Manure Pit Hazards, Table 1',
  },
  { text: '500–700 ppm can cause collapse within minutes; about 1,000 ppm kills almost instantly.', source: 'Michigan State Univ. Extension, Table 1' },
  {
    text: 'Agitation and pump-out release gas suddenly. Ventilate buildings over pits, keep people and animals out of them, stand upwind and away from openings.',
    source: 'Iowa State Univ. Extension Pm-1518k',
  },
  {
    text: 'Never enter a manure storage — not even to rescue someone — without forced ventilation, gas monitoring and rescue equipment. Call emergency services.',
    source: 'Iowa State Univ. Extension Pm-1518k',
  },
  { text: 'Foam on pits can hold explosive methane: no smoking, flames or sparks near storages.', source: 'Univ. of Iowa GPCAH' },
  { text: 'Work in pairs. Keep covers and guards on access ports; stay off basin and lagoon slopes.', source: 'common practice' },
]

function esc(value: unknown): string {
  return String(value ?? '')
    .replaceAll('&', '&amp;')
    .replaceAll('<', '&lt;')
    .replaceAll('>', '&gt;')
    .replaceAll('"', '&quot;')
    .replaceAll("'", '&#39;')
}

function list(items: readonly ChecklistItem[], boxes = true): string {
  return `<ul class="${boxes ? 'check' : 'plain'}">${items
    .map((i) => `<li>${boxes ? '<span class="box"></span>' : ''}<span>${esc(i.text)} <small>(${esc(i.source)})</small></span></li>`)
    .join('')}</ul>`
}

const style = `
  @page { size: letter; margin: 14mm; }
  * { box-sizing: border-box; }
  body { font: 10.5pt/1.35 system-ui, -apple-system, "Segoe UI", Roboto, sans-serif; color: #111; margin: 0 auto; max-width: 190mm; }
  h1 { font-size: 17pt; margin: 0 0 2mm; }
  h2 { font-size: 12.5pt; margin: 6mm 0 2mm; border-bottom: 1.5pt solid #111; padding-bottom: 1mm; }
  h3 { font-size: 11pt; margin: 4mm 0 1mm; }
  .meta { display: grid; grid-template-columns: 1fr 1fr; gap: 1mm 8mm; margin: 2mm 0 4mm; }
  .meta div { border-bottom: 0.5pt solid #888; padding: 1mm 0; }
  .meta b { display: inline-block; min-width: 26mm; }
  .safety { border: 2pt solid #111; padding: 2mm 4mm; margin: 3mm 0; break-inside: avoid; }
  .safety h2 { margin-top: 1mm; border: none; }
  table { width: 100%; border-collapse: collapse; margin: 1mm 0 3mm; break-inside: avoid; }
  th, td { border: 0.5pt solid #555; padding: 1.4mm 1.6mm; text-align: left; vertical-align: top; }
  th { background: #eee; font-size: 9pt; }
  td.id { font-family: ui-monospace, "JetBrains Mono", monospace; white-space: nowrap; font-size: 10pt; }
  td.blank { min-width: 14mm; }
  .storage { break-inside: avoid; }
  ul { margin: 1mm 0; padding: 0; list-style: none; }
  ul.check li { display: flex; gap: 2mm; margin: 1.2mm 0; }
  ul.plain li { margin: 1mm 0; padding-left: 4mm; text-indent: -4mm; }
  ul.plain li::before { content: "▲ "; font-size: 8pt; }
  .box { flex: none; width: 3.4mm; height: 3.4mm; border: 0.8pt solid #111; margin-top: 0.6mm; }
  small { color: #555; }
  footer { margin-top: 6mm; font-size: 8.5pt; color: #444; border-top: 0.5pt solid #888; padding-top: 2mm; }
  @media screen { body { padding: 10mm; } }
`

/**
 * The printable sampling sheet of a farm visit as one self-contained HTML document (no scripts, no
 * external resources): safety cautions first, then one row per sample id to fill in on site, then
 * the checklist with the source of each item. Pure; throws nothing.
 */
export function renderSamplingSheet(input: SamplingSheetInput): string {
  const samples = planSamples(input)
  const { farm } = input
  const hasLiquid = input.storages.some((s) => s.form === 'liquid')
  const hasSolid = input.storages.some((s) => s.form === 'solid')

  const storageBlocks = input.storages
    .map((s) => {
      const rows = samples
        .filter((p) => p.storageCode === s.code)
        .map(
          (p) =>
            `<tr><td class="id">${esc(p.sampleCode)}</td><td>${esc(p.accessPoint)}</td><td class="blank"></td><td class="blank">Y / N</td><td class="blank"></td><td class="blank"></td><td class="blank" style="width:35%"></td></tr>`,
        )
        .join('')
      const facts = [s.kind.replaceAll('_', ' '), `${s.species} ${s.form}`, s.size, s.lastSampledOn ? `last sampled ${s.lastSampledOn}` : null]
        .filter(Boolean)
        .map(esc)
        .join(' · ')
      return `<section class="storage"><h3>${esc(s.code)}${s.name ? ` — ${esc(s.name)}` : ''}</h3><div><small>${facts}</small></div>
<table><thead><tr><th>sample id</th><th>access point</th><th>time</th><th>agitated</th><th>${s.form === 'solid' ? 'subsamples' : 'cores'}</th><th>${s.form === 'solid' ? 'pile depth ft' : 'depth ft'}</th><th>notes (crust, sludge, weather)</th></tr></thead><tbody>${rows}</tbody></table></section>`
    })
    .join('\n')

  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Sampling sheet — ${esc(farm.code)} ${esc(farm.name)} — ${esc(input.visitDate)}</title>
<style>${style}</style>
</head>
<body>
<h1>Manure sampling sheet</h1>
<div class="meta">
  <div><b>Farm</b> ${esc(farm.code)} — ${esc(farm.name)}</div>
  <div><b>Visit date</b> ${esc(input.visitDate)}</div>
  <div><b>Operator</b> ${esc(farm.operatorName ?? '')}</div>
  <div><b>Phone</b> ${esc(farm.contactPhone ?? '')}</div>
  <div><b>Address</b> ${esc(farm.address ?? '')}</div>
  <div><b>Sampled by</b> </div>
</div>

<section class="safety" aria-label="Safety">
<h2>Danger: manure gases</h2>
${list(safetyCautions, false)}
</section>

<h2>Samples (${samples.length})</h2>
${input.storages.length ? storageBlocks : '<p>This farm has no storages recorded yet.</p>'}

<h2>Checklist</h2>
<h3>Before the visit</h3>
${list(beforeVisitChecklist)}
${hasLiquid ? `<h3>Liquid storages</h3>\n${list(liquidChecklist)}` : ''}
${hasSolid ? `<h3>Solid manure</h3>\n${list(solidChecklist)}` : ''}
<h3>After sampling</h3>
${list(afterSamplingChecklist)}

<footer>
Record the samples with <code>pitside samples import</code> (same sample ids) and import the lab's results with
<code>pitside labs import</code>. Plans computed from these results are advisory and defer to local regulations
and to licensed or certified practice.
</footer>
</body>
</html>
`
}
